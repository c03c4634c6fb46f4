"""A straightforward vectorised NumPy Monte Carlo of the chain in
tests/fixtures/budget/gum_rtd.catena, the way a user might write it instead
of using Catena: the same five rectangular sources, 10^6 trials at each of
21 points, the reading by the closed-form Callendar-Van Dusen inverse.

Prints the 95 % interval at the middle point and the time per point, for
the ratio recorded in the README beside `cargo bench` (benchmark
`monte_carlo_gum_rtd_1e6_x_21`). Usage:

    python3 -m venv .venv && .venv/bin/pip install numpy==2.4.6
    .venv/bin/python benches/numpy_mc.py
"""

import time

import numpy as np

A, B = 3.9083e-3, -5.775e-7
I0, R00, G0, VREF0 = 1e-3, 100.0, 10.0, 2.5
FULL = 2.0 ** 23
TRIALS = 1_000_000
POINTS = np.linspace(0.0, 200.0, 21)


def uniform(rng, nominal, half, n):
    return nominal + rng.uniform(-half, half, n)


def trial_errors(rng, t_c, n):
    current = uniform(rng, I0, I0 * 0.001, n)
    r0 = uniform(rng, R00, R00 * 0.0005, n)
    gain = uniform(rng, G0, G0 * 0.001, n)
    vref = uniform(rng, VREF0, VREF0 * 0.0005, n)
    gain_error = uniform(rng, 0.0, 0.0002, n)
    r_true = r0 * (1 + A * t_c + B * t_c * t_c)
    code = current * r_true * gain * (1 + gain_error) / vref * FULL
    code += rng.uniform(-0.5, 0.5, n)  # quantization, as Catena adds it
    ratio = code * VREF0 / (G0 * FULL * I0) / R00
    t_hat = (-A + np.sqrt(A * A - 4 * B * (1 - ratio))) / (2 * B)
    return t_hat - t_c


def main():
    rng = np.random.default_rng(1)
    start = time.perf_counter()
    middle = None
    for t_c in POINTS:
        errors = trial_errors(rng, t_c, TRIALS)
        low, high = np.quantile(errors, [0.025, 0.975])
        if t_c == 100.0:
            middle = (low, high)
    elapsed = time.perf_counter() - start
    print(f"numpy {np.__version__}: 95 % interval at 100 degC {middle[0]:.4f} .. {middle[1]:.4f} K")
    print(f"{TRIALS} trials x {len(POINTS)} points: {elapsed:.3f} s ({elapsed / len(POINTS) * 1e3:.1f} ms per point)")


if __name__ == "__main__":
    main()

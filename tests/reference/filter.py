"""Reference fixtures for the low-pass filter models (src/physics/filter.rs).

Independent implementation built on scipy.signal: Butterworth and Bessel
prototypes from butter()/bessel() (analog=True, Bessel with norm='mag'),
frequency response from freqs_zpk() (cross-checked against freqs() on the
polynomial form), step response from step() (state-space, matrix
exponential), noise bandwidth by scipy.integrate.quad of |H|^2, settling and rise
times by brentq on the exact state-space step response. The RC response is
n identical first-order sections, built as a numpy product; its cutoff is
the -3 dB frequency of the whole cascade, as in the Rust model.

All frequencies are normalised to the cutoff (fc = 1 Hz, wc = 2*pi rad/s).
Output: fixtures/ beside this file, fixed %.10e formatting (eleven digits: the last ones of scipy's
matrix exponential and root finding move with the CPU's vector paths), so a rerun with
the pinned versions (requirements.txt) on the same CPU is byte-identical, and on
another agrees to 1e-9 (check/same_as_committed.py, as CI runs it).

Run:  python3 -m venv .venv && .venv/bin/pip install -r requirements.txt
      .venv/bin/python filter.py
"""

import math
import os

import numpy as np
import scipy.integrate as integrate
import scipy.linalg as linalg
import scipy.optimize as optimize
import scipy.signal as signal

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fixtures")
WC = 2.0 * math.pi  # fc = 1 Hz
ORDERS = range(1, 7)
RESPONSES = ("rc", "butterworth", "bessel")
FMT = "%.10e"


def rc_section_w(n):
    """Corner of one section so that the n-section cascade is -3 dB at wc."""
    return WC / math.sqrt(2.0 ** (1.0 / n) - 1.0)


def zpk(response, n):
    if response == "butterworth":
        return signal.butter(n, WC, btype="low", analog=True, output="zpk")
    if response == "bessel":
        return signal.bessel(n, WC, btype="low", analog=True, output="zpk", norm="mag")
    ws = rc_section_w(n)
    return np.array([]), np.full(n, -ws, dtype=complex), ws**n


def freq_response(response, n, w):
    """Complex H(jw)."""
    if response == "rc":
        ws = rc_section_w(n)
        h = np.ones_like(w, dtype=complex)
        for _ in range(n):
            h = h * (ws / (1j * w + ws))
        return h
    z, p, k = zpk(response, n)
    _, h = signal.freqs_zpk(z, p, k, worN=w)
    # Cross-check the zpk evaluation against the polynomial (freqs) form.
    b, a = signal.zpk2tf(z, p, k)
    _, h2 = signal.freqs(b, a, worN=w)
    assert np.max(np.abs(h2 / h - 1.0)) < 1e-9, (response, n)
    return h


def power_gain(response, n, f):
    h = freq_response(response, n, np.array([WC * f]))
    return float(abs(h[0]) ** 2)


def exact_step(response, n):
    """y(t) = C A^-1 (e^{At} - I) B + D, the exact unit-step response."""
    z, p, k = zpk(response, n)
    a, b, c, d = signal.zpk2ss(z, p, k)
    ainv_b = np.linalg.solve(a, b)
    eye = np.eye(a.shape[0])

    def y(t):
        return float((c @ ((linalg.expm(a * t) - eye) @ ainv_b))[0, 0] + d[0, 0])

    return y


def write(name, header, rows):
    path = os.path.join(OUT, name)
    with open(path, "w", newline="\n") as fh:
        fh.write(header + "\n")
        for row in rows:
            fh.write(",".join(x if isinstance(x, str) else FMT % x for x in row) + "\n")


def main():
    os.makedirs(OUT, exist_ok=True)

    # Frequency response: 20 points per decade, 1e-3 .. 1e3 fc.
    x = 10.0 ** (np.arange(-60, 61) / 20.0)
    rows = []
    for resp in RESPONSES:
        for n in ORDERS:
            h = freq_response(resp, n, WC * x)
            phase = np.unwrap(np.angle(h))
            for xi, hi, ph in zip(x, h, phase):
                rows.append((resp, "%d" % n, xi, abs(hi), ph))
    write("filter_response.csv", "response,order,f_over_fc,magnitude,phase_rad", rows)

    # Equivalent noise bandwidth: quad of |H|^2 over [0, inf), split at the
    # cutoff and at 10 fc so each piece is smooth and well scaled.
    rows = []
    worst = 0.0
    for resp in RESPONSES:
        for n in ORDERS:
            total = 0.0
            for lo, hi in ((0.0, 1.0), (1.0, 10.0), (10.0, np.inf)):
                val, err = integrate.quad(
                    lambda f: power_gain(resp, n, f), lo, hi,
                    epsabs=0.0, epsrel=1e-13, limit=500,
                )
                total += val
                worst = max(worst, err)
            rows.append((resp, "%d" % n, total))
    write("filter_enbw.csv", "response,order,enbw_over_fc", rows)
    print("enbw: worst quad error estimate per piece %.1e" % worst)

    # Step response from scipy.signal.step, t*fc in [0, 10], step 0.025.
    t = np.arange(0, 401) * 0.025
    rows = []
    worst = 0.0
    for resp in RESPONSES:
        for n in ORDERS:
            _, y = signal.step(zpk(resp, n), T=t)
            ye = exact_step(resp, n)
            worst = max(worst, max(abs(ye(ti) - yi) for ti, yi in zip(t[::20], y[::20])))
            for ti, yi in zip(t, y):
                rows.append((resp, "%d" % n, ti, yi))
    write("filter_step.csv", "response,order,t_times_fc,y", rows)
    print("step: worst |step() - expm| %.1e" % worst)

    # Settling: last time |y - 1| > fraction. Dense scan of step() on a
    # 1e-3/fc grid, then brentq on the exact response inside the last
    # interval that still exceeds the fraction.
    fractions = (1e-1, 4e-2, 1e-2, 1e-3, 1e-4, 2.0**-17, 2.0**-25)
    tt = np.arange(0, 40001) * 1e-3
    rows = []
    for resp in RESPONSES:
        for n in ORDERS:
            _, y = signal.step(zpk(resp, n), T=tt)
            ye = exact_step(resp, n)
            for frac in fractions:
                idx = np.nonzero(np.abs(y - 1.0) > frac)[0][-1]
                assert idx + 1 < len(tt)
                lo, hi = tt[idx], tt[idx + 1]
                g = lambda s: abs(ye(s) - 1.0) - frac
                ts = optimize.brentq(g, lo, hi, xtol=1e-15, rtol=4 * np.finfo(float).eps)
                rows.append((resp, "%d" % n, frac, ts))
    write("filter_settling.csv", "response,order,fraction,t_times_fc", rows)

    # Rise: first time y reaches a fraction of the step (t90 and others).
    # Dense scan of step() on a 1e-3/fc grid, then brentq on the exact
    # response inside the first interval that reaches the fraction.
    rows = []
    for resp in RESPONSES:
        for n in ORDERS:
            _, y = signal.step(zpk(resp, n), T=tt)
            ye = exact_step(resp, n)
            for frac in (0.5, 0.9, 0.99):
                idx = np.nonzero(y >= frac)[0][0]
                assert idx > 0
                lo, hi = tt[idx - 1], tt[idx]
                tr = optimize.brentq(
                    lambda s: ye(s) - frac, lo, hi, xtol=1e-15, rtol=4 * np.finfo(float).eps
                )
                rows.append((resp, "%d" % n, frac, tr))
    write("filter_rise.csv", "response,order,fraction,t_times_fc", rows)


if __name__ == "__main__":
    main()

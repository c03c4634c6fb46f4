"""Standard normal quantiles from SciPy (pinned in requirements.txt), the
reference for the Monte Carlo engine's inverse normal CDF (AS 241).

Writes fixtures/normal_quantiles.csv: p, the quantile Phi^-1(p), at
probabilities from 1e-300 to 1 - 1e-16 across the three regions of the
algorithm (central |p - 1/2| <= 0.425, intermediate, far tail), with
fixed formatting so reruns are byte-identical.

Usage:  python3 -m venv .venv && .venv/bin/pip install -r requirements.txt
        .venv/bin/python normal.py
"""

import pathlib

from scipy.stats import norm

OUT = pathlib.Path(__file__).parent / "fixtures" / "normal_quantiles.csv"

probabilities = sorted(
    {k / 200.0 for k in range(1, 200)}
    | {10.0 ** -e for e in range(2, 301, 2)}
    | {1.0 - 10.0 ** -e for e in range(2, 17)}
    | {0.075, 0.0749, 0.0751, 0.925, 0.9249, 0.9251}
)
lines = ["p,quantile"]
for p in probabilities:
    lines.append(f"{p:.17e},{norm.ppf(p):.17e}")
OUT.write_text("\n".join(lines) + "\n")

"""Regenerate the thermocouple reference fixtures.

Writes fixtures/thermocouple_emf.csv (type,t_c,emf_mv) and
fixtures/thermocouple_seebeck.csv (type,t_c,seebeck_mv_per_c) next to this
script, from the reference library pinned in requirements.txt, which
implements the ITS-90 reference functions of NIST Monograph 175.

Grid: every 10 degC across each type's whole range, plus the range ends,
the sub-range boundaries of the reference functions and of the inverse
polynomials (NIST Monograph 175), and a few points near room temperature.
Output is sorted and uses fixed formatting, so reruns are byte-identical.

Usage:  python3 -m venv .venv && .venv/bin/pip install -r requirements.txt
        .venv/bin/python thermocouple.py
"""

import math
import pathlib

import thermocouple_its90 as its90

# Sub-range boundaries (degC) of the reference functions and of the
# inverse polynomials, NIST Monograph 175.
BOUNDARIES = {
    "B": [250.0, 630.615, 700.0],
    "E": [-200.0, 0.0],
    "J": [0.0, 760.0],
    "K": [-200.0, 0.0, 500.0],
    "N": [-200.0, 0.0, 600.0],
    "R": [250.0, 1064.0, 1064.18, 1200.0, 1664.5],
    "S": [250.0, 1064.0, 1064.18, 1200.0, 1664.5],
    "T": [-200.0, 0.0],
}
EXTRA = [-0.5, 0.5, 20.0, 21.0, 25.0, 30.0, 42.0]
STEP_C = 10


def grid(letter):
    lo, hi = its90.get(letter).range
    pts = {lo, hi}
    for k in range(math.ceil(lo / STEP_C), math.floor(hi / STEP_C) + 1):
        pts.add(float(k * STEP_C))
    pts.update(BOUNDARIES[letter])
    pts.update(t for t in EXTRA if lo <= t <= hi)
    return sorted(pts)


def main():
    out = pathlib.Path(__file__).resolve().parent / "fixtures"
    out.mkdir(parents=True, exist_ok=True)
    emf_rows = ["type,t_c,emf_mv"]
    seebeck_rows = ["type,t_c,seebeck_mv_per_c"]
    for letter in its90.letters():
        tc = its90.get(letter)
        for t in grid(letter):
            emf_rows.append("%s,%.3f,%.12f" % (letter, t, tc.emf(t)))
            seebeck_rows.append("%s,%.3f,%.12f" % (letter, t, tc.seebeck(t)))
    (out / "thermocouple_emf.csv").write_text("\n".join(emf_rows) + "\n")
    (out / "thermocouple_seebeck.csv").write_text("\n".join(seebeck_rows) + "\n")


if __name__ == "__main__":
    main()

"""The exponential's table and correctly rounded values, the reference for
Catena's exponential (src/physics/exp.rs), in 60-digit decimal arithmetic
from the standard library alone.

Writes fixtures/exp_table.csv: for k = 0 .. 127, the bits of tail(k) and
of scale(k) less k * 2^45, where scale(k) is 2^(k/128) rounded to the
nearest double and tail(k) = (2^(k/128) - scale(k)) / scale(k) rounded.

Writes fixtures/exp_values.csv: the bits of x and of exp(x) correctly
rounded, for x spread over the whole range where exp is finite and
nonzero (from a fixed linear congruential sequence), and around zero.

Fixed formatting (hexadecimal bits), so reruns are byte-identical.

Run:  python3 tests/reference/exp.py
"""

import pathlib
import struct
from decimal import Decimal, getcontext

getcontext().prec = 60
OUT = pathlib.Path(__file__).parent / "fixtures"
N = 128


def bits(x):
    return struct.unpack("<Q", struct.pack("<d", x))[0]


def table():
    lines = ["k,tail_bits,scale_bits_less_k_2_45"]
    for k in range(N):
        exact = Decimal(2) ** (Decimal(k) / N)
        scale = float(exact)
        tail = float((exact - Decimal(scale)) / Decimal(scale))
        less = (bits(scale) - (k << 45)) % (1 << 64)
        lines.append("%d,0x%016x,0x%016x" % (k, bits(tail), less))
    (OUT / "exp_table.csv").write_text("\n".join(lines) + "\n")


def arguments():
    state = 0x2545F4914F6CDD1D
    xs = []
    for _ in range(4000):
        state = (state * 6364136223846793005 + 1442695040888963407) % (1 << 64)
        xs.append(((state >> 11) / float(1 << 53) - 0.5) * 1450.0)
    for e in range(-60, 10):
        xs += [2.0**e, -(2.0**e), 1.5 * 2.0**e]
    xs += [-745.0, -708.5, 0.5, 1.0, 2.0, 10.0, 100.0, 511.99, 512.0, 700.0, 709.7]
    return sorted(set(xs))


def values():
    lines = ["x_bits,exp_bits"]
    for x in arguments():
        y = float(Decimal(x).exp())
        if y == 0.0 or y == float("inf"):
            continue
        lines.append("%016x,%016x" % (bits(x), bits(y)))
    (OUT / "exp_values.csv").write_text("\n".join(lines) + "\n")


table()
values()

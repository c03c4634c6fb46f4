"""The natural logarithm's table and correctly rounded values, the
reference for Catena's logarithm (src/physics/log.rs), in 60-digit
decimal arithmetic from the standard library alone.

The table is the one ARM's Optimized Routines publish (math/log_data.c)
and the GNU C library ships since 2.28 (sysdeps/ieee754/dbl-64/
e_log_data.c): for i = 0 .. 127, a point c_i (as chi + clo, exactly),
invc = 1/c_i and logc = ln c_i, each rounded to the nearest double. The
script reads it from the system's C library (x86-64, glibc 2.28 or
later), where the table follows ln 2's two parts and the polynomials,
and checks every entry's construction: invc the nearest double to 1/c
and logc the nearest to ln c. It writes fixtures/log_table.csv.

Writes fixtures/log_values.csv: the bits of x and of ln(x) correctly
rounded, for x spread over the normal doubles (from a fixed linear
congruential sequence) and densely over (0, 0.075], where the normal
quantile's tails take it.

Fixed formatting (hexadecimal bits), so reruns are byte-identical.

Run:  python3 tests/reference/log.py [path to libm.so.6]
"""

import pathlib
import struct
import sys
from decimal import Decimal, getcontext

getcontext().prec = 60
OUT = pathlib.Path(__file__).parent / "fixtures"
N = 128
# ln 2 as a head and a tail, and the table path's polynomial: the
# doubles the table follows in the library's data.
HEAD = [
    0x3FE62E42FEFA3800,
    0x3D2EF35793C76730,
    0xBFE0000000000001,
    0x3FD555555551305B,
    0xBFCFFFFFFFEB4590,
    0x3FC999B324F10111,
    0xBFC55575E506C89F,
]
# The near-one polynomial's 11 coefficients lie between the head and the
# table.
TABLE_AT = 8 * (len(HEAD) + 11)


def bits(x):
    return struct.unpack("<Q", struct.pack("<d", x))[0]


def double(b):
    return struct.unpack("<d", struct.pack("<Q", b))[0]


def nearest(d):
    """The double nearest the Decimal d (float() of a Decimal rounds
    correctly)."""
    return float(d)


def library_table(path):
    data = pathlib.Path(path).read_bytes()
    head = struct.pack("<7Q", *HEAD)
    at = data.find(head)
    if at < 0 or data.find(head, at + 1) >= 0:
        sys.exit("the logarithm's data is not found once in " + path)
    words = struct.unpack_from("<512Q", data, at + TABLE_AT)
    tab, tab2 = words[:256], words[256:]
    return [(tab[2 * i], tab[2 * i + 1], tab2[2 * i], tab2[2 * i + 1]) for i in range(N)]


def table(path):
    lines = ["i,invc_bits,logc_bits,chi_bits,clo_bits"]
    for i, (invc, logc, chi, clo) in enumerate(library_table(path)):
        c = Decimal(double(chi)) + Decimal(double(clo))
        assert nearest(1 / c) == double(invc), ("invc", i)
        assert nearest(c.ln()) == double(logc), ("logc", i)
        lines.append("%d,0x%016x,0x%016x,0x%016x,0x%016x" % (i, invc, logc, chi, clo))
    (OUT / "log_table.csv").write_text("\n".join(lines) + "\n")


def arguments():
    state = 0x2545F4914F6CDD1D
    xs = []
    for k in range(6000):
        state = (state * 6364136223846793005 + 1442695040888963407) % (1 << 64)
        u = (state >> 11) / float(1 << 53)
        if k % 2:
            xs.append(u * 0.075 + 2.0**-54)
        else:
            # A normal double: exponent from -1022 to 1023, any mantissa.
            xs.append(double((1 + (state >> 53) % 2046) << 52 | (state & ((1 << 52) - 1))))
    for e in range(-54, 4):
        xs += [2.0**e, 1.5 * 2.0**e, 0.75 * 2.0**e]
    xs += [0.075, 0.5, 0.9375, 1.0, 1.0625, 2.0, 10.0]
    return xs


def values():
    lines = ["x_bits,ln_bits"]
    for x in arguments():
        y = nearest(Decimal(x).ln())
        lines.append("%016x,%016x" % (bits(x), bits(y)))
    (OUT / "log_values.csv").write_text("\n".join(lines) + "\n")


if __name__ == "__main__":
    table(sys.argv[1] if len(sys.argv) > 1 else "/lib/x86_64-linux-gnu/libm.so.6")
    values()

"""Compare the reference fixtures the scripts just wrote with the committed ones.

Text cells must match exactly and numbers to a relative 1e-9 (an absolute
1e-15 near zero): the last of the eleven digits the scripts print come from
scipy's matrix exponential, root finding and NumPy's vector paths, which
differ between CPUs, while the Rust tests hold Catena to these fixtures no
closer than 1e-9. Prints how many cells moved at all and the largest move,
so drift stays visible; exits 1 on a larger difference, a changed shape or
a fixture missing on either side.

Run from the repository root after the scripts:
    python3 tests/reference/check/same_as_committed.py
"""

import csv
import io
import os
import subprocess
import sys

FIXTURES = "tests/reference/fixtures"
RELATIVE = 1e-9
ABSOLUTE = 1e-15


def committed(path):
    out = subprocess.run(
        ["git", "show", "HEAD:" + path], capture_output=True, text=True, check=True
    )
    return out.stdout


def committed_names():
    out = subprocess.run(
        ["git", "ls-tree", "--name-only", "HEAD", FIXTURES + "/"],
        capture_output=True,
        text=True,
        check=True,
    )
    return sorted(os.path.basename(p) for p in out.stdout.split())


def number(cell):
    try:
        return float(cell)
    except ValueError:
        return None


def compare(name, old_text, new_text):
    """Problems found, cells that moved, and the largest relative move."""
    old = list(csv.reader(io.StringIO(old_text)))
    new = list(csv.reader(io.StringIO(new_text)))
    if len(old) != len(new):
        return ["%s: %d rows, committed %d" % (name, len(new), len(old))], 0, 0.0
    problems, moved, largest = [], 0, 0.0
    for line, (a_row, b_row) in enumerate(zip(old, new), start=1):
        if len(a_row) != len(b_row):
            problems.append("%s:%d: %d cells, committed %d" % (name, line, len(b_row), len(a_row)))
            continue
        for a, b in zip(a_row, b_row):
            if a == b:
                continue
            x, y = number(a), number(b)
            if x is None or y is None:
                problems.append("%s:%d: %r, committed %r" % (name, line, b, a))
                continue
            moved += 1
            diff = abs(x - y)
            scale = max(abs(x), abs(y))
            largest = max(largest, diff / scale if scale > 0 else 0.0)
            if diff > max(RELATIVE * scale, ABSOLUTE):
                problems.append("%s:%d: %s, committed %s" % (name, line, b, a))
    return problems, moved, largest


def main():
    names = committed_names()
    written = sorted(os.listdir(FIXTURES))
    problems = ["%s: written but not committed" % n for n in written if n not in names]
    problems += ["%s: committed but not written" % n for n in names if n not in written]
    moved, largest = 0, 0.0
    for name in names:
        if name not in written:
            continue
        path = os.path.join(FIXTURES, name)
        with open(path, newline="") as fh:
            found, n, worst = compare(name, committed(path), fh.read())
        problems += found
        moved += n
        largest = max(largest, worst)
    print(
        "reference fixtures: %d files, %d cells moved in their last digits (largest %.1e relative)"
        % (len(names), moved, largest)
    )
    for p in problems:
        print(p, file=sys.stderr)
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())

#!/usr/bin/env python3
"""Wall and CPU time of two builds of one command, run alternately.

    python3 benches/time_alternately.py RUNS BUILD_A BUILD_B -- ARGS...

runs `BUILD_A ARGS...` and `BUILD_B ARGS...` one after the other RUNS
times and prints, for each build, the median and least wall time
(`time.perf_counter` around the process) and the median CPU time (the
process's user + system time, from `resource.getrusage`), in ms.
Alternating the builds spreads the shared machine's drift over both,
which is what the README's performance tables compare.
"""
import os
import resource
import statistics
import subprocess
import sys
import time


def main() -> None:
    if len(sys.argv) < 5 or sys.argv[4] != "--":
        sys.exit(__doc__)
    runs, builds, args = int(sys.argv[1]), sys.argv[2:4], sys.argv[5:]
    times = {b: [] for b in builds}
    for _ in range(runs):
        for build in builds:
            before = resource.getrusage(resource.RUSAGE_CHILDREN)
            start = time.perf_counter()
            subprocess.run([build, *args], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=False)
            wall = time.perf_counter() - start
            after = resource.getrusage(resource.RUSAGE_CHILDREN)
            cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
            times[build].append((wall * 1e3, cpu * 1e3))
    for build, runs_of in times.items():
        wall = [w for w, _ in runs_of]
        cpu = [c for _, c in runs_of]
        print(f"{build}: wall median {statistics.median(wall):.1f} ms, least {min(wall):.1f} ms; "
              f"CPU median {statistics.median(cpu):.1f} ms")


if __name__ == "__main__":
    main()

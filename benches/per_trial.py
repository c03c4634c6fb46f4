#!/usr/bin/env python3
"""The Monte Carlo's CPU per trial and point of two builds, alternately.

    RAYON_NUM_THREADS=1 python3 benches/per_trial.py RUNS BUILD_A BUILD_B [TRIALS]

runs `budget specs/SPEC.catena --format json` of every demo spec with
`--trials TRIALS` (default 100 000) and with `--trials 0`, each build in
turn, RUNS times, and prints for each spec and build the median CPU time
(the process's user + system time, from `resource.getrusage`) of the
first less that of the second, over the trials and the spec's budget
points: the cost of a trial at one point, in ns, without the process's
fixed cost. A run of 10^5 trials lasts a few hundred ms, so a shared
machine's scatter of a few ms a run weighs little. Run it from the
repository's root on one thread, as above, for the per-core figure.
"""
import json
import os
import resource
import statistics
import subprocess
import sys
from pathlib import Path


def cpu_ms(build: str, spec: Path, trials: int) -> float:
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    args = [build, "budget", str(spec), "--format", "json", "--trials", str(trials)]
    subprocess.run(args, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=True)
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return 1e3 * ((after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime))


def points(build: str, spec: Path) -> int:
    args = [build, "budget", str(spec), "--format", "json", "--trials", "0"]
    run = subprocess.run(args, capture_output=True, text=True, check=True)
    report = json.loads(run.stdout)
    chains = report if isinstance(report, list) else [report]
    return sum(len(chain["points"]) for chain in chains)


def main() -> None:
    if len(sys.argv) not in (4, 5):
        sys.exit(__doc__)
    runs, builds = int(sys.argv[1]), sys.argv[2:4]
    trials = int(sys.argv[4]) if len(sys.argv) == 5 else 100_000
    for spec in sorted(Path("specs").glob("*.catena")):
        cpu = {b: ([], []) for b in builds}
        for _ in range(runs):
            for build in builds:
                cpu[build][0].append(cpu_ms(build, spec, trials))
                cpu[build][1].append(cpu_ms(build, spec, 0))
        n = trials * points(builds[0], spec)
        per = [(statistics.median(a) - statistics.median(z)) / n * 1e6 for a, z in cpu.values()]
        print(f"{spec.stem}: " + ", ".join(f"{ns:.1f} ns" for ns in per), flush=True)


if __name__ == "__main__":
    main()

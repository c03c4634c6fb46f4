#!/usr/bin/env bash
# The 10^6-trial x 21-point Monte Carlo of tests/fixtures/budget/gum_rtd.catena
# three ways, back to back, for the ratios in the README's performance
# section:
#   1. the limit reference, a tight program of that one model
#      (benches/limit_gum_rtd.rs);
#   2. Catena, the whole `catena budget` process (GUM budget, Monte Carlo
#      with its variance shares, the report);
#   3. the vectorised NumPy script (benches/numpy_mc.py), if PYTHON (default
#      python3) has NumPy.
# Each prints its interval at 100 degC; /usr/bin/time adds wall and CPU
# seconds, CPU being the figure that holds on a shared machine.
set -euo pipefail
cd "$(dirname "$0")/.."
PYTHON=${PYTHON:-python3}
timed() { /usr/bin/time -f '  %e s wall, %U s user, %S s system' "$@"; }

cargo build --release --quiet
cargo bench --quiet --bench limit_gum_rtd --no-run

echo "== limit reference"
timed cargo bench --quiet --bench limit_gum_rtd
echo "== catena budget --trials 1000000"
out=$(mktemp)
timed target/release/catena budget tests/fixtures/budget/gum_rtd.catena \
    --trials 1000000 --format json >"$out"
python3 -c 'import json, sys
points = json.load(open(sys.argv[1]))["points"]
low, high = next(p["monte_carlo_95"] for p in points if p["measurand"] == 100)
print(f"catena: 95 % interval at 100 degC {low:.4f} .. {high:.4f} K")' "$out"
rm -f "$out"
echo "== NumPy"
if "$PYTHON" -c 'import numpy' 2>/dev/null; then
    timed "$PYTHON" benches/numpy_mc.py
else
    echo "  skipped: $PYTHON has no NumPy (see benches/numpy_mc.py)"
fi

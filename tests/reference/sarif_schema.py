"""Validates `catena check --format sarif` against the SARIF 2.1.0 schema.

The schema is the OASIS one, committed in `schemas/sarif-2.1.0.json`
(`schemas/SOURCE.md` says where it was copied from); the validator is the
`jsonschema` package pinned in `requirements.txt`. The logs checked are those
of every invalid fixture and configuration fixture (every finding code,
parts-file and configuration findings among them) and of the demo specs
(no findings). Writes no fixture: it fails, with
the first schema violation, or prints how many logs it checked.
"""

import json
import os
import subprocess
import sys
from pathlib import Path

import jsonschema

ROOT = Path(__file__).resolve().parents[2]


def catena_binary():
    """The binary `cargo build` left, or the one the environment names."""
    named = os.environ.get("CATENA_BIN")
    if named:
        return named
    subprocess.run(["cargo", "build", "--quiet", "--locked"], cwd=ROOT, check=True)
    return str(ROOT / "target" / "debug" / "catena")


def sarif_of(binary, folder, names):
    run = subprocess.run(
        [binary, "check", "--format", "sarif", *names],
        cwd=folder,
        capture_output=True,
        text=True,
        check=False,
    )
    if run.returncode not in (0, 1):
        sys.exit(f"catena exited {run.returncode} in {folder}: {run.stderr}")
    return json.loads(run.stdout)


def main():
    schema = json.loads((ROOT / "tests/reference/schemas/sarif-2.1.0.json").read_text())
    validator = jsonschema.Draft7Validator(schema, format_checker=jsonschema.FormatChecker())
    binary = catena_binary()
    invalid = ROOT / "tests/fixtures/invalid"
    logs = [sarif_of(binary, invalid, [p.name]) for p in sorted(invalid.glob("*.catena"))]
    for folder in sorted((ROOT / "tests/fixtures/config").iterdir()):
        logs.append(sarif_of(binary, folder, ["spec.catena"]))
    logs.append(sarif_of(binary, ROOT, ["specs"]))
    results = 0
    for log in logs:
        errors = sorted(validator.iter_errors(log), key=lambda e: list(e.path))
        if errors:
            first = errors[0]
            where = "/".join(str(p) for p in first.path)
            sys.exit(f"SARIF does not validate at {where}: {first.message}")
        results += len(log["runs"][0]["results"])
    print(f"sarif_schema: {len(logs)} logs, {results} results valid against SARIF 2.1.0")


if __name__ == "__main__":
    main()

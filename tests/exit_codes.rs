//! The README's table of exit codes against the binary: every cell that
//! the table fills has a case here that exits with that status, and every
//! case here is a cell the table fills.

mod common;

use std::collections::BTreeSet;

use common::{catena, root};

/// (the table's command, status, arguments) for every filled cell.
const CASES: &[(&str, i32, &[&str])] = &[
    ("catena check", 0, &["check", "specs/cold_store.catena"]),
    (
        "catena check",
        1,
        &["check", "tests/fixtures/invalid/U103-missing-unit.catena"],
    ),
    (
        "catena check",
        2,
        &["check", "tests/fixtures/no-such-spec.catena"],
    ),
    ("catena fmt", 0, &["fmt", "--check", "specs"]),
    (
        "catena fmt",
        1,
        &[
            "fmt",
            "--check",
            "tests/fixtures/invalid/S002-unclosed-chain.catena",
        ],
    ),
    (
        "catena fmt",
        2,
        &["fmt", "--check", "tests/fixtures/no-such-spec.catena"],
    ),
    (
        "catena budget",
        0,
        &["budget", "--trials", "0", "specs/cold_store.catena"],
    ),
    (
        "catena budget",
        1,
        &[
            "budget",
            "--trials",
            "0",
            "tests/fixtures/invalid/R611-accuracy-too-tight.catena",
        ],
    ),
    (
        "catena budget",
        2,
        &["budget", "--points", "1", "specs/cold_store.catena"],
    ),
    (
        "catena eval",
        0,
        &["eval", "specs/cold_store.catena", "--at", "0"],
    ),
    (
        "catena eval",
        1,
        &[
            "eval",
            "tests/fixtures/invalid/R626-eval-code-at-the-rail.catena",
            "--at",
            "250 degC",
        ],
    ),
    (
        "catena eval",
        2,
        &["eval", "specs/cold_store.catena", "--at", "warm"],
    ),
    ("catena explain", 0, &["explain", "M208"]),
    ("catena explain", 2, &["explain", "Z999"]),
    ("catena completions", 0, &["completions", "bash"]),
    ("catena completions", 2, &["completions", "teletype"]),
    ("catena man", 0, &["man", "check"]),
    ("catena man", 2, &["man", "frobnicate"]),
    (
        "catena diff",
        0,
        &[
            "diff",
            "--trials",
            "0",
            "tests/fixtures/diff/cold_store.catena",
            "tests/fixtures/diff/cold_store_moved.catena",
        ],
    ),
    (
        "catena diff",
        1,
        &[
            "diff",
            "--trials",
            "0",
            "--fail-on",
            "regression",
            "tests/fixtures/diff/cold_store.catena",
            "tests/fixtures/diff/cold_store_gain.catena",
        ],
    ),
    ("catena diff", 2, &["diff", "specs/cold_store.catena"]),
    (
        "catena compare",
        0,
        &["compare", "--trials", "0", "specs/cold_store.catena"],
    ),
    (
        "catena compare",
        1,
        &[
            "compare",
            "--trials",
            "0",
            "tests/fixtures/invalid/U103-missing-unit.catena",
        ],
    ),
    (
        "catena compare",
        2,
        &["compare", "specs/cold_store.catena#no_such_chain"],
    ),
    (
        "catena checklist",
        0,
        &["checklist", "specs/cold_store.catena"],
    ),
    (
        "catena checklist",
        1,
        &[
            "checklist",
            "tests/fixtures/invalid/R601-over-gained-amplifier.catena",
        ],
    ),
    (
        "catena checklist",
        2,
        &["checklist", "specs/cold_store.catena", "--format", "xml"],
    ),
    (
        "catena report",
        0,
        &["report", "specs/cold_store.catena", "--format", "json"],
    ),
    (
        "catena report",
        1,
        &[
            "report",
            "tests/fixtures/invalid/R601-over-gained-amplifier.catena",
            "--format",
            "json",
        ],
    ),
    (
        "catena report",
        2,
        &["report", "specs/cold_store.catena", "--format", "xml"],
    ),
    (
        "catena export",
        0,
        &["export", "specs/cold_store.catena", "--lang", "json"],
    ),
    (
        "catena export",
        1,
        &[
            "export",
            "tests/fixtures/invalid/U103-missing-unit.catena",
            "--lang",
            "json",
        ],
    ),
    (
        "catena export",
        2,
        &["export", "specs/cold_store.catena", "--lang", "c"],
    ),
    ("catena", 0, &["--version"]),
    ("catena", 2, &["frobnicate"]),
];

/// (command, status) of every filled cell of the README's table.
fn table_cells() -> BTreeSet<(String, i32)> {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let section = readme
        .split("## Exit codes")
        .nth(1)
        .expect("the README has an exit-code section");
    let mut cells = BTreeSet::new();
    for line in section.lines().skip_while(|l| !l.starts_with("| command")) {
        if !line.starts_with('|') {
            break;
        }
        let cols: Vec<&str> = line
            .split(" | ")
            .map(|c| c.trim_matches(['|', ' ']))
            .collect();
        let Some(command) = cols[0].strip_prefix('`').and_then(|c| c.strip_suffix('`')) else {
            continue;
        };
        for (status, cell) in cols[1..].iter().enumerate() {
            if *cell != "—" {
                cells.insert((command.to_string(), status as i32));
            }
        }
    }
    cells
}

#[test]
fn the_readme_table_is_what_the_commands_do() {
    let cells = table_cells();
    let cased: BTreeSet<(String, i32)> =
        CASES.iter().map(|(c, s, _)| (c.to_string(), *s)).collect();
    assert_eq!(cells, cased, "the table and the cases differ");
    for (command, status, args) in CASES {
        let run = catena(&root(), args, None);
        assert_eq!(
            run.status, *status,
            "`{command}` with {args:?}: {}{}",
            run.stdout, run.stderr
        );
    }
}

//! Every broken spec in `tests/fixtures/invalid/` carries its expectation
//! in its first line (`# expect: error U103 line 7, warning M208 line 12`).
//! Each must exit 1 (warnings are run with `--deny warnings`) and report
//! every expected code at its line; the findings are snapshotted as JSON.
//! A finding only `catena eval` raises names the evaluation in brackets
//! (`# expect (eval --at 20 degC): warning R625 line 4`): the fixture is
//! then evaluated there, and exits 1 only if an error is expected.

mod common;

use std::path::Path;

use common::{catena, root};

#[derive(Debug, PartialEq)]
struct Expected {
    severity: String,
    code: String,
    line: usize,
}

/// The expectations, and the `eval` arguments when the fixture names them.
fn expectations(path: &Path) -> (Vec<Expected>, Option<Vec<String>>) {
    let bytes = std::fs::read(path).expect("fixture is readable");
    let first = String::from_utf8_lossy(&bytes);
    let first = first.lines().next().unwrap_or("");
    let rest = first
        .strip_prefix("# expect")
        .unwrap_or_else(|| panic!("{}: first line must be `# expect: ...`", path.display()));
    let (eval, spec) = match rest.strip_prefix(" (eval ") {
        Some(r) => {
            let (args, spec) = r
                .split_once("):")
                .unwrap_or_else(|| panic!("{}: malformed `(eval ...)`", path.display()));
            (Some(split_args(args)), spec)
        }
        None => (
            None,
            rest.strip_prefix(':').unwrap_or_else(|| {
                panic!("{}: first line must be `# expect: ...`", path.display())
            }),
        ),
    };
    let expected = spec
        .split(',')
        .map(|item| {
            let words: Vec<&str> = item.split_whitespace().collect();
            match words.as_slice() {
                [severity, code, "line", line] => Expected {
                    severity: severity.to_string(),
                    code: code.to_string(),
                    line: line.parse().expect("line is a number"),
                },
                [severity, code] => Expected {
                    severity: severity.to_string(),
                    code: code.to_string(),
                    line: 0,
                },
                _ => panic!("{}: malformed expectation `{item}`", path.display()),
            }
        })
        .collect();
    (expected, eval)
}

/// `--at 20 degC` as `["--at", "20 degC"]`: an option's words up to the
/// next option are its one value.
fn split_args(text: &str) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    for word in text.split_whitespace() {
        match out.last_mut() {
            Some(last) if !word.starts_with("--") && !last.starts_with("--") => {
                last.push(' ');
                last.push_str(word);
            }
            _ => out.push(word.to_string()),
        }
    }
    out
}

#[test]
fn every_invalid_fixture_reports_its_expectation() {
    insta::glob!("fixtures/invalid/*.catena", |path| {
        let dir = path.parent().expect("fixture has a folder");
        let name = path
            .file_name()
            .expect("fixture has a name")
            .to_string_lossy()
            .into_owned();
        let (expected, eval) = expectations(path);
        let args: Vec<String> = match &eval {
            Some(at) => ["eval", &name, "--format", "json"]
                .iter()
                .map(|s| s.to_string())
                .chain(at.iter().cloned())
                .collect(),
            None => ["check", "--format", "json", "--deny", "warnings", &name]
                .iter()
                .map(|s| s.to_string())
                .collect(),
        };
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let run = catena(dir, &args, None);
        let status = if eval.is_none() || expected.iter().any(|e| e.severity == "error") {
            1
        } else {
            0
        };
        assert_eq!(
            run.status, status,
            "{name} must exit {status}\n{}{}",
            run.stdout, run.stderr
        );
        let output: serde_json::Value = serde_json::from_str(&run.stdout)
            .unwrap_or_else(|e| panic!("{name}: output is not JSON ({e}): {}", run.stdout));
        let found = output["findings"]
            .as_array()
            .expect("a JSON array of findings");
        for e in &expected {
            let hit = found.iter().any(|f| {
                f["code"] == e.code.as_str()
                    && f["severity"] == e.severity.as_str()
                    && (e.line == 0 || f["line"] == e.line)
            });
            assert!(hit, "{name}: expected {e:?}, found {}", run.stdout);
        }
        insta::assert_snapshot!(run.stdout);
    });
}

/// The graphical form people read, for a few representative fixtures.
#[test]
fn graphical_renders_keep_their_look() {
    let dir = root().join("tests/fixtures/invalid");
    for name in [
        "U103-missing-unit.catena",
        "M204-code-into-amplifier.catena",
        "P301-unknown-parameter.catena",
    ] {
        assert!(dir.join(name).is_file(), "fixture {name} is missing");
        let run = catena(&dir, &["check", name], None);
        insta::assert_snapshot!(format!("graphical-{name}"), run.stderr);
    }
}

/// Every snapshot of this file names a fixture that exists: a fixture
/// deleted or renamed leaves no snapshot behind that nothing checks.
#[test]
fn every_snapshot_has_its_fixture() {
    let fixtures = root().join("tests/fixtures/invalid");
    let snapshots = std::fs::read_dir(root().join("tests/snapshots")).expect("tests/snapshots/");
    let mut seen = 0;
    for entry in snapshots {
        let name = entry.expect("an entry").file_name();
        let name = name.to_string_lossy();
        let Some(rest) = name.strip_prefix("invalid_fixtures__") else {
            continue;
        };
        let stem = rest
            .strip_suffix(".snap")
            .unwrap_or_else(|| panic!("{name}: not a snapshot"));
        // `test@FIXTURE` from the glob, `graphical-FIXTURE` from the renders.
        let fixture = match stem.split_once('@') {
            Some((_, fixture)) => fixture,
            None => stem
                .strip_prefix("graphical-")
                .unwrap_or_else(|| panic!("{name}: names no fixture")),
        };
        assert!(
            fixtures.join(fixture).is_file(),
            "{name} names tests/fixtures/invalid/{fixture}, which is missing"
        );
        seen += 1;
    }
    assert!(seen > 100, "found only {seen} snapshots");
}

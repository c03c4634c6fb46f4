//! Every broken spec in `tests/fixtures/invalid/` carries its expectation
//! in its first line (`# expect: error U103 line 7, warning M208 line 12`).
//! Each must exit 1 (warnings are run with `--deny warnings`) and report
//! every expected code at its line; the findings are snapshotted as JSON.

mod common;

use std::path::Path;

use common::{catena, root};

#[derive(Debug, PartialEq)]
struct Expected {
    severity: String,
    code: String,
    line: usize,
}

fn expectations(path: &Path) -> Vec<Expected> {
    let bytes = std::fs::read(path).expect("fixture is readable");
    let first = String::from_utf8_lossy(&bytes);
    let first = first.lines().next().unwrap_or("");
    let spec = first
        .strip_prefix("# expect:")
        .unwrap_or_else(|| panic!("{}: first line must be `# expect: ...`", path.display()));
    spec.split(',')
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
        .collect()
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
        let expected = expectations(path);
        let run = catena(
            dir,
            &["check", "--format", "json", "--deny", "warnings", &name],
            None,
        );
        assert_eq!(
            run.status, 1,
            "{name} must exit 1\n{}{}",
            run.stdout, run.stderr
        );
        let found: serde_json::Value = serde_json::from_str(&run.stdout)
            .unwrap_or_else(|e| panic!("{name}: output is not JSON ({e}): {}", run.stdout));
        let found = found.as_array().expect("a JSON array of findings");
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
        if !dir.join(name).exists() {
            continue;
        }
        let run = catena(&dir, &["check", name], None);
        insta::assert_snapshot!(format!("graphical-{name}"), run.stderr);
    }
}

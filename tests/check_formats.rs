//! `check --format sarif|github|short` through the binary. The SARIF logs
//! are validated against the OASIS SARIF 2.1.0 schema by
//! `tests/reference/sarif_schema.py` (run by `.ci/run`); here, where the
//! findings land and what the one-line formats look like.

mod common;

use common::{catena, root};

fn invalid_dir() -> std::path::PathBuf {
    root().join("tests/fixtures/invalid")
}

fn sarif(fixture: &str) -> serde_json::Value {
    let run = catena(
        &invalid_dir(),
        &["check", "--format", "sarif", fixture],
        None,
    );
    assert_eq!(run.status, 1, "{}{}", run.stdout, run.stderr);
    serde_json::from_str(&run.stdout).expect("SARIF is JSON")
}

#[test]
fn a_parts_file_finding_is_located_in_the_parts_file() {
    let log = sarif("L402-bad-indent.catena");
    assert_eq!(log["version"], "2.1.0");
    let run = &log["runs"][0];
    assert_eq!(run["columnKind"], "unicodeCodePoints");
    let result = &run["results"][0];
    assert_eq!(result["ruleId"], "L402");
    let place = &result["locations"][0]["physicalLocation"];
    assert_eq!(
        place["artifactLocation"]["uri"],
        "parts/L402-bad-indent.yaml"
    );
    assert_eq!(place["region"]["startLine"], 5);
    let rule = &run["tool"]["driver"]["rules"][0];
    assert_eq!(rule["id"], "L402");
    assert_eq!(rule["shortDescription"]["text"], "malformed parts file");
    assert!(rule["help"]["markdown"]
        .as_str()
        .unwrap()
        .starts_with("# L402"));
}

#[test]
fn every_finding_is_a_result_with_its_rule() {
    let log = sarif("three-mistakes.catena");
    let run = &log["runs"][0];
    let rules = run["tool"]["driver"]["rules"].as_array().unwrap();
    let results = run["results"].as_array().unwrap();
    assert!(results.len() >= 3, "{log}");
    for r in results {
        let index = r["ruleIndex"].as_u64().unwrap() as usize;
        assert_eq!(rules[index]["id"], r["ruleId"]);
        assert!(r["message"]["text"].as_str().unwrap().contains("\nhelp: "));
    }
    insta::assert_json_snapshot!(log);
}

#[test]
fn github_commands_escape_the_message() {
    let run = catena(
        &invalid_dir(),
        &[
            "check",
            "--format",
            "github",
            "P313-bare-percent-accuracy.catena",
        ],
        None,
    );
    assert_eq!(run.status, 1);
    let line = run.stdout.lines().next().unwrap();
    assert!(
        line.starts_with(
            "::error file=P313-bare-percent-accuracy.catena,line=5,col=22,endLine=5,endColumn=29,\
             title=P313 percentage without a basis::"
        ),
        "{line}"
    );
    // `%` and the newline before the help line are encoded, so each
    // finding is one command on one line.
    assert!(line.contains("± 0.1 %25`"), "{line}");
    assert!(line.contains("%0Ahelp: "), "{line}");
    assert_eq!(run.stdout.lines().count(), 1);
}

#[test]
fn short_is_file_line_column_severity_code_message() {
    let run = catena(
        &invalid_dir(),
        &[
            "check",
            "--format",
            "short",
            "M208-after-misnamed-cold-junction.catena",
        ],
        None,
    );
    assert_eq!(run.status, 1);
    assert_eq!(
        run.stdout,
        "M208-after-misnamed-cold-junction.catena:7:23: error M202 no stage is named `cj_snsor`\n\
         M208-after-misnamed-cold-junction.catena:9:12: warning M208 stage `cj_sensor` is not connected to anything\n"
    );
}

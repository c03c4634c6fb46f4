//! The command line's contract: exit statuses, output streams, `fmt`.

mod common;

use common::{catena, root};

#[test]
fn usage_errors_exit_2() {
    let run = catena(&root(), &["check"], None);
    assert_eq!(run.status, 2, "a missing path argument is a usage error");
    let run = catena(&root(), &["check", "no/such/file.catena"], None);
    assert_eq!(run.status, 2);
    assert!(
        run.stderr
            .contains("cannot read `no/such/file.catena`: no such file or directory"),
        "{}",
        run.stderr
    );
    let run = catena(&root(), &["frobnicate"], None);
    assert_eq!(run.status, 2);
}

#[test]
fn json_is_one_document_with_line_and_column() {
    let dir = root().join("tests/fixtures/invalid");
    let run = catena(
        &dir,
        &["check", "--format", "json", "three-mistakes.catena"],
        None,
    );
    assert_eq!(run.status, 1);
    let v: serde_json::Value = serde_json::from_str(&run.stdout).expect("valid JSON");
    assert_eq!(v["schema_version"], 1);
    let v = &v["findings"];
    let first = &v[0];
    for key in [
        "code", "severity", "message", "file", "line", "column", "span", "help",
    ] {
        assert!(first.get(key).is_some(), "missing `{key}` in {first}");
    }
    assert!(
        v.as_array().unwrap().len() >= 3,
        "all three mistakes are reported"
    );
}

#[test]
fn no_color_output_has_no_escapes() {
    let dir = root().join("tests/fixtures/invalid");
    let run = catena(&dir, &["check", "three-mistakes.catena"], None);
    assert!(
        !run.stderr.contains('\u{1b}'),
        "NO_COLOR and a pipe mean plain text"
    );
}

#[test]
fn fmt_reads_stdin_and_check_changes_nothing() {
    let messy = b"chain a {\nmeasurand temperature 0 degC..10 degC\n}\n";
    let run = catena(&root(), &["fmt", "-"], Some(messy));
    assert_eq!(run.status, 0, "{}", run.stderr);
    assert_eq!(
        run.stdout,
        "chain a {\n    measurand temperature 0 degC .. 10 degC\n}\n"
    );

    let dir = std::env::temp_dir().join(format!("catena-fmt-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let spec = dir.join("messy.catena");
    std::fs::write(&spec, messy).unwrap();
    let run = catena(&dir, &["fmt", "--check", "messy.catena"], None);
    assert_eq!(run.status, 1);
    assert_eq!(run.stdout.trim(), "messy.catena");
    assert_eq!(
        std::fs::read(&spec).unwrap(),
        messy,
        "--check changes nothing"
    );
    let run = catena(&dir, &["fmt", "messy.catena"], None);
    assert_eq!(run.status, 0);
    assert_eq!(
        std::fs::read_to_string(&spec).unwrap(),
        "chain a {\n    measurand temperature 0 degC .. 10 degC\n}\n"
    );
    let run = catena(&dir, &["fmt", "--check", "messy.catena"], None);
    assert_eq!(run.status, 0, "formatted files pass --check");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn fmt_refuses_files_with_syntax_errors() {
    let broken = b"chain a {\n  gain 4 @\n}\n";
    let run = catena(&root(), &["fmt", "-"], Some(broken));
    assert_eq!(run.status, 1);
    assert!(
        run.stdout.is_empty(),
        "nothing is written for a broken file"
    );
}

/// R615's help names the trials that settle a Monte Carlo verdict: run
/// with them, the warning is gone.
#[test]
fn the_trials_r615_asks_for_settle_the_verdict() {
    let fixture = "tests/fixtures/invalid/R615-monte-carlo-too-close.catena";
    let first = catena(&root(), &["check", "--format", "json", fixture], None);
    let findings: serde_json::Value = serde_json::from_str(&first.stdout).unwrap();
    let findings = &findings["findings"];
    let help = findings[0]["help"].as_str().unwrap();
    assert_eq!(findings[0]["code"], "R615", "{}", first.stdout);
    let trials = help
        .split("--trials ")
        .nth(1)
        .and_then(|rest| rest.split('`').next())
        .unwrap_or_else(|| panic!("no trial count in {help:?}"));
    let second = catena(&root(), &["check", "--trials", trials, fixture], None);
    assert_eq!(second.status, 0, "{}", second.stdout);
    assert!(!second.stdout.contains("R615"), "{}", second.stdout);
}

/// Monte Carlo long enough for a progress line shows none on a pipe: the
/// line is for a terminal, never for someone's log.
#[test]
fn no_progress_line_on_a_pipe() {
    let run = catena(
        &root(),
        &[
            "budget",
            "specs/battery_pack.catena",
            "--chain",
            "busbar",
            "--trials",
            "500000",
            "--points",
            "2",
        ],
        None,
    );
    assert_eq!(run.status, 0, "{}", run.stderr);
    assert_eq!(run.stderr, "", "nothing on stderr");
}

//! Root cause first: a finding that follows from another is reported right
//! after it and names it (`caused_by`), whatever their places in the file.

mod common;

use common::{catena, root};

/// (code, line, caused_by code) of each finding, in report order.
fn findings(fixture: &str) -> Vec<(String, u64, Option<String>)> {
    let dir = root().join("tests/fixtures/invalid");
    let run = catena(&dir, &["check", "--format", "json", fixture], None);
    let v: serde_json::Value = serde_json::from_str(&run.stdout).expect("JSON findings");
    v["findings"]
        .as_array()
        .expect("an array")
        .iter()
        .map(|f| {
            (
                f["code"].as_str().unwrap_or_default().to_string(),
                f["line"].as_u64().unwrap_or_default(),
                f["caused_by"]["code"].as_str().map(str::to_string),
            )
        })
        .collect()
}

fn codes(found: &[(String, u64, Option<String>)]) -> Vec<&str> {
    found.iter().map(|(c, _, _)| c.as_str()).collect()
}

/// A misspelt required parameter: the unknown `r52` (P301, line 8) is the
/// cause of the missing `r25` (P302, reported on the stage, line 6).
#[test]
fn missing_parameter_follows_its_misspelling() {
    let found = findings("P302-after-misspelt-parameter.catena");
    assert_eq!(codes(&found), ["P301", "P302"], "{found:?}");
    assert_eq!(found[1].2.as_deref(), Some("P301"));
}

/// A value written on the model line (`strain_gauge 350 ohm`, P306 on
/// line 7) is why its parameter is missing (P302 on the stage, line 6),
/// and the help writes the line it was meant for.
#[test]
fn missing_parameter_follows_a_value_on_the_model_line() {
    let found = findings("P302-value-on-model-line.catena");
    assert_eq!(codes(&found), ["P306", "P302"], "{found:?}");
    assert_eq!(found[1].2.as_deref(), Some("P306"));
    let dir = root().join("tests/fixtures/invalid");
    let args = [
        "check",
        "--format",
        "json",
        "P302-value-on-model-line.catena",
    ];
    let run = catena(&dir, &args, None);
    let v: serde_json::Value = serde_json::from_str(&run.stdout).expect("JSON findings");
    let help = v["findings"][1]["help"].as_str().unwrap_or_default();
    assert_eq!(
        help,
        "move the value off the `strain_gauge` line: `r 350 ohm ± 0.3 %` on a line of its own"
    );
}

/// An edge naming `cnov` (M202, line 20) leaves `conv` unconnected: its
/// M206 and M213 (line 15) come after the M202 and name it.
#[test]
fn unconnected_stage_follows_the_unknown_name() {
    let found = findings("M206-after-unknown-stage.catena");
    assert_eq!(codes(&found), ["M202", "M206", "M213"], "{found:?}");
    assert!(found[1..].iter().all(|f| f.2.as_deref() == Some("M202")));
}

/// A reading fed back into the chain (M207) is why no conversion ends it
/// (M210, reported at the first stage, before the loop in the file).
#[test]
fn missing_reading_follows_the_loop() {
    let found = findings("M210-after-loop.catena");
    assert_eq!(&codes(&found)[..2], ["M207", "M210"], "{found:?}");
    assert_eq!(found[1].2.as_deref(), Some("M207"));
    assert!(found[0].1 > found[1].1, "the cause is later in the file");
}

/// The human report says what a consequence follows from.
#[test]
fn human_report_names_the_cause() {
    let dir = root().join("tests/fixtures/invalid");
    let run = catena(&dir, &["check", "M206-after-unknown-stage.catena"], None);
    let flat = run.stderr.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        flat.contains("this follows from M202 on line 20: fix that first"),
        "{flat}"
    );
}

/// A `cold_junction` naming `cj_snsor` (M202) leaves the sensor
/// `cj_sensor` unused: its M208 follows the M202.
#[test]
fn unused_sensor_follows_the_misnamed_cold_junction() {
    let found = findings("M208-after-misnamed-cold-junction.catena");
    assert_eq!(codes(&found), ["M202", "M208"], "{found:?}");
    assert_eq!(found[1].2.as_deref(), Some("M202"));
}

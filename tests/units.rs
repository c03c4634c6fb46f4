//! Units and the forms values are written in: ranges that are points,
//! converter quantities in codes, accuracies as a percentage, unit powers.

mod common;

use common::{catena, root};

fn fixture(name: &str) -> String {
    std::fs::read_to_string(root().join("tests/fixtures/units").join(name))
        .expect("the fixture exists")
}

/// Runs `catena args.. spec` on `text`, written to a scratch file.
fn run_on(text: &str, name: &str, args: &[&str]) -> common::Run {
    let dir = std::env::temp_dir().join(format!("catena-units-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("a scratch folder");
    let path = dir.join(name);
    std::fs::write(&path, text).expect("the scratch spec is written");
    let mut all: Vec<&str> = args.to_vec();
    let p = path.to_string_lossy().into_owned();
    all.push(&p);
    catena(&dir, &all, None)
}

/// The language reference: "`ambient lo .. hi` or `ambient T`" — a range
/// whose ends are equal is that single temperature, so both spellings give
/// the same budget, byte for byte.
#[test]
fn ambient_range_with_equal_ends_is_a_point() {
    let range = fixture("ambient_point.catena");
    assert!(range.contains("ambient 40 degC .. 40 degC"));
    let point = range.replace("ambient 40 degC .. 40 degC", "ambient 40 degC");
    let args = ["budget", "--format", "json", "--trials", "0"];
    let a = run_on(&range, "range.catena", &args);
    let b = run_on(&point, "range.catena", &args);
    assert_eq!(a.status, 0, "{}", a.stderr);
    assert_eq!(a.stdout, b.stdout);
    // The ambient is used: 15 K above the reference, 5 uV/K × 15 K = 75 uV
    // at the amplifier's input over 10 mV/K is 7.5 mK (a hand calculation).
    let v: serde_json::Value = serde_json::from_str(&a.stdout).expect("JSON");
    let drift = v["points"]
        .as_array()
        .expect("points")
        .iter()
        .filter(|p| p["ambient"] == 40.0)
        .flat_map(|p| p["sources"].as_array().expect("sources").iter())
        .find(|s| s["id"] == "front.offset_drift")
        .and_then(|s| s["contribution"].as_f64())
        .expect("the drift at 40 degC");
    assert!((drift - 7.5e-3).abs() < 1e-9, "{drift}");
    let reversed = range.replace("40 degC .. 40 degC", "40 degC .. 30 degC");
    let c = run_on(&reversed, "reversed.catena", &["check"]);
    assert_eq!(c.status, 1);
    assert!(c.stderr.contains("P305"), "{}", c.stderr);
}

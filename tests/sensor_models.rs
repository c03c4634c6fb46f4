//! Sensor models as an engineer checks them by hand: independent leads,
//! transducer curve shapes, RTD classes as R0 and coefficient tolerances,
//! self-heating wherever the element sits, and validity at the true
//! temperature. Specs in `tests/fixtures/sensors/`.

mod common;

use common::{catena, root};

fn dir() -> std::path::PathBuf {
    root().join("tests/fixtures/sensors")
}

/// `catena budget --format json` of a spec in `tests/fixtures/sensors`.
fn budget(spec: &str, args: &[&str]) -> serde_json::Value {
    let mut all = vec!["budget", spec, "--format", "json"];
    all.extend_from_slice(args);
    let run = catena(&dir(), &all, None);
    assert_eq!(run.status, 0, "{}{}", run.stdout, run.stderr);
    serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}", run.stdout))
}

/// A class's range of validity is judged at the true temperature, not at
/// the one the class tolerance shifts the reading to. IEC 60584-1:2013
/// gives type S class 1 over 0 … 1600 °C (±1 K up to 1100 °C), so a kiln
/// over 0 … 1300 °C is inside it; IEC 60751:2008 Table 1 gives wire-wound
/// class AA over −50 … 250 °C (±0.185 K at −50 °C), so a bath over
/// −50 … 80 °C is inside it (both ranges recalled from memory of the
/// standards, as in `physics`).
#[test]
fn validity_is_judged_at_the_true_temperature() {
    for spec in ["type_s_class_1.catena", "pt100_class_aa.catena"] {
        let run = catena(&dir(), &["check", "--deny", "warnings", spec], None);
        assert_eq!(run.status, 0, "{spec}: {}{}", run.stdout, run.stderr);
        let v = budget(spec, &["--points", "3", "--trials", "0"]);
        assert!(v["points"].as_array().unwrap().len() >= 3, "{spec}");
    }
}

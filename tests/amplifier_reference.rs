//! An amplifier's reference (output = gain × input + reference) and a
//! thermocouple's bias, against closed forms, through the binary.

mod common;

use common::{catena, root};

fn json(args: &[&str]) -> serde_json::Value {
    let run = catena(&root().join("tests/fixtures/amplifier"), args, None);
    assert_eq!(run.status, 0, "{}{}", run.stdout, run.stderr);
    serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}", run.stdout))
}

fn eval(spec: &str, at: &str) -> serde_json::Value {
    json(&["eval", spec, "--at", at, "--format", "json"])
}

fn budget(spec: &str) -> serde_json::Value {
    json(&["budget", spec, "--format", "json", "--trials", "0"])
}

/// Every budget point's contribution of source `id`.
fn contributions(budget: &serde_json::Value, id: &str) -> Vec<(f64, f64, f64)> {
    budget["points"]
        .as_array()
        .expect("points")
        .iter()
        .map(|p| {
            let source = p["sources"]
                .as_array()
                .expect("sources")
                .iter()
                .find(|s| s["id"] == id)
                .unwrap_or_else(|| panic!("no source {id} in {p}"));
            (
                p["measurand"].as_f64().expect("measurand"),
                p["ambient"].as_f64().expect("ambient"),
                source["contribution"].as_f64().expect("contribution"),
            )
        })
        .collect()
}

/// Output = gain × input + reference: a 10 mV/K sensor at 30 °C gives
/// 0.5 V + 0.3 V = 0.8 V, so the amplifier gives 2 × 0.8 V + 1 V = 2.6 V,
/// stated or wired.
#[test]
fn the_output_is_gain_times_input_plus_reference() {
    for spec in ["stated_reference.catena", "wired_reference.catena"] {
        let v = eval(spec, "30");
        let front = v["nodes"]["front"]["value"].as_f64().expect("front");
        assert!((front - 2.6).abs() < 1e-12, "{spec}: {front}");
        let reading = v["reading"]["value"].as_f64().expect("reading");
        assert!((reading - 30.0).abs() < 1e-3, "{spec}: {reading}");
    }
}

/// A reference error δ shifts the output by δ and the reading by
/// δ / (gain × slope): 1 mV / (2 × 10 mV/K) = 0.05 K at every point; its
/// drift 20 ppm/K × 1 V × |ambient − 25 °C| / (2 × 10 mV/K), 0.02 K at
/// 5 °C and at 45 °C, none at 25 °C. A wired reference's own tolerance
/// (0.1 % of 1 V) does the same.
#[test]
fn a_reference_error_shifts_the_reading_by_the_closed_form() {
    let stated = budget("stated_reference.catena");
    for (m, a, c) in contributions(&stated, "front.reference") {
        assert!((c - 0.05).abs() < 1e-9, "at {m}, {a}: {c}");
    }
    for (m, a, c) in contributions(&stated, "front.reference_drift") {
        let expected = 20e-6 * (a - 25.0).abs() / 0.02;
        assert!(
            (c - expected).abs() < 1e-9,
            "at {m}, {a}: {c} against {expected}"
        );
    }
    let wired = budget("wired_reference.catena");
    for (m, a, c) in contributions(&wired, "level.voltage") {
        assert!((c - 0.05).abs() < 1e-9, "at {m}, {a}: {c}");
    }
}

/// A bias holds a floating couple's common mode at the stated voltage, so
/// a single-supply in-amp reads it; the CMRR error is that common mode over
/// the CMRR, 2.5 V × 10^(−80/20) = 0.25 mV at the input, so the worst
/// contribution c at t (on the side where type K is flatter) solves
/// E(t + c) − E(t) = 0.25 mV or E(t) − E(t − c) = 0.25 mV with the ITS-90
/// type K function.
#[test]
fn a_bias_sets_the_couples_common_mode() {
    use catena::physics::thermocouple::{emf_mv, ThermocoupleType};
    let v = eval("biased_couple.catena", "500");
    let cm = v["nodes"]["tc"]["common_mode"].as_f64().expect("cm");
    assert!((cm - 2.5).abs() < 1e-12, "{cm}");

    let e = |t: f64| emf_mv(ThermocoupleType::K, t).expect("in range");
    for (t, _, c) in contributions(&budget("biased_couple.catena"), "front.cmrr") {
        let (above, below) = (e(t + c) - e(t), e(t) - e(t - c));
        let off = (above - 0.25).abs().min((below - 0.25).abs());
        assert!(off < 1e-6, "at {t} degC: {c} K is {above} or {below} mV");
    }
}

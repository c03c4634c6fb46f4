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

/// The contribution of source `id` at the last budget point (the top of
/// the range at the reference ambient).
fn contribution(budget: &serde_json::Value, id: &str) -> f64 {
    let last = budget["points"]
        .as_array()
        .expect("points")
        .iter()
        .rfind(|p| p["ambient"] == 25.0)
        .expect("a point at the reference");
    last["sources"]
        .as_array()
        .expect("sources")
        .iter()
        .find(|s| s["id"] == id)
        .and_then(|s| s["contribution"].as_f64())
        .unwrap_or_else(|| panic!("no source `{id}` in {last}"))
}

fn budget_json(file: &str, chain: &str) -> serde_json::Value {
    let dir = root().join("tests/fixtures/units");
    let run = catena(
        &dir,
        &[
            "budget", "--format", "json", "--trials", "0", "--chain", chain, file,
        ],
        None,
    );
    assert_eq!(run.status, 0, "{}", run.stderr);
    serde_json::from_str(&run.stdout).expect("budget JSON")
}

/// Converter errors stated in codes, worked by hand from the definition of
/// an LSB as the full-scale span over 2^bits (the convention of converter
/// datasheets and IEEE Std 1241, recalled from memory): a 12-bit converter on 3.3 V has
/// 1 LSB = 3.3 V / 4096 = 0.806 mV, which a 10 mV/K sensor reads as
/// 80.57 mK. `offset ± 2 LSB` is 161.1 mK; `gain_error ± 4 LSB` is
/// 4/4096 of the reading, 97.66 mK at 100 degC (1 V); `inl ± 1 LSB` is
/// 80.57 mK (not 100 % of full scale); `noise 0.7 LSB` is 0.564 mV rms.
/// With a differential (bipolar) input the span is 6.6 V, so every code
/// doubles except the gain error, which is relative.
#[test]
fn converter_quantities_in_lsb() {
    let lsb_v = 3.3 / 4096.0;
    let per_k = 10e-3;
    for (chain, span) in [("lsb", 1.0), ("lsb_bipolar", 2.0)] {
        let b = budget_json("adc_lsb.catena", chain);
        let code_k = span * lsb_v / per_k;
        let close = |got: f64, want: f64| (got - want).abs() <= 1e-9 * want;
        let offset = contribution(&b, "conv.offset");
        assert!(close(offset, 2.0 * code_k), "{chain}: offset {offset}");
        let gain = contribution(&b, "conv.gain_error");
        assert!(close(gain, 4.0 / 4096.0 * 100.0), "{chain}: gain {gain}");
        let inl = contribution(&b, "conv.inl");
        assert!(close(inl, code_k), "{chain}: inl {inl}");
        let noise = b["noise"]["terms"]["conv.noise"].as_f64().expect("noise");
        assert!(
            (noise - 0.7 * span * lsb_v).abs() < 1e-9 * noise,
            "{chain}: noise {noise} V"
        );
    }
}

/// An `LSB` is a converter's code: anywhere else it is a wrong dimension.
#[test]
fn lsb_outside_a_converter_is_refused() {
    let text = fixture("adc_lsb.catena")
        .replace("slope 10 mV/K", "slope 10 mV/K\n        accuracy ± 1 LSB");
    let run = run_on(&text, "lsb_sensor.catena", &["check"]);
    assert_eq!(run.status, 1);
    assert!(run.stderr.contains("U102"), "{}", run.stderr);
    assert!(
        run.stderr.contains("a number of converter codes"),
        "{}",
        run.stderr
    );
}

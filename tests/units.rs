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
    let dir = common::temp_dir("units", name);
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

fn requirement(budget: &serde_json::Value) -> (f64, f64, bool) {
    let r = &budget["requirements"][0];
    (
        r["limit"].as_f64().expect("limit"),
        r["achieved"].as_f64().expect("achieved"),
        r["pass"].as_bool().expect("pass"),
    )
}

fn budget_of(text: &str, name: &str) -> serde_json::Value {
    let run = run_on(text, name, &["budget", "--format", "json", "--trials", "0"]);
    assert!(run.status == 0 || run.status == 1, "{}", run.stderr);
    serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}", run.stderr))
}

/// `% of span` is a share of the measurand range (IEC 60770-1's span,
/// recalled from memory; the usual transmitter convention): 0.1 % of
/// 0 kg .. 5000 kg is ± 5 kg at every load, which a ± 2 kg chain meets,
/// worst case and by GUM (a rectangular ± 2 kg: 2 × 2/√3 = 2.309 kg at
/// k = 2, JCGM 100:2008 §4.3.7). Without a method the line still ends in
/// `of span`, which is not taken for one.
#[test]
fn accuracy_in_percent_of_span() {
    let text = fixture("silo_percent.catena")
        .replace("500 kg .. 5000 kg", "0 kg .. 5000 kg")
        .replace("% of reading", "% of span");
    let (limit, achieved, pass) = requirement(&budget_of(&text, "span.catena"));
    assert!((limit - 5.0).abs() < 1e-12, "{limit}");
    assert!((achieved - 2.0).abs() < 0.01 && pass, "{achieved}");
    let gum = text.replace("% of span worst_case", "% of span");
    let (limit, achieved, pass) = requirement(&budget_of(&gum, "span_gum.catena"));
    assert!((limit - 5.0).abs() < 1e-12, "{limit}");
    let want = 4.0 / 3f64.sqrt();
    assert!((achieved - want).abs() < 0.01 && pass, "{achieved}");
}

/// A resolution and a calibration's uncertainty are one number for the
/// whole range: `of span` is converted, `of reading` is refused.
#[test]
fn fixed_limits_refuse_a_share_of_the_reading() {
    let base = fixture("silo_percent.catena");
    let resolution = base.replace(
        "worst_case\n",
        "worst_case\n    require resolution 0.01 % of reading\n",
    );
    let run = run_on(&resolution, "resolution.catena", &["check"]);
    assert!(
        run.stderr
            .contains("a resolution cannot be a share of the reading"),
        "{}",
        run.stderr
    );
    let calibrated = base.replace(
        "convert reading { method exact }",
        "convert reading {\n        method exact\n        calibrate offset at 500 kg ± 0.01 % of span\n    }",
    );
    let run = run_on(&calibrated, "calibrated.catena", &["check"]);
    assert!(!run.stderr.contains("P3"), "{}", run.stderr);
    let by_reading = calibrated.replace("± 0.01 % of span", "± 0.01 % of reading");
    let run = run_on(&by_reading, "calibrated.catena", &["check"]);
    assert!(
        run.stderr
            .contains("a calibration's uncertainty cannot be a share of the reading"),
        "{}",
        run.stderr
    );
}

/// `% of reading` is a share of the value read, so the verdict compares
/// each point with its own limit (a hand calculation): a fixed ± 2 kg
/// meets 0.1 % of reading (± 5 kg) at 5000 kg but not at 500 kg
/// (± 0.5 kg), where the verdict is judged; ± 0.25 kg meets it everywhere.
#[test]
fn accuracy_in_percent_of_reading_is_judged_per_point() {
    let text = fixture("silo_percent.catena");
    let (limit, achieved, pass) = requirement(&budget_of(&text, "reading.catena"));
    assert!((limit - 0.5).abs() < 1e-12, "the limit at 500 kg: {limit}");
    assert!((achieved - 2.0).abs() < 0.01 && !pass, "{achieved}");
    let tight = text.replace("zero ± 0.0008 mV/V", "zero ± 0.0001 mV/V");
    let (limit, achieved, pass) = requirement(&budget_of(&tight, "tight.catena"));
    assert!((limit - 0.5).abs() < 1e-12, "{limit}");
    assert!((achieved - 0.25).abs() < 0.01 && pass, "{achieved}");
}

/// A bare `%` on a quantity with a unit is refused, and the help gives
/// both readings with their values: 0.1 % of 5000 kg is 5 kg either way
/// at the top of the range.
#[test]
fn bare_percent_offers_both_spellings() {
    let text = fixture("silo_percent.catena")
        .replace("500 kg .. 5000 kg", "0 kg .. 5000 kg")
        .replace("± 0.1 % of reading", "± 0.2 %");
    let run = run_on(&text, "bare.catena", &["check"]);
    assert_eq!(run.status, 1);
    let flat = run.stderr.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(flat.contains("P313"), "{flat}");
    assert!(
        flat.contains("`± 0.2 % of span` (± 10 kg over the whole range)"),
        "{flat}"
    );
    assert!(
        flat.contains("`± 0.2 % of reading` (± 10 kg at 5000 kg)"),
        "{flat}"
    );
}

/// Temperatures: a requirement of 0.5 % of span over 0 .. 100 degC is
/// ± 0.5 K, and a sensor stated to ± 1 % of reading errs by 1 K at
/// 100 degC and 0.5 K at 50 degC (the reading in degC, as IEC 60584 states
/// thermocouple tolerances as a share of |t|; recalled from memory).
#[test]
fn temperature_shares_of_span_and_reading() {
    let text = fixture("adc_lsb.catena");
    let chain = &text[..text.find("# The same converter").expect("two chains")];
    let text = chain
        .replace(
            "5 degC .. 100 degC",
            "0 degC .. 100 degC\n    require accuracy ± 0.5 % of span worst_case",
        )
        .replace(
            "output 0 V at 0 degC",
            "output 0 V at 0 degC\n        accuracy ± 1 % of reading",
        );
    let b = budget_of(&text, "temperature.catena");
    assert!(
        (requirement(&b).0 - 0.5).abs() < 1e-12,
        "{}",
        b["requirements"]
    );
    let at = |m: f64| {
        b["points"]
            .as_array()
            .expect("points")
            .iter()
            .find(|p| p["measurand"] == m)
            .and_then(|p| p["sources"].as_array())
            .and_then(|s| s.iter().find(|s| s["id"] == "ic.accuracy"))
            .and_then(|s| s["contribution"].as_f64())
            .expect("the sensor's accuracy")
    };
    assert!((at(100.0) - 1.0).abs() < 1e-9, "{}", at(100.0));
    assert!((at(50.0) - 0.5).abs() < 1e-9, "{}", at(50.0));
}

/// A point given in the measurand's unit is reported as written: 1000 ue
/// is 0.001 in SI, and the round trip back gave 1000.0000000000001; 0.3
/// degC went through 273.45 K and came back as 0.30000000000001137.
#[test]
fn eval_reports_the_point_as_written() {
    let eval = |file: &str, at: &str| {
        let run = catena(
            &root(),
            &["eval", "--format", "json", "--at", at, file],
            None,
        );
        assert_eq!(run.status, 0, "{}", run.stderr);
        let v: serde_json::Value = serde_json::from_str(&run.stdout).expect("JSON");
        v["measurand"]["value"].to_string()
    };
    assert_eq!(
        eval("tests/fixtures/eval/full_bridge.catena", "1000"),
        "1000.0"
    );
    assert_eq!(
        eval("tests/fixtures/eval/full_bridge.catena", "1000 ue"),
        "1000.0"
    );
    assert_eq!(eval("specs/cold_store.catena", "0.3"), "0.3");
    assert_eq!(eval("specs/cold_store.catena", "-0"), "0.0");
    // Another unit is converted: 273.45 K is 0.3 degC, to rounding.
    let k: f64 = eval("specs/cold_store.catena", "273.45 K")
        .parse()
        .expect("a number");
    assert!((k - 0.3).abs() < 1e-9, "{k}");
}

/// No JSON output holds a negative zero: the noise total of a chain with
/// no noise was the root of an empty float sum, which is −0.
#[test]
fn no_negative_zero_in_json() {
    let mut specs = common::demo_specs();
    for dir in ["budget", "eval", "units"] {
        let mut more: Vec<_> = std::fs::read_dir(root().join("tests/fixtures").join(dir))
            .expect("a fixture folder")
            .map(|e| e.expect("an entry").path())
            .collect();
        more.sort();
        specs.extend(more);
    }
    for spec in specs {
        let path = spec.to_string_lossy().into_owned();
        let run = catena(
            &root(),
            &["budget", "--format", "json", "--trials", "0", &path],
            None,
        );
        let negative_zero = run
            .stdout
            .lines()
            .any(|l| l.trim_end_matches(',').trim_end().ends_with("-0.0") || l.contains("-0.0]"));
        assert!(!negative_zero, "{path}: {}", run.stdout);
    }
}

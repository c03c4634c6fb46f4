//! A converter's reference range, its input pins against its rails and a
//! sampling converter's acquisition settling, against closed forms,
//! through the binary.

mod common;

use common::{catena, root};

fn run_json(args: &[&str]) -> (i32, String) {
    let run = catena(&root().join("tests/fixtures"), args, None);
    (run.status, run.stdout)
}

fn limit<'a>(budget: &'a serde_json::Value, name: &str) -> &'a serde_json::Value {
    budget["limits"]
        .as_array()
        .expect("limits")
        .iter()
        .find(|l| l["limit"] == name)
        .unwrap_or_else(|| panic!("no limit `{name}` in {budget}"))
}

fn findings(spec: &str) -> Vec<serde_json::Value> {
    let (status, out) = run_json(&["check", "--format", "json", spec]);
    assert_eq!(status, 1, "{out}");
    let doc: serde_json::Value = serde_json::from_str(&out).expect("JSON findings");
    doc["findings"]
        .as_array()
        .expect("a findings array")
        .clone()
}

/// The number right after `before` in `text`.
fn number_after(text: &str, before: &str) -> f64 {
    let rest = &text[text
        .find(before)
        .unwrap_or_else(|| panic!("{before} in {text}"))
        + before.len()..];
    let end = rest
        .find(|c: char| !(c.is_ascii_digit() || c == '.' || c == '-'))
        .unwrap_or(rest.len());
    rest[..end]
        .parse()
        .unwrap_or_else(|e| panic!("{e}: {rest}"))
}

/// First-order RC settling (the step response e^(−t/RC)): the largest
/// source that settles a 12-bit converter's 10 pF within ½ LSB in 200 ns
/// behind a 1 kΩ switch is 200 ns / (10 pF · ln 2^13) − 1 kΩ; the divider's
/// source resistance is its arms in parallel, largest at 30 °C where the
/// Beta-model NTC is 10 kΩ · e^(3435 K (1/303.15 K − 1/298.15 K)); the
/// error there is 4096 · e^(−t / ((Rs + 1 kΩ) · 10 pF)) LSB.
#[test]
fn settling_error_is_the_closed_form() {
    let (t, c, switch, bits) = (200e-9, 10e-12, 1e3, 12);
    let r_max = t / (c * (2f64.powi(bits + 1)).ln()) - switch;
    let ntc = 1e4 * (3435.0 * (1.0 / 303.15 - 1.0 / 298.15f64)).exp();
    let source = ntc * 1e4 / (ntc + 1e4);
    let error = 2f64.powi(bits) * (-t / ((source + switch) * c)).exp();

    let (_, out) = run_json(&[
        "budget",
        "converters/ntc_divider_sar.catena",
        "--format",
        "json",
        "--trials",
        "0",
    ]);
    let budget: serde_json::Value = serde_json::from_str(&out).expect("budget JSON");
    let settling = limit(&budget, "source resistance for settling");
    let allowed = settling["allowed"][1].as_f64().expect("an upper limit");
    let reach = settling["reach"][1].as_f64().expect("a reach");
    assert!(
        (allowed - r_max).abs() < 1e-9 * r_max,
        "{allowed} against {r_max}"
    );
    assert!(
        (reach - source).abs() < 1e-9 * source,
        "{reach} against {source}"
    );

    let found = findings("converters/ntc_divider_sar.catena");
    let r630 = found
        .iter()
        .find(|f| f["code"] == "R630")
        .expect("an R630 finding");
    let message = r630["message"].as_str().expect("message");
    let shown = number_after(message, "settles only to within ");
    assert!(
        (shown - error).abs() < 0.005 * error,
        "{shown} LSB against {error}"
    );
    let help = r630["help"].as_str().expect("help");
    let shown_max = number_after(help, "may be at most ");
    assert!((shown_max - r_max / 1e3).abs() < 0.001, "{help}: {r_max}");
    let needed = (source + switch) * c * (2f64.powi(bits + 1)).ln();
    let shown_needed = number_after(help, "at least ");
    assert!(
        (shown_needed * 1e-9 - needed).abs() < 1e-3 * needed,
        "{help}: {needed}"
    );
}

/// A reference beyond the allowed range is R601, and its help gives the
/// `vref` that keeps 5 % of the range's span: 5 V − 0.05 × (5 V − 1 V).
#[test]
fn reference_out_of_range_is_r601_with_its_fix() {
    let found = findings("invalid/R601-vref-outside-its-range.catena");
    // The R601, then the R674 that follows from it: no fault was judged.
    assert_eq!(found.len(), 2, "{found:?}");
    assert_eq!(found[0]["code"], "R601");
    assert_eq!(found[1]["code"], "R674");
    assert_eq!(found[1]["caused_by"]["code"], "R601");
    let message = found[0]["message"].as_str().expect("message");
    assert!(
        message.contains("reference of `conv` reaches 10.01 V"),
        "{message}"
    );
    let help = found[0]["help"].as_str().expect("help");
    assert!(help.contains("a `vref` of at most 4.800 V"), "{help}");

    let found = findings("invalid/R601-ref-port-outside-its-range.catena");
    let help = found[0]["help"].as_str().expect("help");
    // 3.6 V − 0.05 × 3.1 V = 3.445 V against 5 V × 1.001 at its top.
    assert!(help.contains("at most 3.445 V"), "{help}");
    assert!(help.contains(&format!("by {:.4}", 3.445 / 5.005)), "{help}");
}

/// A floating couple's pins sit at ± half its EMF about 0 V: the lower
/// one at −(E(400 °C) − E(25 °C)) / 2 with the cold junction at the
/// ambient, type K 16.397 mV and 1.000 mV (NIST Monograph 175 table,
/// recalled), so about −7.70 mV, below a 0.2 V rail.
#[test]
fn input_pins_against_the_rails() {
    let (_, out) = run_json(&[
        "budget",
        "converters/floating_couple.catena",
        "--format",
        "json",
        "--trials",
        "0",
    ]);
    let budget: serde_json::Value = serde_json::from_str(&out).expect("budget JSON");
    let half = (16.397e-3 - 1.000e-3) / 2.0;
    let negative = limit(&budget, "negative input pin voltage");
    let low = negative["reach"][0].as_f64().expect("a reach");
    assert!((low + half).abs() < 2e-6, "{low} against {}", -half);
    // Each pin is its own row: the positive one mirrors the negative.
    let positive = limit(&budget, "input pin voltage");
    let high = positive["reach"][1].as_f64().expect("a reach");
    assert!((high - half).abs() < 2e-6, "{high} against {half}");
    let found = findings("converters/floating_couple.catena");
    assert_eq!(found[0]["code"], "R601", "{found:?}");
    let help = found[0]["help"].as_str().expect("help");
    assert!(
        help.contains("shift the input's common mode up by at least 207.7 mV"),
        "{help}"
    );
}

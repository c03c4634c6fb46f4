//! Faults through the evaluator, each against a code worked by hand, and
//! the checklist of every demo spec (insta snapshots, Markdown and JSON).

mod common;

use common::{catena, demo_specs, json, root};
use serde_json::Value;

/// The checklist of a fixture in `tests/fixtures/faults/`, as JSON.
fn checklist(name: &str) -> Value {
    let spec = format!("tests/fixtures/faults/{name}");
    let run = catena(&root(), &["checklist", &spec, "--format", "json"], None);
    assert_eq!(run.status, 0, "{}", run.stderr);
    json(&run.stdout)
}

/// The row of `stage`'s `fault` in the first chain.
fn row<'a>(list: &'a Value, stage: &str, fault: &str) -> &'a Value {
    list["chains"][0]["faults"]
        .as_array()
        .expect("fault rows")
        .iter()
        .find(|r| r["stage"] == stage && r["fault"] == fault)
        .unwrap_or_else(|| panic!("no row for {stage} {fault}: {list}"))
}

fn codes(row: &Value) -> (i64, i64) {
    let c = &row["codes"];
    (c[0].as_i64().expect("low"), c[1].as_i64().expect("high"))
}

/// An open RTD on a current source: the source runs to its 4 V
/// compliance, above the 2.5 V reference, so a 16-bit converter reads its
/// top code, 2^16 − 1 = 65535, clear of the healthy window (a Pt100 at
/// 0 .. 100 °C on 1 mA is 0.100 .. 0.139 V, codes 2616 .. 3638).
#[test]
fn an_open_rtd_on_a_current_source_reads_full_scale() {
    let list = checklist("open_rtd_current_source.catena");
    let open = row(&list, "rtd", "open");
    assert_eq!(codes(open), (65535, 65535));
    assert_eq!(open["verdict"], "detectable");
    // Shorted, 1 mΩ on 1 mA is 1 µV: code 1 µV / 2.5 V × 65536 = 0.03 → 0.
    assert_eq!(codes(row(&list, "rtd", "short")), (0, 0));
    let window = &list["chains"][0]["window"];
    let code = |v: f64, vref: f64| (v / vref * 65536.0).round() as i64;
    // The healthy ends with the current and the reference both at their
    // limits (IEC 60751: R(100 °C) = 138.5055 Ω). The window adds the
    // sources' deviations up, so 2616 (0.0999 V on 2.5025 V) rather than
    // the exact corner, which rounds the same.
    assert_eq!(window["low"], code(0.1 * 0.999, 2.5 * 1.001));
    assert_eq!(window["high"], code(0.1385055 * 1.001, 2.5 * 0.999));
}

/// A shorted NTC at the bottom of a divider gives 3.3 V × 1 mΩ /
/// (10 kΩ + 1 mΩ) = 0.33 µV: code 0 of 4096 on the same 3.3 V reference.
/// Open, the divider's output is the rail: the top code.
#[test]
fn a_shorted_ntc_in_a_low_side_divider_reads_zero() {
    let list = checklist("shorted_ntc_divider.catena");
    let short = row(&list, "ntc", "short");
    assert_eq!(codes(short), (0, 0));
    assert_eq!(short["verdict"], "detectable");
    assert_eq!(codes(row(&list, "ntc", "open")), (4095, 4095));
    // The supply is also the reference: both at 0 V, the converter runs
    // to one end or the other (its own offset decides which), and both
    // ends lie outside the window.
    // Shown as what they are, one end or the other: in JSON a shape of
    // their own (a span would claim every code between), in Markdown
    // "0 or 4095".
    let lost = row(&list, "rail", "lost");
    assert_eq!(lost["codes"], serde_json::json!({ "either": [0, 4095] }));
    let spec = "tests/fixtures/faults/shorted_ntc_divider.catena";
    let md = catena(&root(), &["checklist", spec], None).stdout;
    assert!(
        md.contains("`rail` supply or excitation lost: code 0 or 4095,"),
        "{md}"
    );
    assert_eq!(lost["verdict"], "detectable");
    // Shorted at its output, the supply sits at 0 V whatever its current
    // limit: the same codes as lost, a row of its own. So does the
    // converter's reference pin shorted, which holds the supply wired to
    // it at 0 V too: no input, no reference.
    for (stage, fault) in [("rail", "at_current_limit"), ("conv", "reference_shorted")] {
        assert_eq!(
            row(&list, stage, fault)["codes"],
            lost["codes"],
            "{stage} {fault}"
        );
    }
    assert!(
        lost["threshold"]
            .as_str()
            .is_some_and(|t| t.contains(" or code > ")),
        "{lost}"
    );
}

/// An open thermocouple with a 50 nA burnout current into its 1 MΩ ± 1 %
/// bias resistor reads 50 mV ± 1 %; a 24-bit bipolar converter on 2.5 V
/// gives 2^23 × 0.05 / 2.5 = 167772 nominal, 166094 .. 169450 with the
/// resistor at its limits (each source taken to its limits in turn).
#[test]
fn an_open_thermocouple_with_burnout_reads_the_derived_code() {
    let list = checklist("open_thermocouple_burnout.catena");
    let open = row(&list, "tc", "open");
    // Each source's deviation from the nominal code, added up on each
    // side: the resistor and the reference at their limits.
    let exact = |r: f64, vref: f64| 50e-9 * r / vref * 2f64.powi(23);
    let nominal = exact(1e6, 2.5);
    let low = exact(0.99e6, 2.5) + exact(1e6, 2.5 * 1.0005) - nominal;
    let high = exact(1.01e6, 2.5) + exact(1e6, 2.5 * 0.9995) - nominal;
    assert_eq!(codes(open), (low.round() as i64, high.round() as i64));
    assert_eq!(open["verdict"], "detectable");
    // The threshold lies between the window and the fault's codes.
    let high = list["chains"][0]["window"]["high"].as_i64().expect("high");
    let t: i64 = open["threshold"]
        .as_str()
        .and_then(|t| t.strip_prefix("code > "))
        .and_then(|t| t.parse().ok())
        .expect("an upper threshold");
    assert!(high < t && (t as f64) < low, "{high} {t}");
}

/// Without a burnout current, nothing gives an open couple's input a
/// path: its code is undetermined, which is not detectable.
#[test]
fn an_open_thermocouple_without_burnout_is_undetermined() {
    let list = checklist("open_thermocouple_floating.catena");
    let open = row(&list, "tc", "open");
    assert_eq!(open["verdict"], "undetermined");
    assert!(open["codes"].is_null());
}

/// 50 nA through a 10 kΩ bias resistor is 0.5 mV, a code the healthy
/// couple gives near 12 °C: silent. The fix is the least current that
/// clears the window's top (52368) by two codes with the resistor at its
/// low limit and the reference at its high one: 52370 / 2^23 / (9.9 kΩ /
/// 2.5 V + 10 kΩ / 2.50125 V − 10 kΩ / 2.5 V) = 1.5773 µA, so 1.58 µA.
#[test]
fn an_open_thermocouple_reading_inside_the_window_is_silent() {
    let list = checklist("open_thermocouple_silent.catena");
    let open = row(&list, "tc", "open");
    assert_eq!(open["verdict"], "silent");
    assert_eq!(list["chains"][0]["window"]["high"], 52368);
    let action = open["action"].as_str().expect("an action");
    assert!(action.contains("at least 1.58 uA"), "{action}");
}

/// An open load on a current-output sensor: with nowhere to send its
/// current, the sensor's output rises to its 5 V ± 5 % supply, above the
/// 4.096 V reference, so the 12-bit converter reads its top code, 4095.
#[test]
fn an_open_load_on_a_current_output_sensor_reads_its_supply() {
    let list = checklist("check_open_load_on_ptat.catena");
    let open = row(&list, "load", "open");
    assert_eq!(codes(open), (4095, 4095));
    assert_eq!(open["verdict"], "detectable");
}

/// `catena check --format json` on a fixture in `tests/fixtures/faults/`:
/// its exit status and findings.
fn check(name: &str) -> (i32, Vec<Value>) {
    let spec = format!("tests/fixtures/faults/{name}");
    let run = catena(
        &root(),
        &["check", "--deny", "warnings", "--format", "json", &spec],
        None,
    );
    let doc = json(&run.stdout);
    let findings = doc["findings"].as_array().expect("findings").clone();
    (run.status, findings)
}

fn only<'a>(findings: &'a [Value], code: &str) -> Vec<&'a Value> {
    findings.iter().filter(|f| f["code"] == code).collect()
}

/// The silent open couple (its checklist row above) is a `check` finding:
/// a warning in a chain that guards nothing, on the couple, with a second
/// label on the converter that would carry the burnout current and the
/// computed least current (1.58 uA, worked out above) in its help.
#[test]
fn check_reports_a_silent_fault_with_its_fix() {
    let (status, findings) = check("check_open_couple_silent.catena");
    assert_eq!(status, 1);
    assert_eq!(findings.len(), 1, "{findings:?}");
    let f = &findings[0];
    assert_eq!(f["code"], "R670");
    assert_eq!(f["severity"], "warning");
    assert_eq!(f["line"], 10);
    assert_eq!(f["labels"][1]["line"], 16, "the converter: {f}");
    let help = f["help"].as_str().expect("help");
    assert!(help.contains("at least 1.58 uA on `conv`"), "{help}");
}

/// With no burnout current the open couple floats: R671 says why and what
/// would define it.
#[test]
fn check_reports_an_undetermined_fault_with_what_defines_it() {
    let (status, findings) = check("check_open_couple_undetermined.catena");
    assert_eq!(status, 1);
    let f = only(&findings, "R671");
    assert_eq!(f.len(), 1, "{findings:?}");
    assert_eq!(f[0]["severity"], "warning");
    let message = f[0]["message"].as_str().expect("message");
    assert!(
        message.contains("nothing gives the open input a path"),
        "{message}"
    );
    let help = f[0]["help"].as_str().expect("help");
    assert!(help.contains("burnout current of at least"), "{help}");
}

/// The same silent fault under an over-temperature trip is an error, and
/// because it reads near 12 degC with the furnace past its trip, it masks
/// the trip: R672 names both, follows from the R670, and says which way a
/// burnout must drive.
#[test]
fn a_silent_fault_under_a_trip_is_an_error_and_masks_it() {
    let (status, findings) = check("check_open_couple_alarm.catena");
    assert_eq!(status, 1);
    let silent = only(&findings, "R670");
    assert_eq!(silent.len(), 1, "{findings:?}");
    assert_eq!(silent[0]["severity"], "error");
    let masked = only(&findings, "R672");
    assert_eq!(masked.len(), 1, "{findings:?}");
    let m = masked[0];
    assert_eq!(m["severity"], "error");
    let message = m["message"].as_str().expect("message");
    assert!(
        message.contains("`alarm high 350 degC`") && message.contains("`tc` open circuit"),
        "{message}"
    );
    assert_eq!(m["caused_by"]["code"], "R670");
    assert_eq!(m["labels"][1]["line"], 8, "the alarm: {m}");
    assert!(
        m["help"].as_str().is_some_and(|h| h.contains("up-scale")),
        "{m}"
    );
}

/// `protects property` makes the same fault an error without any alarm.
#[test]
fn a_chain_that_protects_property_makes_a_silent_fault_an_error() {
    let (_, findings) = check("check_open_couple_protects.catena");
    let silent = only(&findings, "R670");
    assert_eq!(silent.len(), 1, "{findings:?}");
    assert_eq!(silent[0]["severity"], "error");
    assert!(only(&findings, "R672").is_empty());
}

/// A high alarm at 0.5 degC whose guard band is the GUM expanded
/// uncertainty (k = 2) at the limit: the sensor's ± 1 K (rectangular,
/// u = 0.57735 K), the reference's ± 0.1 % of 0.505 V read at 10 mV/K
/// (0.0505 K, u = 0.02916 K) and half a code of 2.5 V / 4096 at 10 mV/K
/// (0.03052 K, u = 0.01762 K): 2 √(Σu²) = 1.1567 K, so the trip sits at
/// −0.6567 degC, below the range, and the limit that keeps it inside is
/// 1.157 degC.
#[test]
fn a_trip_pushed_past_the_range_is_an_error_with_the_number() {
    let u = [
        1.0 / 3f64.sqrt(),
        0.0505 / 3f64.sqrt(),
        (2.5 / 4096.0 / 0.01 / 2.0) / 3f64.sqrt(),
    ];
    let guard = 2.0 * u.iter().map(|x| x * x).sum::<f64>().sqrt();
    let trip = format!("{:.4}", 0.5 - guard);
    assert_eq!(trip, "-0.6567");
    let (status, findings) = check("check_trip_below_range.catena");
    assert_eq!(status, 1);
    let f = only(&findings, "R673");
    assert_eq!(f.len(), 1, "{findings:?}");
    assert_eq!(f[0]["severity"], "error");
    assert_eq!(f[0]["line"], 8);
    let message = f[0]["message"].as_str().expect("message");
    assert!(message.contains(&format!("{trip} degC")), "{message}");
    let help = f[0]["help"].as_str().expect("help");
    // The range starts at 0 degC: a limit of 0 + the guard band or above.
    let limit = format!("{:.3} degC", guard);
    assert!(help.contains(&limit), "{help} lacks {limit}");
}

/// The row of `stage`'s `fault` in chain `chain` (by position).
fn row_of<'a>(list: &'a Value, chain: usize, stage: &str, fault: &str) -> &'a Value {
    list["chains"][chain]["faults"]
        .as_array()
        .expect("fault rows")
        .iter()
        .find(|r| r["stage"] == stage && r["fault"] == fault)
        .unwrap_or_else(|| panic!("no row for {stage} {fault} in chain {chain}: {list}"))
}

/// IEC 60751 Pt100 resistance, Ω, at 0 and 100 °C (the standard's table).
const PT100_0: f64 = 100.0;
const PT100_100: f64 = 138.5055;

/// A 24-bit bipolar converter's exact code, rounded.
fn code24(v: f64, vref: f64) -> i64 {
    (v / vref * 2f64.powi(23)).round() as i64
}

/// A 3-wire Pt100 whose compensation lead opens: the compensating
/// current has no path, so that converter input sits at the source's
/// 1.5 V compliance, while wire 1 reads the element with both 5 Ω leads
/// above the 2 kΩ reference resistor (0.5 mA × 2 kΩ = 1 V, also the
/// converter's reference): v = 1 V + 0.5 mA × (R + 10 Ω) − 1.5 V.
#[test]
fn a_3_wire_rtd_with_its_compensation_lead_open_reads_below_the_window() {
    let list = checklist("kind_rtd_3wire_compensation_open.catena");
    let open = row(&list, "rtd", "compensation_lead_open");
    let v = |r: f64| 1.0 + 0.5e-3 * (r + 5.0 + 5.0) - 1.5;
    assert_eq!(
        codes(open),
        (code24(v(PT100_0), 1.0), code24(v(PT100_100), 1.0))
    );
    assert_eq!(open["verdict"], "detectable");
    // Healthy, the leads cancel: 0.5 mA × R over 1 V.
    let window = &list["chains"][0]["window"];
    assert_eq!(window["low"], code24(0.5e-3 * PT100_0, 1.0));
    assert!(open["threshold"]
        .as_str()
        .is_some_and(|t| t.starts_with("code < ")));
}

/// A shorted 3-wire Pt100 in a quarter bridge of 100 Ω from 2.5 V, its
/// leads 0.5 Ω ± 0.2 Ω. Wire 1 stays in the element's arm with the short
/// (1 mΩ) and wire 2 in the next arm, with the completion resistor:
/// V = 2.5 V × ((1 mΩ + L1) / (1 mΩ + L1 + 100 Ω + L2) − 1/2), about half
/// of full scale below zero, far outside the window. The range adds each
/// lead's own move at its limit to the nominal, as every fault range
/// does: lowest with wire 1 short (0.3 Ω) and wire 2 long (0.7 Ω),
/// highest the other way round. (A net lead L1 − L2 in the element's own
/// arm went below zero there, and the fault read "undetermined".)
#[test]
fn a_shorted_3_wire_rtd_in_a_bridge_reads_half_scale_below_zero() {
    let list = checklist("kind_rtd_3wire_short_bridge.catena");
    let short = row(&list, "probe", "short");
    let code = |l1: f64, l2: f64| {
        let arm = 1e-3 + l1;
        let v = 2.5 * (arm / (arm + 100.0 + l2) - 0.5);
        v / 2.5 * 2f64.powi(23)
    };
    let nominal = code(0.5, 0.5);
    let moved = |l1: f64, l2: f64| code(l1, 0.5) + code(0.5, l2) - nominal;
    let (low, high) = (moved(0.3, 0.7), moved(0.7, 0.3));
    assert_eq!(codes(short), (low.round() as i64, high.round() as i64));
    assert_eq!(short["verdict"], "detectable");
    // The review item says where each lead sits.
    let leads = list["chains"][0]["review"]
        .as_array()
        .expect("review items")
        .iter()
        .find(|r| r["kind"] == "leads")
        .expect("a leads item");
    let text = leads["text"].as_str().expect("text");
    assert!(text.contains("3-wire in a bridge"), "{text}");
}

/// A 4-wire Pt100's sense lead open cuts the converter's input off the
/// element: with no bias path nothing sets its code; a 100 nA burnout
/// current into the open input (1e12 Ω of insulation) drives it to the
/// top code, 2^23 − 1. A force lead open starves the element (0 V across
/// it) and so does the sense leads' short: code 0.
#[test]
fn a_4_wire_rtd_with_a_sense_lead_open_is_undetermined_without_burnout() {
    let list = checklist("kind_rtd_4wire_sense_open.catena");
    for fault in ["sense_lead_open", "return_sense_lead_open"] {
        let floating = row_of(&list, 0, "rtd", fault);
        assert_eq!(floating["verdict"], "undetermined");
        assert!(floating["codes"].is_null());
        let driven = row_of(&list, 1, "rtd", fault);
        assert_eq!(codes(driven), (8388607, 8388607));
        assert_eq!(driven["verdict"], "detectable");
    }
    for fault in ["force_lead_open", "return_lead_open", "sense_leads_shorted"] {
        assert_eq!(codes(row_of(&list, 0, "rtd", fault)), (0, 0), "{fault}");
    }
    // The converter's own pin open: its own burnout current drives it up.
    assert_eq!(
        row_of(&list, 0, "conv", "input_open")["verdict"],
        "undetermined"
    );
    assert_eq!(
        codes(row_of(&list, 1, "conv", "input_open")),
        (8388607, 8388607)
    );
    // The element open: the source's 4 V compliance across the sense
    // leads, above the 2.5 V reference: the top code.
    assert_eq!(codes(row_of(&list, 0, "rtd", "open")), (8388607, 8388607));
}

/// An IC sensor's output stuck high sits at its supply: 3.3 V ± 1 % wired
/// gives 3.267 .. 3.333 V, codes 3267 .. 3333 of a 12-bit converter on
/// 4.096 V (1 mV a code); a stated 2.7 V .. 5.5 V range, its low end,
/// 2.7 V, code 2700. The wired supply lost takes the output to 0 V. A
/// PTAT current sensor shorted leaves only its 4.7 kΩ load to limit the
/// current, so the load carries the whole 3.3 V ± 1 %: codes 3267 .. 3333
/// again (healthy, 273 .. 373 µA × 4.7 kΩ, codes 1284 .. 1754).
#[test]
fn an_ic_sensor_stuck_high_reads_its_supply() {
    let list = checklist("kind_ic_stuck_high.catena");
    let code = |v: f64| (v / 4.096 * 4096.0).round() as i64;
    let wired = row_of(&list, 0, "ic", "stuck_high");
    assert_eq!(codes(wired), (code(3.3 * 0.99), code(3.3 * 1.01)));
    assert_eq!(wired["verdict"], "detectable");
    assert_eq!(codes(row_of(&list, 0, "supply", "lost")), (0, 0));
    assert_eq!(
        codes(row_of(&list, 1, "ic", "stuck_high")),
        (code(2.7), code(2.7))
    );
}

/// An amplifier's open input with a 10 nA burnout current: 10 nA into
/// 1e12 Ω is 10 kV, times a gain of 2, clipped at the 5 V swing: code
/// 5 / 5 × 65536, held at the top code 65535. The converter's own input
/// open, without a burnout current, floats.
#[test]
fn an_open_input_is_driven_to_a_rail_by_its_burnout_current() {
    let list = checklist("kind_input_open.catena");
    let front = row(&list, "front", "input_open");
    assert_eq!(codes(front), (65535, 65535));
    assert_eq!(front["verdict"], "detectable");
    let conv = row(&list, "conv", "input_open");
    assert_eq!(conv["verdict"], "undetermined");
}

/// A Pt100 quarter bridge of 100 Ω on 2.5 V, read against the same 2.5 V
/// (`physics::strain`: V_P = V r2/(r1 + r2), V_N = V r4/(r3 + r4), the
/// element r2). Each completion resistor open (1e12 Ω) or shorted
/// (1 mΩ), worked through those two dividers at 0 and 100 °C.
#[test]
fn each_completion_resistor_of_a_bridge_open_and_shorted() {
    let list = checklist("kind_bridge_completion.catena");
    let (open, short) = (1e12, 1e-3);
    let out = |r1: f64, r2: f64, r3: f64, r4: f64| {
        let v = 2.5 * r2 / (r1 + r2) - 2.5 * r4 / (r3 + r4);
        code24(v, 2.5)
    };
    let span = |f: &dyn Fn(f64) -> i64| {
        let (a, b) = (f(PT100_0), f(PT100_100));
        (a.min(b), a.max(b))
    };
    let cases: [(&str, &dyn Fn(f64) -> i64); 6] = [
        ("completion_1_open", &|r| out(open, r, 100.0, 100.0)),
        ("completion_1_short", &|r| out(short, r, 100.0, 100.0)),
        ("completion_2_open", &|r| out(100.0, r, open, 100.0)),
        ("completion_2_short", &|r| out(100.0, r, short, 100.0)),
        ("completion_3_open", &|r| out(100.0, r, 100.0, open)),
        ("completion_3_short", &|r| out(100.0, r, 100.0, short)),
    ];
    for (fault, f) in cases {
        let got = row(&list, "arms", fault);
        assert_eq!(codes(got), span(f), "{fault}");
        assert_eq!(got["verdict"], "detectable", "{fault}");
    }
}

/// A load cell's excitation lead open: no current in its bridge, both
/// signal leads at the other excitation lead, 0 V between them, the
/// zero-load code 0, inside the window: silent. The return lead open
/// lifts both to 5 V, beyond the amplifier's 3.5 V input range: its
/// output rails at 4.8 V, code 4.8 / 5 × 2^23 = 8053064.
#[test]
fn a_load_cell_with_its_excitation_lead_open_reads_zero_load() {
    let list = checklist("kind_transducer_leads.catena");
    let open = row(&list, "cell", "excitation_lead_open");
    assert_eq!(codes(open), (0, 0));
    assert_eq!(open["verdict"], "silent");
    let ret = row(&list, "cell", "excitation_return_open");
    assert_eq!(codes(ret), (code24(4.8, 5.0), code24(4.8, 5.0)));
    assert_eq!(ret["verdict"], "detectable");
    assert_eq!(
        row(&list, "cell", "signal_lead_open")["verdict"],
        "undetermined"
    );
}

/// The checklist of every demo spec, Markdown and JSON.
#[test]
fn demo_checklists() {
    for spec in demo_specs() {
        let name = spec
            .file_stem()
            .expect("a name")
            .to_string_lossy()
            .to_string();
        let path = spec.to_string_lossy().to_string();
        for format in ["md", "json"] {
            let run = catena(&root(), &["checklist", &path, "--format", format], None);
            assert_eq!(run.status, 0, "{name}: {}", run.stderr);
            insta::assert_snapshot!(format!("{name}_{format}"), run.stdout);
        }
    }
}

/// A checklist is never written over a spec.
#[test]
fn the_checklist_refuses_to_overwrite_a_spec() {
    let run = catena(
        &root(),
        &[
            "checklist",
            "tests/fixtures/faults/shorted_ntc_divider.catena",
            "-o",
            "tests/fixtures/faults/shorted_ntc_divider.catena",
        ],
        None,
    );
    assert_eq!(run.status, 2, "{}", run.stderr);
    assert!(run.stderr.contains("refusing"), "{}", run.stderr);
}

/// A Pt100 ranged down to -200 degC, the end of the IEC 60751 curve: the
/// window's slope there is taken from the end inward, so the window is
/// built and the faults are judged (its open sense leads undetermined,
/// R671) rather than left unjudged (R674).
#[test]
fn a_range_ending_where_the_sensor_stops_still_has_its_faults_judged() {
    let spec = "tests/fixtures/eval/pt100_four_wire.catena";
    let run = catena(&root(), &["check", "--format", "json", spec], None);
    let doc = json(&run.stdout);
    let findings = doc["findings"].as_array().expect("findings");
    assert!(only(findings, "R674").is_empty(), "{findings:?}");
    assert_eq!(only(findings, "R671").len(), 1, "{findings:?}");
}

/// An alarm beyond what its couple can read (type T stops at 400 degC):
/// its trip code cannot be evaluated, so `check` says the trips were not
/// judged (R674, an error under an alarm), with the couple's range in the
/// help, and still judges the faults.
#[test]
fn trips_that_cannot_be_evaluated_are_reported_not_skipped() {
    let spec = "tests/fixtures/invalid/R674-alarm-beyond-sensor.catena";
    let run = catena(&root(), &["check", "--format", "json", spec], None);
    assert_eq!(run.status, 1, "{}", run.stdout);
    let doc = json(&run.stdout);
    let findings = doc["findings"].as_array().expect("findings");
    let r674 = only(findings, "R674");
    assert_eq!(r674.len(), 1, "{findings:?}");
    assert_eq!(r674[0]["severity"], "error");
    let help = r674[0]["help"].as_str().expect("help");
    assert!(help.contains("-270 degC .. 400 degC"), "{help}");
    // The window was built: the checklist lists the faults.
    let run = catena(&root(), &["checklist", spec, "--format", "json"], None);
    assert_eq!(run.status, 0, "{}", run.stderr);
    assert!(!json(&run.stdout)["chains"][0]["faults"]
        .as_array()
        .expect("fault rows")
        .is_empty());
}

/// A converter's stated input bias current (200 nA) outweighs its 100 nA
/// burnout current: the open pin's direction is undetermined, and the
/// help names the figure a burnout current must exceed.
#[test]
fn a_burnout_current_below_the_converters_bias_current_leaves_its_input_undetermined() {
    let list = checklist("kind_input_open_bias.catena");
    let open = row(&list, "conv", "input_open");
    assert_eq!(open["verdict"], "undetermined", "{open}");
    let action = open["action"].as_str().expect("an action");
    assert!(
        action.contains("more than its input bias current of up to 200 nA"),
        "{action}"
    );
}

/// A current source at its compliance drives its string as a voltage
/// source of the compliance: here 4 V across the Pt100 and a fixed
/// 1.9 kΩ, so I = 4 V / (R + 1900 Ω) instead of the set 1 mA. At 0 °C
/// (R = 100 Ω) that is 2 mA and 0.2 V across the Pt100; at 100 °C
/// (R = 138.5055 Ω, IEC 60751) 1.96222 mA and 0.271779 V. On the
/// 2.5 V ± 0.1 % reference the codes run from 0.2 / 2.5025 × 65536 =
/// 5237.6 to 0.271779 / 2.4975 × 65536 = 7131.7: high, clear of the
/// healthy 2616 .. 3638, but not the open element's top code. The source
/// current's own tolerance no longer matters: the compliance sets it.
#[test]
fn a_current_source_at_its_compliance_drives_the_string_as_a_voltage_source() {
    let list = checklist("kind_excitation_limits.catena");
    let at = row(&list, "drive", "at_compliance");
    let code = |r: f64, vref: f64| 4.0 * r / (r + 1900.0) / vref * 65536.0;
    let (low, high) = (code(100.0, 2.5025), code(138.5055, 2.4975));
    assert_eq!(
        codes(at),
        (low.round() as i64, high.round() as i64),
        "{low} {high}"
    );
    assert_eq!(at["verdict"], "detectable");
    // The element open instead: the source at 4 V holds the converter's
    // input above its 2.5 V reference, the top code.
    assert_eq!(codes(row(&list, "rtd", "open")), (65535, 65535));
    // A shorted reference pin on a stated reference: 0 V against the
    // Pt100's 0.1 V or more, so the converter runs to its top code, as it
    // does with the reference lost.
    assert_eq!(
        codes(row(&list, "conv", "reference_shorted")),
        (65535, 65535)
    );
    assert_eq!(codes(row(&list, "conv", "reference_lost")), (65535, 65535));
}

/// Ratiometric, the same fault changes the current and not the ratio:
/// I·R / (I·2 kΩ) × 2^23 = R / 2000 × 2^23, 419430 at 0 °C whatever I
/// is. The fault reads within the healthy chain's own tolerances, so it
/// is tolerated, not silent, and `check` says nothing of it. A shorted
/// reference resistor leaves the Pt100's voltage against 0 V: the top
/// code.
#[test]
fn a_ratiometric_current_source_at_its_compliance_is_tolerated() {
    let name = "kind_excitation_ratiometric.catena";
    let list = checklist(name);
    let at = row(&list, "drive", "at_compliance");
    assert_eq!(at["verdict"], "tolerated");
    let window = &list["chains"][0]["window"];
    let (low, high) = codes(at);
    assert!(window["low"].as_i64() <= Some(low) && Some(high) <= window["high"].as_i64());
    let nominal = (100.0 / 2000.0 * 2f64.powi(23)) as i64;
    assert!(low <= nominal && nominal <= high, "{low} {high}");
    assert_eq!(
        codes(row(&list, "conv", "reference_shorted")),
        (8388607, 8388607)
    );
    let spec = format!("tests/fixtures/faults/{name}");
    let run = catena(&root(), &["check", &spec], None);
    assert!(!run.stderr.contains("compliance voltage"), "{}", run.stderr);
}

/// A converter's input bias current is an error source as an
/// amplifier's is: up to 50 nA through the sensor's 10 kΩ output
/// resistance is 0.5 mV at the input, 0.5 mV / (10 mV/K) = 0.05 K either
/// way, at every point.
#[test]
fn a_converters_bias_current_through_the_source_is_an_offset_in_the_budget() {
    let spec = "tests/fixtures/faults/converter_bias_offset.catena";
    let run = catena(
        &root(),
        &["budget", "--format", "json", "--trials", "0", spec],
        None,
    );
    assert_eq!(run.status, 0, "{}", run.stderr);
    let doc = json(&run.stdout);
    for point in doc["points"].as_array().expect("points") {
        let bias = point["sources"]
            .as_array()
            .expect("sources")
            .iter()
            .find(|s| s["id"] == "conv.bias")
            .unwrap_or_else(|| panic!("no conv.bias: {point}"));
        let k = bias["contribution"].as_f64().expect("contribution");
        assert!((k - 50e-9 * 10e3 / 10e-3).abs() < 1e-9, "{k}");
    }
}

/// The burnout current that makes an open couple detectable must also
/// outweigh the converter's 200 nA input bias current, which flows the
/// other way through the 10 kΩ bias resistor at its limit. The least
/// current I has the fault's lowest code clear of the window's top by
/// two codes, each source at the limit that lowers it (the resistor at
/// 9.9 kΩ, the reference at 2.50125 V, the bias current at −200 nA):
/// I × (9.9 kΩ / 2.5 + 10 kΩ / 2.50125 − 10 kΩ / 2.5) − 200 nA × 10 kΩ /
/// 2.5 = (top + 2) / 2^23 V/V. The window's top moves too: the bias
/// current through the same resistor is an offset of the healthy couple.
#[test]
fn the_burnout_help_outweighs_the_converters_bias_current() {
    let list = checklist("open_thermocouple_bias.catena");
    let top = list["chains"][0]["window"]["high"]
        .as_f64()
        .expect("window top");
    let per_amp = 9.9e3 / 2.5 + 10e3 / 2.50125 - 10e3 / 2.5;
    let least = ((top + 2.0) / 2f64.powi(23) + 200e-9 * 10e3 / 2.5) / per_amp;
    // Three significant digits, rounded up.
    let shown = (least * 1e8).ceil() / 1e2;
    let action = row(&list, "tc", "open")["action"]
        .as_str()
        .expect("an action")
        .to_string();
    assert!(
        action.contains(&format!("at least {shown:.2} uA")),
        "{least} {action}"
    );
    // Without the bias current the same couple needs 1.58 uA.
    assert!(shown > 1.58 + 0.2 * 10.0 / 9.9 - 0.01, "{shown}");
}

/// Where no current helps, or any does, the help says so instead of
/// quoting the search's ends: through only 10 Ω even 1 mA is 10 mV, a
/// healthy code; with no bias resistor the open couple is loaded by
/// nothing but leakage, so any current outweighing the input's bias
/// current rails it.
#[test]
fn the_burnout_help_says_when_no_current_or_any_current_works() {
    let list = checklist("open_thermocouple_small_bias_resistor.catena");
    let action = row(&list, "tc", "open")["action"].as_str().expect("action");
    assert!(
        action.starts_with("no burnout current on `conv` up to 1.00 mA"),
        "{action}"
    );
    assert!(!action.contains("pA"), "{action}");
    let run = catena(
        &root(),
        &[
            "checklist",
            "tests/fixtures/channels/couple_pair.catena",
            "--format",
            "json",
        ],
        None,
    );
    let list = json(&run.stdout);
    let action = row(&list, "tc", "open")["action"].as_str().expect("action");
    assert!(
        action.starts_with("any burnout current on `conv` (more than its input bias current)"),
        "{action}"
    );
}

/// One code is "code", several "codes": a fault that gives one end or
/// the other gives a single code.
#[test]
fn a_single_fault_code_is_worded_in_the_singular() {
    let spec = "tests/fixtures/faults/open_rtd_current_source.catena";
    let md = catena(&root(), &["checklist", spec], None).stdout;
    assert!(md.contains("open circuit: code 65535, "), "{md}");
    assert!(!md.contains("codes 65535"), "{md}");
    let spec = "tests/fixtures/faults/check_open_couple_silent.catena";
    let run = catena(&root(), &["check", "--format", "json", spec], None);
    assert!(
        run.stdout.contains("its codes 1660 .. 1695 overlap"),
        "{}",
        run.stdout
    );
}

/// A chain stopped by R601 has no window and no fault judged. A
/// `catena.yaml` that relaxes R601 lets the check pass, so R674 says the
/// faults were not judged, following from the R601, and stays after the
/// relaxing.
#[test]
fn a_relaxed_limit_still_says_the_faults_were_not_judged() {
    let dir = common::temp_dir("faults", "relaxed_r601");
    std::fs::create_dir_all(dir.join(".git")).unwrap();
    std::fs::copy(
        root().join("tests/fixtures/invalid/R601-over-gained-amplifier.catena"),
        dir.join("amp.catena"),
    )
    .unwrap();
    let codes = |dir: &std::path::Path| {
        let run = catena(dir, &["check", "--format", "json", "amp.catena"], None);
        let doc = json(&run.stdout);
        let found: Vec<(String, String)> = doc["findings"]
            .as_array()
            .expect("findings")
            .iter()
            .map(|f| {
                let s = |k: &str| f[k].as_str().unwrap_or_default().to_string();
                (s("code"), s("severity"))
            })
            .collect();
        (run.status, found)
    };
    let (status, found) = codes(&dir);
    assert_eq!(status, 1);
    assert!(
        found.contains(&("R674".into(), "warning".into())),
        "{found:?}"
    );
    std::fs::write(dir.join("catena.yaml"), "rules:\n  R601: allow\n").unwrap();
    let (status, found) = codes(&dir);
    assert_eq!(status, 0, "{found:?}");
    assert_eq!(found, vec![("R674".to_string(), "warning".to_string())]);
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Two channels of one converter share its reference: the bath's
/// reference lost or shorted is one fault of `conv`, listed once (not again
/// under the channel `rref_in`), and either way both channels read past
/// full scale alike, so the ratio the firmware computes is one: 2²³ codes
/// of the ratio on this 24-bit bipolar converter.
#[test]
fn a_shared_reference_fails_once_for_every_channel() {
    let run = catena(
        &root(),
        &[
            "checklist",
            "tests/fixtures/channels/ratio_bath.catena",
            "--format",
            "json",
        ],
        None,
    );
    assert_eq!(run.status, 0, "{}", run.stderr);
    let list = json(&run.stdout);
    for fault in ["reference_lost", "reference_shorted"] {
        assert_eq!(
            codes(row(&list, "conv", fault)),
            (1 << 23, 1 << 23),
            "{fault}"
        );
        let again = list["chains"][0]["faults"]
            .as_array()
            .expect("fault rows")
            .iter()
            .any(|r| r["stage"] == "rref_in" && r["fault"] == fault);
        assert!(!again, "{fault} listed under the channel too");
    }
}

/// A current source at its compliance drives a bridge as a voltage source
/// of that compliance: a quarter bridge of 350 Ω with a gauge of factor 2
/// at 0 .. 1000 µε, at 5 V, gives 5 V × (R / (350 Ω + R) − 1/2), codes
/// 0 .. 8380 of a 24-bit converter on 2.5 V, where healthy (1 mA into
/// 350 Ω, 0.35 V) it gives 0 .. 587. (The source's load had been sought
/// among elements wired to it alone, so a bridge on it left the fault
/// undetermined and its help asked for the compliance already stated.)
#[test]
fn a_current_source_at_its_compliance_drives_a_bridge_at_that_voltage() {
    let list = checklist("kind_current_bridge_compliance.catena");
    let code = |volts: f64, strain: f64| {
        let r = 350.0 * (1.0 + 2.0 * strain);
        let v = volts * (r / (350.0 + r) - 0.5);
        (v / 2.5 * 2f64.powi(23)).round() as i64
    };
    let at = row(&list, "drive", "at_compliance");
    assert_eq!(codes(at), (code(5.0, 0.0), code(5.0, 1000e-6)));
    let window = &list["chains"][0]["window"];
    assert_eq!(window["high"].as_i64(), Some(code(0.35, 1000e-6)));
}

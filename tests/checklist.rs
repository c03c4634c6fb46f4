//! The checklist's one model: its review items against hand
//! calculations, and the report's faults-and-limits section and verdict
//! against `catena checklist` of the same spec.

mod common;

use common::{catena, json, root};
use serde_json::Value;

fn checklist(spec: &str) -> Value {
    let run = catena(&root(), &["checklist", spec, "--format", "json"], None);
    assert_eq!(run.status, 0, "{}", run.stderr);
    json(&run.stdout)
}

fn report(spec: &str) -> Value {
    let run = catena(
        &root(),
        &["report", spec, "--format", "json", "--trials", "0"],
        None,
    );
    assert!(run.status <= 1, "{}", run.stderr);
    json(&run.stdout)
}

/// The review item of `kind` that names `stage`.
fn review<'a>(list: &'a Value, kind: &str, stage: &str) -> &'a str {
    list["chains"][0]["review"]
        .as_array()
        .expect("review items")
        .iter()
        .filter(|r| r["kind"] == kind)
        .filter_map(|r| r["text"].as_str())
        .find(|t| t.contains(&format!("`{stage}`")))
        .unwrap_or_else(|| panic!("no {kind} item for {stage}: {list}"))
}

/// `x` to three significant digits, as the checklist writes it.
fn three(x: f64) -> String {
    let digits = 2 - x.abs().log10().floor() as i32;
    format!("{:.*}", digits.max(0) as usize, x)
}

/// The cold store's Pt1000 (IEC 60751, A = 3.9083e-3, B = -5.775e-7) on
/// a 250 uA source with a 2 mW/K dissipation constant, worst at the top
/// of its range, 15 degC: R = 1000 (1 + 15 A + 225 B) = 1058.49 ohm,
/// P = I^2 R = 66.2 uW, and the self-heating P / delta = 0.0331 K (worked
/// by hand; the element's own heating raises R slightly, well inside
/// the third digit).
#[test]
fn self_heating_is_i_squared_r_over_the_dissipation_constant() {
    let list = checklist("specs/cold_store.catena");
    let text = review(&list, "self_heating", "probe");
    let r = 1000.0 * (1.0 + 15.0 * 3.9083e-3 + 225.0 * -5.775e-7);
    let power = 250e-6_f64.powi(2) * r;
    let kelvin = power / 2e-3;
    assert!(
        text.contains(&format!("{} K at 15 degC", three(kelvin))),
        "{text}"
    );
    assert!(
        text.contains(&format!("{} uW dissipated", three(power * 1e6))),
        "{text}"
    );
}

/// The battery pack's 10 kohm NTC (B = 3950 K, delta = 1.5 mW/K) under a
/// 10 kohm resistor from 3.3 V: a divider puts V^2 R / (R + Rf)^2 into
/// its element, most where R = Rf, 25 degC, inside the -20 .. 60 degC
/// range: V^2 / (4 Rf) = 272 uW and 0.181 K (by hand). Read at the
/// range's ends only, it was 0 K: the heat shows in the divider's output,
/// not in the element's own resistance.
#[test]
fn a_divider_heats_its_element_most_where_the_two_match() {
    let list = checklist("specs/battery_pack.catena");
    let text = review(&list, "self_heating", "ntc");
    assert_heats(text, 3.3_f64.powi(2) / (4.0 * 10e3), 1.5e-3, "K at");
}

/// The pottery kiln's cold-junction NTC (10 kohm, B = 3435 K) under
/// 10 kohm from its 2.5 V reference: at most V^2 / (4 Rf) = 156 uW and
/// 0.104 K at 1.5 mW/K (by hand), near 25 degC of its 10 .. 45 degC
/// ambient. It senses the junction, not the kiln: named at a cold
/// junction's temperature, not at the measurand's (where it was 0 K at
/// 1200 degC).
#[test]
fn a_cold_junction_sensor_heats_at_the_ambient() {
    let list = checklist("specs/pottery_kiln.catena");
    let text = review(&list, "self_heating", "cjs");
    let power = 2.5_f64.powi(2) / (4.0 * 10e3);
    assert_heats(text, power, 1.5e-3, "K at a cold junction of");
}

/// `text` names the power and the rise (power / delta, followed by
/// `then`) to the checklist's three digits.
fn assert_heats(text: &str, power: f64, delta: f64, then: &str) {
    assert!(
        text.contains(&format!("{} uW dissipated", three(power * 1e6))),
        "{text}"
    );
    assert!(
        text.contains(&format!("{} {then}", three(power / delta))),
        "{text}"
    );
}

/// The leads the spec states, and what a 3-wire connection sees of them.
#[test]
fn the_leads_to_measure_are_the_stated_ones() {
    let list = checklist("specs/cold_store.catena");
    let text = review(&list, "leads", "probe");
    assert!(text.contains("1.50 Ω ± 200 mΩ on one lead"), "{text}");
    assert!(text.contains("a loop of 3.00 Ω"), "{text}");
    assert!(text.contains("3-wire"), "{text}");
}

/// The calibration point and its reference's stated uncertainty.
#[test]
fn the_calibration_reference_is_listed() {
    let list = checklist("specs/cold_store.catena");
    let item = list["chains"][0]["review"]
        .as_array()
        .expect("review items")
        .iter()
        .find(|r| r["kind"] == "calibration")
        .expect("a calibration item");
    let text = item["text"].as_str().expect("text");
    assert!(
        text.contains("offset calibration at 0 degC against a reference good to ± 0.05 K"),
        "{text}"
    );
}

/// The report's section is the checklist, and its verdict lists exactly
/// the faults the checklist finds firmware cannot see, for every demo.
#[test]
fn the_report_renders_the_checklist_model() {
    for spec in common::demo_specs() {
        let spec = spec.strip_prefix(root()).expect("under the root");
        let spec = spec.to_string_lossy();
        let list = checklist(&spec);
        let doc = report(&spec);
        for (chain, listed) in doc["chains"]
            .as_array()
            .expect("chains")
            .iter()
            .zip(list["chains"].as_array().expect("chains"))
        {
            let section = &chain["faults"];
            for key in ["window", "faults", "limits", "alarms"] {
                assert_eq!(section[key], listed[key], "{spec} {key}");
            }
            let hidden: Vec<(String, String)> = listed["faults"]
                .as_array()
                .expect("faults")
                .iter()
                .filter(|f| f["verdict"] == "silent" || f["verdict"] == "undetermined")
                .map(|f| (f["stage"].to_string(), f["fault"].to_string()))
                .collect();
            let verdict: Vec<(String, String)> = chain["verdict"]["faults"]
                .as_array()
                .expect("verdict faults")
                .iter()
                .map(|f| (f["stage"].to_string(), f["fault"].to_string()))
                .collect();
            assert_eq!(hidden, verdict, "{spec}");
            // Its limit rows are the report's own limits.
            for (row, limit) in section["limits"]
                .as_array()
                .expect("limits")
                .iter()
                .zip(chain["limits"].as_array().expect("limits"))
            {
                assert_eq!(row["reach"], limit["reach"], "{spec}");
                assert_eq!(row["headroom"], limit["headroom"], "{spec}");
            }
        }
    }
}

/// A chain with an alarm carries the caution; the faults-and-limits
/// section sits after calibration and before the alarms.
#[test]
fn the_section_order_and_the_caution() {
    let list = checklist("specs/cold_store.catena");
    let cautions = list["chains"][0]["cautions"].to_string();
    assert!(
        cautions.contains("functional-safety standard"),
        "{cautions}"
    );
    let run = catena(
        &root(),
        &[
            "report",
            "specs/cold_store.catena",
            "--format",
            "md",
            "--trials",
            "0",
        ],
        None,
    );
    let md = run.stdout;
    let at = |h: &str| md.find(h).unwrap_or_else(|| panic!("no {h}"));
    assert!(at("### Calibration") < at("### Faults and limits"));
    assert!(at("### Faults and limits") < at("### Alarms and trips"));
    assert!(at("### Alarms and trips") < at("### Cautions"));
}

/// The fault names `FaultKind::name` gives, read from its source (the
/// completion resistors' from their tables), so a kind added there is
/// seen here.
fn declared_fault_names() -> std::collections::BTreeSet<String> {
    let source = std::fs::read_to_string(root().join("src/eval/fault.rs")).expect("fault.rs");
    let body = source
        .split("pub fn name(self)")
        .nth(1)
        .and_then(|s| s.split("pub fn describe").next())
        .expect("FaultKind::name");
    let mut names: std::collections::BTreeSet<String> = body
        .lines()
        .filter_map(|l| l.split("=> \"").nth(1))
        .filter_map(|l| l.split('"').next())
        .map(str::to_string)
        .collect();
    for table in ["COMPLETION_OPEN: [&str; 3]", "COMPLETION_SHORT: [&str; 3]"] {
        let rows = source.split(table).nth(1).expect("a completion table");
        let rows = rows.split("];").next().expect("its end");
        names.extend(rows.split('"').skip(1).step_by(2).map(str::to_string));
    }
    names
}

/// Every fault a stage kind declares shows on the checklist of a demo or
/// of a fault fixture, so each has a row a reviewer has seen rendered.
#[test]
fn every_declared_fault_is_on_some_checklist() {
    let declared = declared_fault_names();
    assert!(declared.len() >= 25, "{declared:?}");
    let mut specs: Vec<String> = Vec::new();
    for dir in ["specs", "tests/fixtures/faults"] {
        let mut found: Vec<String> = std::fs::read_dir(root().join(dir))
            .expect("a folder")
            .filter_map(|e| e.ok()?.file_name().into_string().ok())
            .filter(|n| n.ends_with(".catena"))
            .map(|n| format!("{dir}/{n}"))
            .collect();
        found.sort();
        specs.extend(found);
    }
    let mut seen = std::collections::BTreeSet::new();
    for spec in &specs {
        let run = catena(&root(), &["checklist", spec, "--format", "json"], None);
        let Ok(list) = serde_json::from_str::<Value>(&run.stdout) else {
            continue;
        };
        for chain in list["chains"].as_array().into_iter().flatten() {
            for f in chain["faults"].as_array().into_iter().flatten() {
                seen.insert(f["fault"].as_str().unwrap_or_default().to_string());
            }
        }
    }
    let missing: Vec<&String> = declared.difference(&seen).collect();
    assert!(missing.is_empty(), "no checklist shows {missing:?}");
}

/// A ratio's window is in codes of the ratio: the checklist says what a
/// ratio of one reads (2²³ for the bath's 24-bit bipolar converter) rather
/// than the ratio's code range, and that each channel is checked before
/// the division; a sum says it adds them.
#[test]
fn a_ratio_window_says_it_is_a_ratio() {
    let list = checklist("tests/fixtures/channels/ratio_bath.catena");
    let window = &list["chains"][0]["window"];
    assert_eq!(window["ratio_of_one"].as_i64(), Some(1 << 23), "{window}");
    let md = |spec: &str| {
        let run = catena(&root(), &["checklist", spec], None);
        assert_eq!(run.status, 0, "{}", run.stderr);
        run.stdout
    };
    let ratio = md("tests/fixtures/channels/ratio_bath.catena");
    assert!(
        ratio.contains("codes of the ratio, 8388608 for a ratio of one"),
        "{ratio}"
    );
    assert!(
        ratio.contains("before dividing one by the other"),
        "{ratio}"
    );
    let sum = md("tests/fixtures/channels/sum_cells.catena");
    assert!(sum.contains("before adding them"), "{sum}");
    assert!(sum.contains("codes of the sum"), "{sum}");
    let summed = checklist("tests/fixtures/channels/sum_cells.catena");
    assert!(summed["chains"][0]["window"].get("ratio_of_one").is_none());
}

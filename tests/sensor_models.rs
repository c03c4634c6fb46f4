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

/// One source of a budget point, by id.
fn source<'a>(point: &'a serde_json::Value, id: &str) -> &'a serde_json::Value {
    point["sources"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["id"] == id)
        .unwrap_or_else(|| panic!("no source {id} in {point}"))
}

fn f(v: &serde_json::Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// Slope of a Pt100 at `t` °C, Ω/K: 100 (A + 2 B t), IEC 60751 A and B.
fn pt100_slope(t: f64) -> f64 {
    100.0 * (3.9083e-3 + 2.0 * -5.775e-7 * t)
}

/// A 3-wire RTD sees the difference of two independent leads, each within
/// ±a: a triangular distribution over ±2a (JCGM 100:2008 §4.3.9), standard
/// uncertainty 2a/√6 = √2 · a/√3 (the root sum of squares of the two
/// rectangular leads), not the 2a/√3 of one rectangular source of twice
/// the tolerance.
///
/// Its 95 % coverage interval (JCGM 101:2008, propagation of
/// distributions): for a symmetric triangle of half-width w,
/// P(|X| > x) = (1 − x/w)², so the 95 % half-width is w (1 − √0.05)
/// = 0.7764 w (derived here); one rectangle of half-width w gives 0.95 w,
/// 22 % more. The lead error in kelvin is a / (dR/dT) with the IEC 60751
/// slope at the point.
#[test]
fn three_wire_leads_are_two_independent_sources() {
    let v = budget(
        "three_wire_leads.catena",
        &["--points", "3", "--trials", "100000"],
    );
    let p = &v["points"][1];
    let t = f(&p["measurand"]);
    let a_k = 0.1 / pt100_slope(t);
    let lead_u = |id: &str| f(&source(p, id)["standard_uncertainty"]);
    let leads = lead_u("probe.lead_1").hypot(lead_u("probe.lead_2"));
    let closed = 2.0 * a_k / 6f64.sqrt();
    assert!(
        (leads - closed).abs() < 1e-3 * closed,
        "{leads} vs {closed}"
    );
    // Quantization of a 24-bit converter is the only other source.
    assert!(
        (f(&p["gum_standard"]) - closed).abs() < 1e-3 * closed,
        "{p}"
    );
    let half = (f(&p["monte_carlo_95"][1]) - f(&p["monte_carlo_95"][0])) / 2.0;
    let triangular = 2.0 * a_k * (1.0 - 0.05f64.sqrt());
    assert!(
        (half - triangular).abs() < 0.01 * triangular,
        "{half} vs {triangular}"
    );
    assert!((f(&p["worst_case"]) - 2.0 * a_k).abs() < 1e-3 * a_k, "{p}");
}

/// `catena eval --format json` of a spec in `tests/fixtures/sensors`.
fn eval(spec: &str, at: &str) -> serde_json::Value {
    eval_chain(spec, at, &[])
}

/// [`eval`] with further arguments, such as `--chain`.
fn eval_chain(spec: &str, at: &str, args: &[&str]) -> serde_json::Value {
    let mut all = vec!["eval", spec, "--format", "json", "--at", at];
    all.extend_from_slice(args);
    let run = catena(&dir(), &all, None);
    assert_eq!(run.status, 0, "{}{}", run.stdout, run.stderr);
    serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}", run.stdout))
}

/// Pt100 resistance at `t` °C, t ≥ 0, Ω (IEC 60751 A and B).
fn pt100(t: f64) -> f64 {
    100.0 * (1.0 + 3.9083e-3 * t - 5.775e-7 * t * t)
}

/// A 3-wire Pt100 in a quarter bridge (100 Ω arms, 2.5 V, leads L1 and
/// L2 of 0.5 Ω ± 0.2 Ω) by Kirchhoff: wire 1 is in the element's arm and
/// wire 2 in the next arm, so V = 2.5 (R + L1) / (R + L1 + 100 + L2) − 1.25.
/// At 100 °C (R = 138.5055 Ω) that is 200.964 mV, where a net lead
/// L1 − L2 in the element's arm alone gives 201.806 mV, 0.5 K high. The
/// leads' sensitivities differ off balance: ∂V/∂L1 = 2.5 (100 + L2)/S²
/// and ∂V/∂L2 = −2.5 (R + L1)/S², S the sum of the two arms, against
/// ∂V/∂t = 2.5 (100 + L2)/S² × dR/dt; each lead is rectangular,
/// u = 0.2 Ω/√3.
#[test]
fn a_three_wire_element_in_a_bridge_puts_wire_2_in_the_next_arm() {
    let (l1, l2, r3) = (0.5, 0.5, 100.0);
    let r = pt100(100.0);
    let v = eval_chain(
        "three_wire_bridge.catena",
        "100 degC",
        &["--chain", "leads"],
    );
    let got = f(&v["nodes"]["arms"]["value"]);
    let want = 2.5 * (r + l1) / (r + l1 + r3 + l2) - 1.25;
    assert!((got - want).abs() < 1e-12, "{got} vs {want}");
    let b = budget(
        "three_wire_bridge.catena",
        &["--chain", "leads", "--points", "3", "--trials", "0"],
    );
    let p = &b["points"][2];
    assert_eq!(f(&p["measurand"]), 100.0);
    let s = r + l1 + r3 + l2;
    let per_kelvin = 2.5 * (r3 + l2) / (s * s) * pt100_slope(100.0);
    let u = 0.2 / 3f64.sqrt();
    let lead_u = |id: &str| f(&source(p, id)["standard_uncertainty"]);
    let want_1 = 2.5 * (r3 + l2) / (s * s) * u / per_kelvin;
    let want_2 = 2.5 * (r + l1) / (s * s) * u / per_kelvin;
    for (id, want) in [("probe.lead_1", want_1), ("probe.lead_2", want_2)] {
        let got = lead_u(id);
        assert!((got - want).abs() < 1e-3 * want, "{id}: {got} vs {want}");
    }
}

/// The same bridge self-heats its element by the current through its arm,
/// both leads in that current's path: I = 2.5 V / (R + L1 + 100 Ω + L2),
/// P = I² R, ΔT = P/δ with δ = 2 mW/K, solved here by fixed-point
/// iteration (about 7.5 K at 100 °C).
#[test]
fn a_three_wire_element_in_a_bridge_heats_with_both_leads_in_its_path() {
    let (lead, r3, delta) = (0.5, 100.0, 2e-3);
    let mut t = 100.0;
    for _ in 0..100 {
        let r = pt100(t);
        let i = 2.5 / (r + lead + r3 + lead);
        t = 100.0 + i * i * r / delta;
    }
    let r = pt100(t);
    let want = 2.5 * (r + lead) / (r + lead + r3 + lead) - 1.25;
    let v = eval_chain(
        "three_wire_bridge.catena",
        "100 degC",
        &["--chain", "heated"],
    );
    let got = f(&v["nodes"]["arms"]["value"]);
    assert!((got - want).abs() < 1e-7 * want, "{got} vs {want}");
}

/// A thermistor's self-heating in a divider, by hand: a 10 kΩ NTC
/// (β 3380 K) under 10 kΩ from 3.3 V sits at the divider's balance point at
/// 25 °C, where it dissipates P = V² R / (R + Rs)² = 3.3² / (4 × 10 kΩ)
/// = 272.25 µW (Ohm's and Joule's laws; dP/dR = 0 there, so the few ohms
/// the heating moves R change P by about 1e-5 of itself). With
/// δ = 1.5 mW/K it runs ΔT = P/δ = 0.1815 K warm, so R = R(25.1815 °C)
/// by the β equation and the divider gives 3.3 R / (R + 10 kΩ).
#[test]
fn a_divider_heats_its_thermistor() {
    let v = eval("ntc_divider_heating.catena", "25 degC");
    let (volts, rs, delta) = (3.3, 10e3, 1.5e-3);
    let power: f64 = volts * volts / (4.0 * rs);
    let rise = power / delta;
    assert!((rise - 0.1815).abs() < 1e-12);
    let (t25, beta) = (298.15, 3380.0);
    let r = 10e3 * (beta * (1.0 / (t25 + rise) - 1.0 / t25)).exp();
    let want = volts * r / (r + rs);
    let got = f(&v["nodes"]["div"]["value"]);
    assert!((got - want).abs() < 1e-6 * want, "{got} vs {want}");
    // Unheated it would sit at half the rail, 3.5 mV higher.
    assert!((got - volts / 2.0).abs() > 5e-3, "{got}");
    // The tolerance of the dissipation constant is now an error source: at
    // 20 °C, R = 12.5 kΩ by the β equation, P = V² R / (R + Rs)² and
    // δ (1 − 20 %) heats by ΔT / 0.8, a quarter of ΔT more (to about 1 %:
    // the heated R moves P a little).
    let r20 = 10e3 * (beta * (1.0 / 293.15 - 1.0 / t25)).exp();
    let rise20 = volts * volts * r20 / ((r20 + rs) * (r20 + rs)) / delta;
    let b = budget(
        "ntc_divider_heating.catena",
        &["--points", "3", "--trials", "0"],
    );
    let p = b["points"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| (f(&p["measurand"]) - 20.0).abs() < 1e-9)
        .expect("a point at 20 degC");
    let dissipation = f(&source(p, "ntc.dissipation")["contribution"]);
    let want = rise20 * 0.25;
    assert!(
        (dissipation - want).abs() < 0.01 * want,
        "{dissipation} vs {want}"
    );
}

/// The class sources of an RTD stage at one budget point: their worst-case
/// contributions summed, K.
fn class_contribution(point: &serde_json::Value, stage: &str) -> f64 {
    point["sources"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|s| {
            s["id"]
                .as_str()
                .is_some_and(|id| id.starts_with(&format!("{stage}.class")))
        })
        .map(|s| f(&s["contribution"]))
        .sum()
}

/// IEC 60751:2008 Table 1, class A: ±(0.15 + 0.002 |t|) K. The class is a
/// bound on the deviation an element's R0 and temperature coefficient give,
/// so a two-point calibration at −50 and 100 °C removes nearly all of it
/// (what stays is the curvature of W(t) against the line the calibration
/// draws: about a millikelvin); modelled as the ±(a + b|t|) curve itself,
/// its kink at 0 °C left 0.13 K there. Uncalibrated, the worst case stays
/// within the class limit at every point, equals it at 0 °C and comes
/// within 4 % of it at 100 °C.
#[test]
fn rtd_class_is_r0_and_coefficient_tolerances() {
    let args = ["--points", "7", "--trials", "0"];
    let calibrated = budget("pt100_class_a_calibrated.catena", &args);
    for p in calibrated["points"].as_array().unwrap() {
        let class = class_contribution(p, "probe");
        assert!(class < 2e-3, "{}: {class}", p["measurand"]);
    }
    let raw = budget("pt100_class_a_uncalibrated.catena", &args);
    for p in raw["points"].as_array().unwrap() {
        let t = f(&p["measurand"]);
        let limit = 0.15 + 0.002 * t.abs();
        let class = class_contribution(p, "probe");
        assert!(class <= limit * (1.0 + 1e-6), "{t}: {class} vs {limit}");
        if t == 0.0 {
            assert!((class - limit).abs() < 1e-6 * limit, "{class}");
        }
        if t == 100.0 {
            assert!(class > 0.96 * limit, "{class} vs {limit}");
        }
    }
}

/// A transducer's nonlinearity and hysteresis, worked by hand for a
/// 5000 kg cell stating each as 0.02 % of rated output (1 kg).
/// Nonlinearity is the curve's deviation from a straight line: against the
/// terminal line it is zero at no load and at rated load; against the
/// best-fit (minimax) line it equioscillates, −n at the ends and +n at mid
/// range. The curve is taken as a parabola (our modelling assumption,
/// `physics::transducer`): terminal deviation 4u(1 − u) n, so 0.75 kg at a
/// quarter load; best-fit n (8u(1 − u) − 1), so 0.5 kg there. A two-point
/// calibration at 1000 and 4000 kg (u = 0.2, 0.8, where the bow is 0.64 n)
/// takes out the line through them and leaves 4u(1 − u) − 0.64 of n:
/// −0.64 kg at the ends, 0.11 kg at a quarter, 0.36 kg at mid range.
/// Hysteresis depends on the direction of approach, so no calibration
/// removes it: 1 kg at every load, calibrated or not.
#[test]
fn transducer_nonlinearity_has_a_shape_and_hysteresis_stays() {
    let cases = [
        ("load_cell_terminal.catena", [0.0, 0.75, 1.0, 0.75, 0.0]),
        ("load_cell_best_fit.catena", [1.0, 0.5, 1.0, 0.5, 1.0]),
        (
            "load_cell_calibrated.catena",
            [0.64, 0.11, 0.36, 0.11, 0.64],
        ),
    ];
    for (spec, nonlinearity) in cases {
        let v = budget(spec, &["--points", "5", "--trials", "0"]);
        let points = v["points"].as_array().unwrap();
        assert_eq!(points.len(), 5, "{spec}");
        for (p, want) in points.iter().zip(nonlinearity) {
            let got = f(&source(p, "cell.nonlinearity")["contribution"]);
            assert!(
                (got - want).abs() < 1e-6,
                "{spec} {}: {got}",
                p["measurand"]
            );
            let hysteresis = f(&source(p, "cell.hysteresis")["contribution"]);
            assert!((hysteresis - 1.0).abs() < 1e-6, "{spec}: {hysteresis}");
        }
    }
}

/// A zero balance in `%` or `ppm` is a share of the rated output, as
/// load cell datasheets state it, whether the cell is rated in mV/V
/// (0.05 % of 2 mV/V, 0.001 mV/V) or in volts (500 ppm of 2 V, 1 mV):
/// either way 2.5 kg of the 5000 kg rating at every load. (Read as a
/// ratio of the excitation, 0.05 % would be 0.5 mV/V, 1250 kg.)
#[test]
fn a_zero_in_percent_is_a_share_of_the_rated_output() {
    for spec in [
        "load_cell_zero_share.catena",
        "amplified_cell_zero_share.catena",
    ] {
        let v = budget(spec, &["--points", "5", "--trials", "0"]);
        for p in v["points"].as_array().unwrap() {
            let got = f(&source(p, "cell.zero")["contribution"]);
            assert!((got - 2.5).abs() < 1e-9, "{spec} {}: {got}", p["measurand"]);
        }
    }
}

/// An RTD's self-heating in a quarter bridge, by hand: a Pt100 among three
/// 100 Ω resistors from 1 V is balanced at 0 °C, where its side of the
/// bridge passes 1 V / 200 Ω and it dissipates V² / (4 R) = 2.5 mW; at
/// 5 mW/K it runs ΔT = P/δ = 0.5 K warm, R = 100 (1 + A ΔT + B ΔT²)
/// (IEC 60751 A, B), and the bridge gives V (R / (R + 100 Ω) − 1/2),
/// 0.488 mV where an unheated element gives 0. (The heated R moves P by
/// about 1e-6 of itself: dP/dR = 0 at balance.)
#[test]
fn a_bridge_heats_its_rtd() {
    let v = eval("rtd_quarter_bridge_heating.catena", "0 degC");
    let rise: f64 = 1.0 / (4.0 * 100.0) / 5e-3;
    assert!((rise - 0.5).abs() < 1e-12);
    let r = 100.0 * (1.0 + 3.9083e-3 * rise - 5.775e-7 * rise * rise);
    let want = r / (r + 100.0) - 0.5;
    let got = f(&v["nodes"]["b"]["value"]);
    assert!((got - want).abs() < 1e-5 * want, "{got} vs {want}");
}

/// A quarter bridge's three completion resistors are three parts, each
/// within its own tolerance, not one value shared by all three (which
/// would match the reference half perfectly). Each one's effect, by hand:
/// a relative change δ of any arm moves the output by V δ / 4 at balance,
/// the gauge's strain reads V GF ε / 4, so δ / GF = 1e-4 / 2 = 50 µε each.
/// Three independent rectangles of half-width a = 50 µε: worst case 3a,
/// GUM standard √3 · a/√3 = a (JCGM 100:2008 §4.3.7), and a 95 %
/// half-width of a (3 − 2 ∛0.15) = 1.9373 a from the Irwin–Hall
/// distribution of their sum (CDF 1 − (3 − x)³/6 near its top, for the
/// sum of three U(0, 1); derived here).
#[test]
fn completion_resistors_are_independent_parts() {
    let v = budget(
        "quarter_bridge_completion.catena",
        &["--points", "3", "--trials", "100000"],
    );
    let p = &v["points"][1];
    let a = 50.0;
    for id in ["completion.r_1", "completion.r_2", "completion.r_3"] {
        let c = f(&source(p, id)["contribution"]);
        assert!((c - a).abs() < 1e-3 * a, "{id}: {c}");
    }
    assert!((f(&p["gum_standard"]) - a).abs() < 1e-3 * a, "{p}");
    assert!((f(&p["worst_case"]) - 3.0 * a).abs() < 1e-3 * a, "{p}");
    let half = (f(&p["monte_carlo_95"][1]) - f(&p["monte_carlo_95"][0])) / 2.0;
    let irwin_hall = a * (3.0 - 2.0 * 0.15f64.cbrt());
    assert!(
        (half - irwin_hall).abs() < 0.01 * irwin_hall,
        "{half} vs {irwin_hall}"
    );
}

/// A strain gauge away from the reference temperature: its thermal output
/// reads as strain, whichever side it is on, and its gauge factor
/// drifts. One active gauge in a quarter bridge, 20 K above the 25 degC
/// reference, through the exact inverse (by hand): ± 2 ue/K of thermal
/// output reads ± 2 × 20 = 40 ue at every strain; a gauge factor drift of
/// 100 ppm/K (a share of the gauge factor, as `± 1 %` after it is) makes
/// GF (1 ± 0.002), read as GF, so ε reads ε (1 ± 0.002): 1 ue at 500 ue,
/// 2 ue at 1000 ue. At the reference both are nothing.
#[test]
fn a_gauge_reads_its_temperature_as_strain() {
    let v = budget(
        "gauge_thermal_output.catena",
        &["--points", "3", "--trials", "0"],
    );
    let points = v["points"].as_array().expect("points");
    let at = |measurand: f64, ambient: f64| {
        points
            .iter()
            .find(|p| f(&p["measurand"]) == measurand && f(&p["ambient"]) == ambient)
            .unwrap_or_else(|| panic!("no point {measurand} at {ambient}: {v}"))
    };
    for (strain, drift) in [(0.0, 0.0), (500.0, 1.0), (1000.0, 2.0)] {
        let warm = at(strain, 45.0);
        let c = f(&source(warm, "gauge.thermal_output")["contribution"]);
        assert!((c - 40.0).abs() < 1e-6 * 40.0, "{strain}: {c}");
        let d = f(&source(warm, "gauge.gauge_factor_drift")["contribution"]);
        assert!((d - drift).abs() < 1e-4, "{strain}: {d}");
        let reference = at(strain, 25.0);
        for id in ["gauge.thermal_output", "gauge.gauge_factor_drift"] {
            assert_eq!(f(&source(reference, id)["contribution"]), 0.0, "{id}");
        }
    }
}

/// Gauges of one chain share their gauge factor drift (the grid alloy's):
/// two active gauges of a half bridge, 100 ppm/K each, 20 K above the
/// reference, read ε (1 ± 0.002) together: one source of 2 ue at 1000 ue
/// (by hand), and GUM's standard uncertainty its full 2/√3 ue (with
/// quantization, 0.034 ue, in quadrature), where two independent halves
/// would give 2/√6. Each gauge's own part is nothing.
#[test]
fn gauges_share_their_gauge_factor_drift() {
    let v = budget(
        "gauges_share_their_drift.catena",
        &["--points", "3", "--trials", "0"],
    );
    let p = v["points"]
        .as_array()
        .expect("points")
        .iter()
        .find(|p| f(&p["measurand"]) == 1000.0 && f(&p["ambient"]) == 45.0)
        .expect("the warm top point");
    let shared = source(p, "shared:gauge_factor_drift");
    assert!((f(&shared["contribution"]) - 2.0).abs() < 1e-4, "{shared}");
    assert_eq!(shared["kind"], "drift");
    for id in [
        "front_face.gauge_factor_drift",
        "back_face.gauge_factor_drift",
    ] {
        assert_eq!(f(&source(p, id)["contribution"]), 0.0, "{id}");
    }
    let quantization = f(&source(p, "quantization")["standard_uncertainty"]);
    let want = ((2.0 / 3f64.sqrt()).powi(2) + quantization.powi(2)).sqrt();
    assert!((f(&p["gum_standard"]) - want).abs() < 1e-4, "{p}");
}

/// Gauges of one lot in a tracking group: their thermal outputs (± 2 ue/K
/// each) hold within the group's 0.4 ue/K of each other, so each is a
/// common part of 2 − 0.4/2 = 1.8 ue/K and an own part of 0.2 ue/K
/// (the group model of the language reference). Both active in opposite
/// arms of a half bridge, 20 K above the reference, the reading is the
/// mean of their apparent strains (by hand): the common part 1.8 × 20 =
/// 36 ue, each own part 0.2 × 20 / 2 = 2 ue.
#[test]
fn gauges_of_one_lot_track_their_thermal_output() {
    let v = budget(
        "gauges_track_their_thermal_output.catena",
        &["--points", "3", "--trials", "0"],
    );
    for p in v["points"].as_array().expect("points") {
        if f(&p["ambient"]) != 45.0 {
            continue;
        }
        let common = f(&source(p, "track:lot:drift")["contribution"]);
        assert!((common - 36.0).abs() < 1e-4, "{common}");
        for id in ["front_face.thermal_output", "back_face.thermal_output"] {
            let own = f(&source(p, id)["contribution"]);
            assert!((own - 2.0).abs() < 1e-4, "{id}: {own}");
        }
    }
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

/// Tolerances on custom Callendar–Van Dusen coefficients (IEC 60751 form)
/// are three sources. With A off by δ the element at t reads the t_r
/// where the nominal curve A t_r + B t_r² + C (t_r − 100) t_r³ equals the
/// deviated one, (A + δ) t + B t² + C (t − 100) t³ (the C terms below
/// 0 °C only), solved here by bisection for each side; the budget's
/// contribution is the larger of the two. The same for B (absolute
/// ± 2e-8) and C (± 5 %, no effect above 0 °C).
#[test]
fn custom_rtd_coefficients_with_tolerances() {
    let (a, b, c) = (3.9083e-3, -5.775e-7, -4.183e-12);
    let ratio = |t: f64, a: f64, b: f64, c: f64| {
        a * t
            + b * t * t
            + if t < 0.0 {
                c * (t - 100.0) * t.powi(3)
            } else {
                0.0
            }
    };
    let read = |target: f64| {
        let (mut lo, mut hi) = (-250.0f64, 900.0f64);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if ratio(mid, a, b, c) < target {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        0.5 * (lo + hi)
    };
    let v = budget("custom_rtd_coefficients.catena", &["--trials", "0"]);
    let deviations = [
        ("probe.coefficient_a", [a * 1e-3, 0.0, 0.0]),
        ("probe.coefficient_b", [0.0, 2e-8, 0.0]),
        ("probe.coefficient_c", [0.0, 0.0, c.abs() * 0.05]),
    ];
    for point in v["points"].as_array().expect("points") {
        let t = f(&point["measurand"]);
        for (id, d) in deviations {
            let side = |s: f64| {
                let actual = ratio(t, a + s * d[0], b + s * d[1], c + s * d[2]);
                (read(actual) - t).abs()
            };
            let expected = side(1.0).max(side(-1.0));
            let got = f(&source(point, id)["contribution"]);
            assert!(
                (got - expected).abs() < 2e-6,
                "{id} at {t} degC: {got} K against {expected} K"
            );
        }
    }
}

/// A couple's loop (`lead`, 20 Ω ± 5 Ω) carries the burnout current of
/// the in-amp reading it (2 µA) in the healthy chain too, so the input
/// sits I × (20 Ω ∥ 1 MΩ) above the EMF (Ohm's law; the bias resistor
/// runs from the positive input to the bias point, shunted by the
/// loop). The chain without the current reads that much × the gain of
/// 50 lower. Off its nominal, the loop moves the input by up to
/// 2 µA × 5 Ω = 10 µV: a rectangular source one fifth of the amplifier's
/// 50 µV offset, in kelvin as in volts.
#[test]
fn a_burnout_current_flows_round_a_healthy_couple_loop() {
    let at = |chain: &str| {
        let v = eval_chain("couple_loop.catena", "400 degC", &["--chain", chain]);
        f(&v["nodes"]["front"]["value"])
    };
    let (current, gain) = (2e-6, 50.0);
    let rs = 20.0 * 1e6 / (20.0 + 1e6);
    let shift = at("burnout") - at("quiet");
    let want = gain * current * rs;
    assert!((shift - want).abs() < 1e-9 * want, "{shift} vs {want}");
    let b = budget(
        "couple_loop.catena",
        &["--chain", "burnout", "--points", "3", "--trials", "0"],
    );
    for p in b["points"].as_array().unwrap() {
        let u = |id: &str| f(&source(p, id)["standard_uncertainty"]);
        let ratio = u("tc.lead") / u("front.offset");
        // d(rs)/d(loop) = (1 MΩ / (1 MΩ + 20 Ω))², 4e-5 short of one.
        let want = current * 5.0 / 50e-6 * (1e6 / (1e6 + 20.0f64)).powi(2);
        assert!((ratio - want).abs() < 1e-3 * want, "{ratio} vs {want}");
    }
}

/// A converter's burnout current flows out through a healthy divider's
/// source resistance as well: a 10 kΩ NTC under 10 kΩ from 2.5 V gives
/// 1.25 V from 5 kΩ at 25 °C, and 1 µA raises the pin by 5 mV, so a
/// 24-bit converter on the same 2.5 V reads (1.255 / 2.5) × 2²⁴.
#[test]
fn a_converters_burnout_current_flows_through_a_healthy_divider() {
    let v = eval("divider_burnout.catena", "25 degC");
    let want = (1.255f64 / 2.5 * 2f64.powi(24)).round();
    assert_eq!(f(&v["code"]), want, "{v}");
}

/// A resistor from the converter's pin to a voltage divides with the
/// source (Thévenin): a 10 kΩ NTC under 10 kΩ from 2.5 V gives 1.25 V
/// from 5 kΩ at 25 °C, so 1 MΩ to 0 V leaves 1.25 V × 1 MΩ / 1.005 MΩ at
/// the pin, and 1 MΩ to 2.5 V lifts it by 1.25 V × 5 kΩ / 1.005 MΩ; a
/// 24-bit converter on the same 2.5 V reads those over 2.5 V × 2²⁴. With
/// the pin cut off the resistor alone holds it: code 0 with the pull-down,
/// the top code with the pull-up, so `check` finds the alarm unmasked.
#[test]
fn a_pull_resistor_divides_with_the_source_and_holds_an_open_pin() {
    let full = 2f64.powi(24);
    let down = eval("divider_pull.catena", "25 degC");
    let want = (1.25 * 1e6 / 1.005e6 / 2.5 * full).round();
    assert_eq!(f(&down["code"]), want, "{down}");
    let up = eval("divider_pull_up.catena", "25 degC");
    let want = ((1.25 + 1.25 * 5e3 / 1.005e6) / 2.5 * full).round();
    assert_eq!(f(&up["code"]), want, "{up}");
    for (spec, code) in [
        ("divider_pull.catena", 0.0),
        ("divider_pull_up.catena", full - 1.0),
    ] {
        let run = catena(&dir(), &["checklist", spec, "--format", "json"], None);
        assert_eq!(run.status, 0, "{}{}", run.stdout, run.stderr);
        let v: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
        let faults = v["chains"][0]["faults"].as_array().unwrap();
        let pin = faults
            .iter()
            .find(|x| x["stage"] == "conv" && x["fault"] == "input_open")
            .unwrap_or_else(|| panic!("{spec}: {v}"));
        assert_eq!(pin["verdict"], "detectable", "{spec}: {pin}");
        let codes = pin["codes"].as_array().unwrap_or_else(|| panic!("{pin}"));
        // Within 2 ppm of full scale: the model's open circuit is a
        // finite resistance (10¹² Ω), which the 1 MΩ divides with.
        assert!(
            codes.iter().all(|c| (f(c) - code).abs() <= 2e-6 * full),
            "{spec}: {pin}"
        );
    }
}

/// On a differential input the resistor pulls the positive pin, not the
/// difference: a 350 Ω load cell on 5 V has its outputs at 2.5 V behind
/// 175 Ω each, so 1 MΩ to 0 V moves the positive one by
/// −2.5 V × 175 / 1 000 175 at no load, and a gain of 100 gives that
/// times 100 (Thévenin).
#[test]
fn a_pull_resistor_on_a_differential_input_pulls_its_positive_pin() {
    let v = eval("load_cell_pull.catena", "0 kg");
    let got = f(&v["nodes"]["front"]["value"]);
    let want = -2.5 * 175.0 / 1_000_175.0 * 100.0;
    assert!((got - want).abs() < 1e-12, "{got} vs {want}");
}

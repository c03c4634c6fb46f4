//! Several channels on one converter (`channel_of`): the converter's own
//! error sources are one source for every channel, each channel's rate is
//! the converter's over the channels it scans.
//!
//! The fixtures (`tests/fixtures/channels/`) read a type K couple and its
//! cold-junction thermistor against one 2.5 V reference, either on two
//! channels of one converter (`couple_pair`) or on two converters of the
//! same part (`couple_two_converters`). A converter error acts on both
//! codes: on the couple's directly, and on the cold junction's through the
//! correction the firmware adds. On one converter both act with the same
//! draw, so the source's effect is the signed sum of what it does through
//! each channel; on two converters each is a source of its own. To first
//! order (the chain is linear in a converter's gain error and offset over
//! their small limits), Δ_shared = Δ_couple + Δ_junction, where the two
//! converters' separate effects are Δ_couple and Δ_junction (closed form
//! of superposition, derived here).

mod common;

use common::{catena, root};
use serde_json::Value;

fn run(args: &[&str]) -> Value {
    let dir = root().join("tests/fixtures/channels");
    let run = catena(&dir, args, None);
    assert_eq!(run.status, 0, "{}{}", run.stdout, run.stderr);
    serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}", run.stdout))
}

fn budget(spec: &str) -> Value {
    run(&[
        "budget", spec, "--format", "json", "--points", "3", "--trials", "2000",
    ])
}

/// How far source `id` moves the reading at point `k` (its limit effect).
fn contribution(budget: &Value, k: usize, id: &str) -> f64 {
    let sources = budget["points"][k]["sources"].as_array().unwrap();
    let s = sources
        .iter()
        .find(|s| s["id"] == id)
        .unwrap_or_else(|| panic!("no source {id} at point {k}"));
    s["contribution"].as_f64().unwrap()
}

fn ids(budget: &Value) -> Vec<String> {
    budget["points"][0]["sources"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["id"].as_str().unwrap().to_string())
        .collect()
}

/// On one converter the gain error and the offset are one source each,
/// under the converter's name; the channel keeps only its own gain.
#[test]
fn a_channel_shares_its_converters_sources() {
    let pair = ids(&budget("couple_pair.catena"));
    for shared in ["conv.gain_error", "conv.offset"] {
        assert!(pair.iter().any(|i| i == shared), "{shared} in {pair:?}");
    }
    assert!(
        !pair.iter().any(|i| i.starts_with("cj_in.")),
        "the channel has no source of its own but its exact gain: {pair:?}"
    );
    let two = ids(&budget("couple_two_converters.catena"));
    for own in ["cj_conv.gain_error", "cj_conv.offset"] {
        assert!(two.iter().any(|i| i == own), "{own} in {two:?}");
    }
}

/// One draw on both channels: the shared source moves the reading by the
/// sum of what the two converters' sources do separately. At the top of
/// the range the couple's and the junction's effects have opposite signs
/// (a gain error reads both the couple's EMF and the junction's divider
/// high, and the two enter the reading with opposite signs there), so the
/// shared effect is their difference in magnitude; a sum of magnitudes,
/// or of squares, would be wrong. The closed form is checked at every
/// point as |Δ_couple ∓ Δ_junction|, whichever sign the point has.
#[test]
fn a_shared_source_is_one_draw_on_every_channel() {
    let pair = budget("couple_pair.catena");
    let two = budget("couple_two_converters.catena");
    let top = pair["points"].as_array().unwrap().len() - 1;
    let (s, a, b) = (
        contribution(&pair, top, "conv.gain_error"),
        contribution(&two, top, "conv.gain_error"),
        contribution(&two, top, "cj_conv.gain_error"),
    );
    assert!((s - (a - b)).abs() <= 2e-3 * a, "{s} against {a} − {b}");
    for k in 0..pair["points"].as_array().unwrap().len() {
        for (shared, couple, junction) in [
            ("conv.gain_error", "conv.gain_error", "cj_conv.gain_error"),
            ("conv.offset", "conv.offset", "cj_conv.offset"),
        ] {
            let s = contribution(&pair, k, shared);
            let (a, b) = (
                contribution(&two, k, couple),
                contribution(&two, k, junction),
            );
            // Magnitudes only in the JSON: the sign is the one that fits,
            // and the other must not.
            let (minus, plus) = ((a - b).abs(), a + b);
            let near = |x: f64| (s - x).abs() <= 2e-3 * a.max(1e-6);
            assert!(
                near(minus) || near(plus),
                "point {k}, {shared}: {s} against |{a} ∓ {b}|"
            );
            if b > 1e-3 * a {
                assert!(!(near(minus) && near(plus)), "point {k}: both fit");
            }
        }
    }
}

/// Two channels: each one's rate is half the converter's 20 Hz, the
/// conversion itself (its sinc notch and noise bandwidth) stays at 20 Hz.
#[test]
fn each_channel_gets_its_share_of_the_rate() {
    let report = run(&[
        "report",
        "couple_pair.catena",
        "--format",
        "json",
        "--trials",
        "100",
    ]);
    let chain = &report["chains"][0];
    assert_eq!(chain["dynamics"]["rate_hz"], 10.0, "{}", chain["dynamics"]);
    assert_eq!(chain["dynamics"]["notch_hz"], 20.0);
    assert_eq!(
        chain["noise"]["enbw_hz"], 10.0,
        "rate / 2 of the conversion"
    );
    let alone = run(&[
        "report",
        "couple_two_converters.catena",
        "--format",
        "json",
        "--trials",
        "100",
    ]);
    let chain = &alone["chains"][0];
    assert_eq!(chain["dynamics"]["rate_hz"], 20.0);
    assert_eq!(chain["noise"]["enbw_hz"], 10.0);
}

/// The Pt100 of `ratio_rtd.catena` is read as the ratio of its channel's
/// code to the reference resistor's, both on one converter: the code
/// ratio is R_t / R_ref whatever the current, the converter's reference
/// or its gain error, so those three sources move the reading by nothing
/// (to rounding, 1e-9 K here). What remains is R_ref's ± 0.1 %: the
/// firmware takes R_t = ratio × 100 Ω, so R_ref = 100 Ω (1 ± δ) reads
/// R_t / (1 ± δ), and the error is T(R_t / (1 ± δ)) − T(R_t) through the
/// IEC 60751 curve (t ≥ 0: R = R0 (1 + A t + B t²)). One rectangular
/// source of half-width a gives GUM u = a / √3 (a to first order: R_t δ
/// over the curve's slope R0 (A + 2 B t)) and a Monte Carlo 95 %
/// interval from δ at ∓ 0.95 of its limit (closed forms). Read on one channel against the
/// converter's ± 1 % reference instead (`one_channel_rtd.catena`), the
/// reference and the current each move it by about 1 % of R_t: 3.7 K at
/// 100 °C.
#[test]
fn a_ratio_of_two_channels_cancels_the_shared_reference() {
    let (a, b) = (3.9083e-3, -5.775e-7);
    let t_of = |r: f64| (-a + (a * a - 4.0 * b * (1.0 - r / 100.0)).sqrt()) / (2.0 * b);
    let ratio = run(&[
        "budget",
        "ratio_rtd.catena",
        "--format",
        "json",
        "--points",
        "3",
        "--trials",
        "200000",
    ]);
    let one = budget("one_channel_rtd.catena");
    for k in 0..3 {
        let p = &ratio["points"][k];
        let t = p["measurand"].as_f64().unwrap();
        let r_t = 100.0 * (1.0 + a * t + b * t * t);
        let delta = 1e-3;
        let closed = (t_of(r_t / (1.0 - delta)) - t)
            .abs()
            .max((t_of(r_t / (1.0 + delta)) - t).abs());
        let got = contribution(&ratio, k, "rref.r");
        assert!(
            (got - closed).abs() <= 1e-4 * closed,
            "{t} degC: rref.r {got} against {closed}"
        );
        for cancelled in ["conv.vref", "drive.current", "conv.gain_error"] {
            let c = contribution(&ratio, k, cancelled);
            assert!(c < 1e-9, "{t} degC: {cancelled} moves the ratio by {c}");
            let alone = contribution(&one, k, cancelled);
            let floor = if cancelled == "conv.gain_error" {
                0.1
            } else {
                2.5
            };
            assert!(alone > floor, "{t} degC: one channel, {cancelled} {alone}");
        }
        // GUM: the one rectangular source through the curve's slope
        // (first order, JCGM 100:2008 §5.1.2), and quantization.
        let q = p["sources"]
            .as_array()
            .unwrap()
            .iter()
            .find(|s| s["id"] == "quantization")
            .map(|s| s["standard_uncertainty"].as_f64().unwrap())
            .unwrap_or(0.0);
        let slope = 100.0 * (a + 2.0 * b * t);
        let linear = r_t * delta / slope;
        let u = (linear * linear / 3.0 + q * q).sqrt();
        let gum = p["gum_standard"].as_f64().unwrap();
        assert!(
            (gum - u).abs() <= 1e-3 * u,
            "{t} degC: GUM {gum} against {u}"
        );
        // Monte Carlo: the ends of a rectangle's probabilistically
        // symmetric 95 % interval, δ at ∓ 0.95 of its limit through the
        // curve, within its numerical width and the quantization's share.
        let mc = &p["monte_carlo_95"];
        let width = p["monte_carlo_numerical"].as_f64().unwrap() + 3.0 * q;
        let ends = [
            t_of(r_t / (1.0 + 0.95 * delta)) - t,
            t_of(r_t / (1.0 - 0.95 * delta)) - t,
        ];
        for (k, want) in ends.into_iter().enumerate() {
            let end = mc[k].as_f64().unwrap();
            assert!(
                (end - want).abs() <= width,
                "{t} degC: Monte Carlo end {end} against {want}"
            );
        }
    }
}

/// Three cells summed (`sum_cells.catena`): each cell's ± 0.1 %
/// sensitivity acts on its third of the load, m a / 3 = 0.4 kg at
/// 1200 kg, independently; the converter's ± 0.01 % gain error acts on
/// all three codes at once, m a = 0.12 kg as one source (three
/// independent ones would be 0.04 kg each); the supply, which is the
/// reference, cancels. Worst case 3 × 0.4 + 0.12 kg plus quantization;
/// GUM u = √(3 (0.4/√3)² + (0.12/√3)²) = 0.40596 kg with quantization;
/// Monte Carlo's 95 % interval of the sum of the four rectangles,
/// from their convolution on a fine grid (closed forms, derived here).
#[test]
fn summed_cells_are_independent_and_their_converter_shared() {
    let v = run(&[
        "budget",
        "sum_cells.catena",
        "--format",
        "json",
        "--points",
        "3",
        "--trials",
        "200000",
    ]);
    let p = &v["points"][2];
    assert_eq!(p["measurand"], 1200.0);
    for cell in ["cell_a", "cell_b", "cell_c"] {
        let c = contribution(&v, 2, &format!("{cell}.sensitivity"));
        assert!((c - 0.4).abs() < 1e-9, "{cell}: {c}");
    }
    let g = contribution(&v, 2, "conv.gain_error");
    assert!((g - 0.12).abs() < 1e-9, "gain error {g}");
    assert!(contribution(&v, 2, "supply.voltage") < 1e-9);
    let q = contribution(&v, 2, "quantization");
    let worst = p["worst_case"].as_f64().unwrap();
    assert!((worst - (1.32 + q)).abs() < 1e-9, "worst case {worst}");
    let u = (3.0 * 0.4f64.powi(2) / 3.0 + 0.12f64.powi(2) / 3.0 + q * q / 3.0).sqrt();
    let gum = p["gum_standard"].as_f64().unwrap();
    assert!((gum - u).abs() <= 1e-4 * u, "GUM {gum} against {u}");
    let end = rectangles_95(&[0.4, 0.4, 0.4, 0.12]);
    let width = p["monte_carlo_numerical"].as_f64().unwrap() + q;
    let mc = &p["monte_carlo_95"];
    for e in [mc[0].as_f64().unwrap(), mc[1].as_f64().unwrap()] {
        assert!(
            (e.abs() - end).abs() <= width,
            "Monte Carlo end {e} against ± {end}"
        );
    }
}

/// The symmetric 95 % half-width of a sum of independent rectangles of
/// these half-widths: their densities convolved on a grid.
fn rectangles_95(halves: &[f64]) -> f64 {
    let step = 1e-4;
    let mut density = vec![1.0];
    for &h in halves {
        let n = (2.0 * h / step).round() as usize + 1;
        let mut next = vec![0.0; density.len() + n - 1];
        for (i, d) in density.iter().enumerate() {
            for x in &mut next[i..i + n] {
                *x += d / n as f64;
            }
        }
        density = next;
    }
    let total: f64 = density.iter().sum();
    let mid = (density.len() - 1) / 2;
    let mut inside = density[mid];
    let mut k = 0;
    while inside < 0.95 * total {
        k += 1;
        inside += density[mid - k] + density[mid + k];
    }
    k as f64 * step
}

/// The feed silo (`specs/feed_silo.catena`) adds four cells' codes, each
/// read on its own channel of one 24-bit converter (PGA 128, ratiometric
/// on the 5 V supply), each cell carrying a quarter of 300 .. 1800 kg
/// gross on a 2 mV/V, 500 kg cell. By hand:
/// - one channel at the empty silo reads 75/500 × 2 mV/V × 128 × 2²³ =
///   322 122.5 codes, inside its own window and a quarter of the sum's;
/// - its noise is the converter's 0.4 µV rms × 128 / 5 V × 2²³ = 85.90
///   codes (the cell's own thermal noise, a few nV over the 5 Hz noise
///   bandwidth, adds under 1e-4 of it), and the four channels' add in
///   quadrature in the sum (× 2);
/// - a cell's excitation lead open leaves its bridge at 0 V: its own code
///   is the 100 nA burnout current through the cell's 175 Ω output
///   resistance, 100 nA × 175 Ω × 128 / 5 V × 2²³ = 3758.1 codes, moved
///   by the converter's offset, bias current and INL (5 µV and 1 nA ×
///   175 Ω × 128 / 5 V × 2²³ + 15 ppm × 2²⁴ = 1363.0) and by what scales
///   the shift (the cell's ± 1 %, the 5 V supply's ± 0.2 % as the
///   reference, the gain error's ± 0.01 %): far below its window, while
///   the sum of the three others stays inside the sum's window; so it is
///   seen on that channel, with the threshold halfway;
/// - its signal lead open is driven by the 100 nA burnout current to the
///   top code, 2²³ − 1, and the sum is that plus the three healthy
///   channels at their lowest (each its window's low end plus 3 σ).
#[test]
fn a_summed_cell_failing_is_judged_on_its_own_channel() {
    let dir = root().join("specs");
    let out = catena(
        &dir,
        &["checklist", "feed_silo.catena", "--format", "json"],
        None,
    );
    assert_eq!(out.status, 0, "{}{}", out.stdout, out.stderr);
    let v: Value = serde_json::from_str(&out.stdout).expect("JSON");
    let chain = &v["chains"][0];
    let w = &chain["window"];
    let (low, high) = (w["low"].as_i64().unwrap(), w["high"].as_i64().unwrap());
    let sigma = 0.4e-6 * 128.0 / 5.0 * 2f64.powi(23);
    let empty = 75.0 / 500.0 * 2e-3 * 128.0 * 2f64.powi(23);
    let channels = w["channels"].as_array().unwrap();
    assert_eq!(channels.len(), 4, "{w}");
    let own = |name: &str| {
        channels
            .iter()
            .find(|c| c["channel"] == name)
            .unwrap_or_else(|| panic!("no window for {name}: {w}"))
    };
    for c in channels {
        let s = c["noise_sigma_codes"].as_f64().unwrap();
        assert!((s - sigma).abs() < 1e-4 * sigma, "{c}");
        let (lo, hi) = (c["low"].as_i64().unwrap(), c["high"].as_i64().unwrap());
        assert!((lo as f64) < empty && empty < hi as f64, "{c}");
    }
    let sum_sigma = w["noise_sigma_codes"].as_f64().unwrap();
    assert!((sum_sigma - 2.0 * sigma).abs() < 2e-4 * sigma, "{w}");
    assert!((low as f64) < 4.0 * empty && 4.0 * empty < high as f64);
    let fault = |stage: &str, kind: &str| {
        chain["faults"]
            .as_array()
            .unwrap()
            .iter()
            .find(|f| f["stage"] == stage && f["fault"] == kind)
            .unwrap_or_else(|| panic!("no {kind} on {stage}"))
            .clone()
    };
    let lead = fault("leg_2", "excitation_lead_open");
    // The burnout current through the cell's half-bridge (350 Ω / 2);
    // the converter's offset, its 1 nA input bias current through the
    // same and its INL, each at its limit; and what scales the shift.
    let per_volt = 128.0 / 5.0 * 2f64.powi(23);
    let shift = 100e-9 * 175.0 * per_volt;
    let moved = (5e-6 + 1e-9 * 175.0) * per_volt + 15e-6 * 2f64.powi(24);
    let down = shift * (0.01 + (1.0 - 1.0 / 1.002) + 1e-4);
    let up = shift * (0.01 + (1.0 / 0.998 - 1.0) + 1e-4);
    let (lead_low, lead_high) = (shift - moved - down, shift + moved + up);
    let lead_high = lead_high.round() as i64;
    assert_eq!(lead["verdict"], "detectable", "{lead}");
    assert_eq!(lead["channel"], "leg_2_in", "{lead}");
    let codes = serde_json::json!([lead_low.round() as i64, lead_high]);
    assert_eq!(lead["codes"], codes, "{lead}");
    let own_low = own("leg_2_in")["low"].as_i64().unwrap();
    let threshold = lead_high + (own_low - lead_high).div_euclid(2);
    assert_eq!(lead["threshold"], format!("leg_2_in code < {threshold}"));
    let signal = fault("leg_2", "signal_lead_open");
    assert_eq!(signal["verdict"], "detectable", "{signal}");
    let top = 2i64.pow(23) - 1;
    let others = 3.0 * (own_low as f64 + 3.0 * sigma);
    let lowest = signal["codes"][0].as_i64().unwrap();
    assert!(
        (lowest as f64 - (top as f64 + others)).abs() <= 3.0,
        "{signal}: {lowest} against {top} + {others}"
    );
}

/// A channel's own `burnout` (`sum_cells.catena` with 100 nA on
/// `cell_b_in` alone): an open signal lead of cell b is driven by it to
/// the top code, 2²³ − 1, which the sum adds to the two other channels'
/// codes, so it is seen above the sum's window with the threshold
/// halfway; cell c's channel has no current of its own nor its
/// converter's, so its open lead stays undetermined, and the help names
/// that channel.
#[test]
fn a_channel_states_its_own_burnout() {
    let spec = std::fs::read_to_string(root().join("tests/fixtures/channels/sum_cells.catena"))
        .expect("the fixture");
    let own = spec.replacen(
        "channel_of conv\n",
        "channel_of conv\n        burnout 100 nA\n",
        1,
    );
    assert_ne!(own, spec);
    let dir = common::temp_dir("channels", "burnout");
    std::fs::write(dir.join("sum_cells.catena"), own).expect("written");
    let out = catena(
        &dir,
        &["checklist", "sum_cells.catena", "--format", "json"],
        None,
    );
    assert_eq!(out.status, 0, "{}{}", out.stdout, out.stderr);
    let v: Value = serde_json::from_str(&out.stdout).expect("JSON");
    let chain = &v["chains"][0];
    let fault = |stage: &str| {
        chain["faults"]
            .as_array()
            .unwrap()
            .iter()
            .find(|f| f["stage"] == stage && f["fault"] == "signal_lead_open")
            .unwrap_or_else(|| panic!("no signal lead open on {stage}"))
            .clone()
    };
    let b = fault("cell_b");
    let top = 2i64.pow(23) - 1;
    assert_eq!(b["verdict"], "detectable", "{b}");
    assert_eq!(b["codes"][0].as_i64(), Some(top), "{b}");
    let high = chain["window"]["high"].as_i64().unwrap();
    let threshold = high + (top - high).div_euclid(2);
    assert_eq!(b["threshold"], format!("code > {threshold}"), "{b}");
    let c = fault("cell_c");
    assert_eq!(c["verdict"], "undetermined", "{c}");
    let action = c["action"].as_str().unwrap();
    assert!(action.contains("on `cell_c_in` (`burnout`"), "{action}");
}

/// The ratio chain's window is in the code the firmware computes, the
/// ratio of the Pt100's code to the reference resistor's times 2²³
/// (`ratio_rtd.catena`, no noise stated): R_t / R_ref × 2²³, whatever
/// the current, the reference and the gain error. By hand, with the
/// IEC 60751 curve: lowest at 0 °C with R_ref at + 0.1 %,
/// 100 / 100.1 × 2²³ = 8 380 227.8; highest at 200 °C with R_ref at
/// − 0.1 %, 175.856 / 99.9 × 2²³. The converter's reference lost sends
/// both channels to the top code, 2²³ − 1, so the ratio reads exactly
/// 2²³ (R_t = R_ref, about 0 °C), inside the ratio's window; but the
/// firmware checks each channel's own code before it divides, and the
/// Pt100's channel at the top code is far above its own window (at most
/// R_t × 1 mA × 8 / 2.5 V × 2²³ ≈ 0.57 × 2²³ with the tolerances), so it
/// is seen there, with the threshold halfway. The reference resistor's
/// channel at its top code leaves the ratio at the Pt100's own code,
/// below the ratio's window: seen on the ratio itself.
#[test]
fn a_ratio_chain_is_judged_in_the_ratio_it_converts() {
    let (a, b) = (3.9083e-3, -5.775e-7);
    let full = 2f64.powi(23);
    let r_top = 100.0 * (1.0 + a * 200.0 + b * 200.0 * 200.0);
    let out = catena(
        &root().join("tests/fixtures/channels"),
        &["checklist", "ratio_rtd.catena", "--format", "json"],
        None,
    );
    assert_eq!(out.status, 0, "{}{}", out.stdout, out.stderr);
    let v: Value = serde_json::from_str(&out.stdout).expect("JSON");
    let chain = &v["chains"][0];
    let w = &chain["window"];
    let low = (100.0 / 100.1 * full).round() as i64;
    let high = (r_top / 99.9 * full).round() as i64;
    assert_eq!(w["low"].as_i64(), Some(low), "{w}");
    assert_eq!(w["high"].as_i64(), Some(high), "{w}");
    let fault = |stage: &str, kind: &str| {
        chain["faults"]
            .as_array()
            .unwrap()
            .iter()
            .find(|f| f["stage"] == stage && f["fault"] == kind)
            .unwrap_or_else(|| panic!("no {kind} on {stage}"))
            .clone()
    };
    let lost = fault("conv", "reference_lost");
    assert_eq!(lost["verdict"], "detectable", "{lost}");
    assert_eq!(lost["channel"], "conv", "{lost}");
    let top_code = (1i64 << 23) - 1;
    assert_eq!(lost["codes"], serde_json::json!([top_code, top_code]));
    let own = w["channels"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["channel"] == "conv")
        .expect("the Pt100 channel's own window");
    let own_high = own["high"].as_i64().unwrap();
    let over = own_high + (top_code - own_high).div_euclid(2);
    assert_eq!(lost["threshold"], format!("conv code > {over}"), "{lost}");
    let top = fault("rref_in", "over_range");
    assert_eq!(top["verdict"], "detectable", "{top}");
    let most = top["codes"][1].as_i64().unwrap();
    let own = r_top * 1e-3 * 8.0 / 2.5 * full;
    assert!(
        (most as f64 - own).abs() < 0.03 * own,
        "{top}: against {own}"
    );
    let threshold = most + (low - most).div_euclid(2);
    assert_eq!(top["threshold"], format!("code < {threshold}"), "{top}");
}

/// Shares that do not make a whole (M270): `sum_cells.catena`'s three
/// cells at 33.333 % each make one within the 0.1 % allowance; with
/// cell c's `share` left out it carries all of the load, the set adds to
/// 33.333 + 33.333 + 100 = 166.666 %, and the share that completes it is
/// 100 − 66.666 = 33.334 %.
#[test]
fn summed_shares_make_a_whole() {
    let dir = root().join("tests/fixtures/channels");
    let check = |text: &str| {
        let out = catena(
            &dir,
            &[
                "check",
                "-",
                "--stdin-filename",
                "sum_cells.catena",
                "--format",
                "json",
            ],
            Some(text.as_bytes()),
        );
        let v: Value = serde_json::from_str(&out.stdout).expect("JSON");
        v["findings"]
            .as_array()
            .unwrap()
            .iter()
            .filter(|f| f["code"] == "M270")
            .cloned()
            .collect::<Vec<_>>()
    };
    let spec = std::fs::read_to_string(dir.join("sum_cells.catena")).expect("the fixture");
    assert!(check(&spec).is_empty());
    let last = spec.rfind("        share 33.333 %\n").expect("a share");
    let mut without = spec.clone();
    without.replace_range(last..last + "        share 33.333 %\n".len(), "");
    let found = check(&without);
    assert_eq!(found.len(), 1, "{found:?}");
    assert!(
        found[0]["message"].as_str().unwrap().contains("166.67 %"),
        "{}",
        found[0]
    );
    let help = found[0]["help"].as_str().unwrap();
    assert!(
        help.contains("`cell_c` with `share 33.334 %` completes them"),
        "{help}"
    );
}

/// An explicit scan (`couple_scan.catena`: `scan conv, conv, cj_in` on a
/// 20 Hz converter): the couple's channel gets two of every three
/// conversions, 20 × 2 / 3 = 13.33 Hz, where an even split of two
/// channels gives 10 Hz (`couple_pair.catena`); the conversion itself,
/// its notch and its noise bandwidth, stays at 20 Hz.
#[test]
fn a_scan_sets_each_channels_rate() {
    let report = run(&[
        "report",
        "couple_scan.catena",
        "--format",
        "json",
        "--trials",
        "100",
    ]);
    let d = &report["chains"][0]["dynamics"];
    let rate = d["rate_hz"].as_f64().unwrap();
    assert!((rate - 20.0 * 2.0 / 3.0).abs() < 1e-12, "{d}");
    assert_eq!(d["notch_hz"], 20.0);
    assert_eq!(report["chains"][0]["noise"]["enbw_hz"], 10.0);
}

/// The bath as a board would be built (`ratio_bath.catena`): a 400 Ω
/// reference resistor above the Pt100's largest resistance, a stated
/// compliance and a burnout current on each channel. It checks clean with
/// warnings denied: every fault is seen, some only on one channel's own
/// code, which firmware checks before it divides. The current lost leaves
/// both channels at 0 V, a ratio of nothing over nothing, and is seen as
/// the Pt100 channel's own code below its window.
#[test]
fn a_ratio_bath_built_as_a_board_checks_clean() {
    let dir = root().join("tests/fixtures/channels");
    let out = catena(
        &dir,
        &["check", "--deny", "warnings", "ratio_bath.catena"],
        None,
    );
    assert_eq!(out.status, 0, "{}{}", out.stdout, out.stderr);
    let v = run(&["checklist", "ratio_bath.catena", "--format", "json"]);
    let chain = &v["chains"][0];
    let lost = chain["faults"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["stage"] == "drive")
        .expect("the excitation's fault")
        .clone();
    assert_eq!(lost["verdict"], "detectable", "{lost}");
    assert_eq!(lost["channel"], "conv", "{lost}");
    assert_eq!(chain["window"]["channels"].as_array().unwrap().len(), 2);
}

//! Tracking groups (`track`): a divider of matched resistors, by worst
//! case, GUM and Monte Carlo, against closed forms, beside the same
//! divider unmatched.
//!
//! The fixtures (`tests/fixtures/budget/*matched_divider*.catena`) read an
//! exact 10 mV/K sensor (0 V at 0 °C) on a converter whose reference is
//! V_ref = 5 V · R_low / (R_low + R_high), two 10 kΩ resistors of ± 0.1 %
//! (a = 1e-3). The firmware converts with the nominal 2.5 V, so the
//! reading is T · V_ref,nom / V_ref and, with δ_low and δ_high the
//! resistors' relative deviations, its error at T (in °C) is to first
//! order −T (δ_low − δ_high) / 2: at 100 °C a sensitivity of ∓50 K per
//! unit deviation. Only the difference δ_low − δ_high acts.
//!
//! Unmatched, δ_low and δ_high are independent rectangulars of half-width
//! a, so δ_low − δ_high is triangular on ± 2a: worst case 50 · 2a =
//! 0.1 K; GUM u = 50 √(2 a²/3) = 0.040825 K; the 95 % interval of a
//! triangle of half-width w = 0.1 K is ± w (1 − √0.05) = ± 0.077639 K.
//!
//! Matched with a ratio tolerance r = 2e-4, the model is
//! δ_i = (a − r/2) C + (r/2) E_i with C, E_i independent on [−1, 1]: the
//! common C cancels in the ratio exactly, and δ_low − δ_high = (r/2)
//! (E_low − E_high) is triangular on ± r. Worst case 50 r = 0.01 K; GUM,
//! by JCGM 100:2008 eq. 13 with c = ∓50 K, u²(δ_i) = ((a − r/2)² +
//! (r/2)²)/3 and u(δ_low, δ_high) = (a − r/2)²/3:
//! u² = 2 · 50² (u²(δ_i) − u(δ_low, δ_high)) = 2 · 50² (r/2)²/3, so
//! u = 50 (r/2) √(2/3) = 0.0040825 K; the 95 % interval ± 0.01 (1 − √0.05)
//! = ± 0.0077639 K. The ratio tolerance, not the absolute ones, sets it.
//!
//! With drifts of 25 ppm/K tracking within t = 2 ppm/K, at 65 °C ambient
//! (ΔT = 40 K from the 25 °C reference) each resistor's own drift part is
//! ± t ΔT / 2 = ± 4e-5 besides its own tolerance part ± r/2 = ± 1e-4:
//! worst case 50 (r + t ΔT) = 0.014 K, GUM u = 50 √(2/3) √((r/2)² +
//! (t ΔT/2)²) = 0.0043970 K (closed forms, derived here).

mod common;

use common::{catena, root};

fn budget(spec: &str) -> serde_json::Value {
    let dir = root().join("tests/fixtures/budget");
    let run = catena(
        &dir,
        &[
            "budget", spec, "--format", "json", "--points", "2", "--trials", "200000",
        ],
        None,
    );
    assert_eq!(run.status, 0, "{}{}", run.stdout, run.stderr);
    serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}", run.stdout))
}

fn f(v: &serde_json::Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// The point at `measurand` (°C) and `ambient` (°C).
fn point(v: &serde_json::Value, measurand: f64, ambient: f64) -> &serde_json::Value {
    v["points"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| f(&p["measurand"]) == measurand && f(&p["ambient"]) == ambient)
        .unwrap_or_else(|| panic!("no point {measurand}, {ambient}"))
}

fn close(what: &str, got: f64, want: f64, tolerance: f64) {
    assert!(
        (got - want).abs() <= tolerance,
        "{what}: {got} against {want} (± {tolerance})"
    );
}

/// The 95 % half-width of the Monte Carlo interval.
fn half_width(p: &serde_json::Value) -> f64 {
    (f(&p["monte_carlo_95"][1]) - f(&p["monte_carlo_95"][0])) / 2.0
}

const A: f64 = 1e-3;
const R: f64 = 2e-4;

#[test]
fn matched_divider_error_is_the_ratio_tolerance() {
    let v = budget("matched_divider.catena");
    let p = point(&v, 100.0, 25.0);
    // 1e-4 relative covers the first-order model's neglected a² terms.
    close(
        "worst case",
        f(&p["worst_case"]),
        50.0 * R,
        1e-4 * 0.01 + 2e-5,
    );
    let u = 50.0 * R / 2.0 * (2.0f64 / 3.0).sqrt();
    close("GUM u", f(&p["gum_standard"]), u, 1e-3 * u);
    // 200 000 trials put the ends within about 0.5 % of the interval.
    let mc = 50.0 * R * (1.0 - 0.05f64.sqrt());
    close("Monte Carlo 95 %", half_width(p), mc, 0.01 * mc);
    // The common part moves both arms alike and cancels in the ratio.
    let common = p["sources"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["id"] == "track:pair")
        .expect("the group is a source");
    assert_eq!(common["kind"], "tracking");
    assert!(f(&common["contribution"]).abs() < 1e-9, "{common}");
}

#[test]
fn unmatched_divider_combines_the_absolute_tolerances() {
    let v = budget("unmatched_divider.catena");
    let p = point(&v, 100.0, 25.0);
    close("worst case", f(&p["worst_case"]), 50.0 * 2.0 * A, 2e-4);
    let u = 50.0 * (2.0 * A * A / 3.0).sqrt();
    close("GUM u", f(&p["gum_standard"]), u, 1e-3 * u);
    let mc = 100.0 * A * (1.0 - 0.05f64.sqrt());
    close("Monte Carlo 95 %", half_width(p), mc, 0.01 * mc);
}

#[test]
fn matched_drifts_move_the_ratio_by_the_tracking_drift() {
    let v = budget("matched_divider_drift.catena");
    let p = point(&v, 100.0, 65.0);
    let drift = 2e-6 * 40.0;
    close("worst case", f(&p["worst_case"]), 50.0 * (R + drift), 2e-5);
    let u = 50.0 * (2.0f64 / 3.0).sqrt() * ((R / 2.0).powi(2) + (drift / 2.0).powi(2)).sqrt();
    close("GUM u", f(&p["gum_standard"]), u, 1e-3 * u);
    // Monte Carlo lies between the two triangles' and the normal's ends.
    let mc = half_width(p);
    assert!(mc > 1.9 * u && mc < 1.96 * u, "{mc} against u = {u}");
    // At the reference the drifts do nothing: the tolerance alone.
    let at_reference = point(&v, 100.0, 25.0);
    let tolerance_only = 50.0 * R / 2.0 * (2.0f64 / 3.0).sqrt();
    close(
        "GUM u at 25 °C",
        f(&at_reference["gum_standard"]),
        tolerance_only,
        1e-3 * tolerance_only,
    );
}

/// The group's common draw is a stream of its own, keyed by the group's
/// name: the points at the reference ambient, where drifts are zero,
/// draw the same as the fixture without drifts, trial for trial.
#[test]
fn a_tracking_group_keeps_other_draws() {
    let plain = budget("matched_divider.catena");
    let drifting = budget("matched_divider_drift.catena");
    assert_eq!(
        point(&plain, 100.0, 25.0)["monte_carlo_95"],
        point(&drifting, 100.0, 25.0)["monte_carlo_95"]
    );
}

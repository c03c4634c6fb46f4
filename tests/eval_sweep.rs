//! With every tolerance at its nominal value and the electronics at the
//! reference temperature, each demo chain's reading equals the measurand:
//! the evaluator and the firmware's exact inverse agree to 1e-6 of the
//! span at every point of a fine sweep. Approximate conversions (linear,
//! table, poly) are swept with `method exact` substituted, since their own
//! error is a budget source, not an evaluator error.

mod common;

use catena::check::{check_bytes, CheckedFile};
use catena::eval::{lower, Env, TableUse};
use catena::model::PartsCache;

const POINTS: usize = 1001;

fn with_exact_conversion(text: &str) -> String {
    text.lines()
        .map(|l| match l.find("method ") {
            Some(at) => {
                let end = l[at..].find(" }").map(|e| at + e).unwrap_or(l.len());
                format!("{}method exact{}", &l[..at], &l[end..])
            }
            None => l.to_string(),
        })
        .collect::<Vec<_>>()
        .join("\n")
}

/// A demo spec's text (possibly edited), checked from the demo folder.
fn check_demo(path: &std::path::Path, text: &[u8]) -> CheckedFile {
    let base = common::root().join("specs");
    check_bytes(
        &path.to_string_lossy(),
        text,
        &base,
        &mut PartsCache::default(),
    )
}

#[test]
fn every_demo_chain_reads_its_measurand() {
    let mut chains = 0;
    for path in common::demo_specs() {
        let text = with_exact_conversion(&std::fs::read_to_string(&path).unwrap());
        let checked = check_demo(&path, text.as_bytes());
        assert!(
            !checked.findings.has_errors(),
            "{}: {:?}",
            path.display(),
            checked.findings
        );
        for chain in &checked.chains {
            let plan = lower(chain).unwrap_or_else(|e| panic!("{}: {e}", chain.name));
            let (lo, hi) = plan.range;
            let span = hi - lo;
            let mut worst: f64 = 0.0;
            for k in 0..POINTS {
                let m = lo + span * k as f64 / (POINTS - 1) as f64;
                let env = Env {
                    measurand: m,
                    ambient: plan.reference,
                    cold_junction: plan.reference,
                };
                let r = plan
                    .unquantized_reading(&plan.nominal, &env)
                    .unwrap_or_else(|e| panic!("{} at {m}: {e}", chain.name));
                worst = worst.max((r - m).abs() / span);
            }
            assert!(
                worst <= 1e-6,
                "{}: worst error {worst:e} of span",
                chain.name
            );
            chains += 1;
        }
    }
    assert!(chains >= 9, "every demo chain is swept ({chains})");
}

/// The quantized reading stays within the converter's resolution: one
/// code either side (one per summed channel), referred to the measurand
/// by the chain's slope.
/// (Chains with a cold-junction conversion also carry that converter's
/// quantization, so they are left to the budget.)
#[test]
fn quantized_readings_stay_within_a_code() {
    for path in common::demo_specs() {
        let text = with_exact_conversion(&std::fs::read_to_string(&path).unwrap());
        let checked = check_demo(&path, text.as_bytes());
        for chain in &checked.chains {
            let plan = lower(chain).unwrap();
            let conversions = plan
                .nodes
                .iter()
                .filter(|n| matches!(n, catena::eval::Node::Convert(_)))
                .count();
            if conversions > 1 {
                continue;
            }
            let (lo, hi) = plan.range;
            let env = |m| Env {
                measurand: m,
                ambient: plan.reference,
                cold_junction: plan.reference,
            };
            for k in 1..100 {
                let m = lo + (hi - lo) * k as f64 / 100.0;
                let h = (hi - lo) * 1e-4;
                let slope = (plan
                    .exact_code(&plan.nominal, &env(m + h), plan.adc)
                    .unwrap()
                    - plan
                        .exact_code(&plan.nominal, &env(m - h), plan.adc)
                        .unwrap())
                    / (2.0 * h);
                let r = plan.reading(&plan.nominal, &env(m)).unwrap();
                // Summed channels round each of their codes.
                let codes = plan.summed_codes() as f64;
                assert!(
                    (r - m).abs() <= codes / slope.abs(),
                    "{} at {m}: {r}",
                    chain.name
                );
            }
        }
    }
}

/// A thermocouple chain's exact inverse shifts its table by the cold
/// junction's EMF (the law of intermediate temperatures) and reads the
/// temperature from an EMF table, instead of solving the chain each time. With the junction away from the table's,
/// it must give what the general solver gives.
#[test]
fn the_junction_shifted_inverse_matches_the_general_solver() {
    let base = common::root().join("specs");
    let path = base.join("bakery_oven.catena");
    let checked = check_demo(&path, &std::fs::read(&path).unwrap());
    let chain = checked
        .chains
        .iter()
        .find(|c| c.name == "oven_zone")
        .unwrap();
    let shifted = lower(chain).unwrap();
    let mut general = shifted.clone();
    let mut tables = 0;
    for node in &mut general.nodes {
        if let catena::eval::Node::Convert(catena::eval::node::Convert { conversion, .. }) = node {
            if let Some(table) = &mut conversion.inverse {
                if matches!(table.stands_for, TableUse::Junction { .. }) {
                    table.stands_for = TableUse::Start;
                    tables += 1;
                }
            }
        }
    }
    assert_eq!(tables, 1, "the main conversion uses the shifted table");
    let (lo, hi) = shifted.range;
    let mut worst: f64 = 0.0;
    for ambient_c in [10.0, 18.0, 40.0] {
        for k in 0..=40 {
            let env = Env {
                measurand: lo + (hi - lo) * k as f64 / 40.0,
                ambient: ambient_c + 273.15,
                cold_junction: ambient_c + 273.15,
            };
            let a = shifted.unquantized_reading(&shifted.nominal, &env).unwrap();
            let b = general.unquantized_reading(&general.nominal, &env).unwrap();
            worst = worst.max((a - b).abs());
        }
    }
    // The tables' interpolation sets the scale: 6e-10 K when measured,
    // and far inside what the sweep above allows.
    assert!(worst < 1e-8, "worst difference {worst:e} K");
}

//! Parse + check (+ eval at a sampled point, + a short Monte Carlo through
//! the lane evaluator) of arbitrary bytes: nothing may panic, hang or
//! produce a non-finite reading.
//!
//! cargo fuzz run --fuzz-dir tests/fuzz check tests/fuzz/corpus/check

#![no_main]

use catena::analysis::{budget, report};
use catena::check::check_bytes;
use catena::eval::{lower, Env};
use catena::model::PartsCache;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let checked = check_bytes(
        "fuzz.catena",
        data,
        std::path::Path::new("specs"),
        &mut PartsCache::default(),
    );
    if checked.findings.has_errors() {
        return;
    }
    for chain in &checked.chains {
        let Ok(plan) = lower(chain) else { continue };
        // A point chosen by the input itself, inside the measurand range.
        let fraction = f64::from(data.iter().fold(0u8, |a, b| a.wrapping_add(*b))) / 255.0;
        let m = plan.range.0 + fraction * (plan.range.1 - plan.range.0);
        let env = Env {
            measurand: m,
            ambient: chain.reference,
            cold_junction: chain.reference,
        };
        if let Ok(r) = plan.reading(&plan.nominal, &env) {
            assert!(r.is_finite(), "a reading is never NaN or infinite");
        }
        // Two full lanes and a remainder at each of a few points.
        let options = report::Options {
            budget: budget::Options {
                points: 2,
                ..budget::Options::default()
            },
            trials: Some(19),
            ..report::Options::default()
        };
        if let Ok(analysis) = report::analyse(chain, &plan, &options) {
            for i in analysis.monte_carlo.iter().flatten() {
                assert!(i.low.is_finite() && i.high.is_finite() && i.numerical.is_finite());
            }
        }
    }
});

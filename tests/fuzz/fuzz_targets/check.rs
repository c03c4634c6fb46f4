//! Parse + check (+ eval at a sampled point, + a short Monte Carlo through
//! the lane evaluator) of arbitrary bytes, the findings rendered for people
//! and for tools, the text formatted and written through the atomic
//! writer: nothing may panic, hang or produce a non-finite number that
//! the soundness check lets through.
//!
//! The input is split at the first line `%%parts` (if any): what follows
//! is written as `parts.yaml` beside the spec, so `use "parts.yaml"` in the
//! first half reaches a fuzzed parts file.
//!
//! cargo fuzz run --fuzz-dir tests/fuzz check tests/fuzz/corpus/check -- \
//!     -max_len=65536 -dict=tests/fuzz/catena.dict

#![no_main]

use std::path::PathBuf;
use std::sync::OnceLock;

use catena::analysis::{budget, report, soundness};
use catena::check::check_bytes;
use catena::diagnostics::{render_human, render_json};
use catena::emit::write_atomic;
use catena::eval::{lower, Env};
use catena::model::PartsCache;
use catena::syntax::format::format_source;
use libfuzzer_sys::fuzz_target;

const SPLIT: &[u8] = b"\n%%parts\n";

/// A folder of this process's own, made once.
fn scratch() -> &'static PathBuf {
    static DIR: OnceLock<PathBuf> = OnceLock::new();
    DIR.get_or_init(|| {
        let dir = std::env::temp_dir().join(format!("catena-fuzz-{}", std::process::id()));
        std::fs::create_dir_all(dir.join(".git")).expect("scratch folder");
        dir
    })
}

fn split(data: &[u8]) -> (&[u8], &[u8]) {
    match data.windows(SPLIT.len()).position(|w| w == SPLIT) {
        Some(i) => (&data[..i], &data[i + SPLIT.len()..]),
        None => (data, b""),
    }
}

fuzz_target!(|data: &[u8]| {
    let dir = scratch();
    let (spec, parts) = split(data);
    std::fs::write(dir.join("parts.yaml"), parts).expect("parts file written");
    let checked = check_bytes("fuzz.catena", spec, dir, &mut PartsCache::default());
    let sorted = checked.findings.clone().sorted();
    let human = render_human(&sorted, false, 80);
    let json = render_json(&sorted);
    assert!(is_json_object(&json), "render_json writes one document");
    assert!(human.is_empty() == sorted.is_empty());
    if let Some(file) = &checked.file {
        if !checked.findings.has_errors() {
            let text = format_source(file.text());
            write_atomic(&dir.join("out.catena"), text.as_bytes()).expect("atomic write");
        }
    }
    if checked.findings.has_errors() {
        return;
    }
    for chain in &checked.chains {
        analyse(chain, data);
    }
});

fn is_json_object(text: &str) -> bool {
    text.starts_with('{') && text.trim_end().ends_with('}')
}

fn analyse(chain: &catena::model::Chain, data: &[u8]) {
    let Ok(plan) = lower(chain) else { return };
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
        if !soundness::non_finite(chain, &analysis).is_empty() {
            return;
        }
        for i in analysis.monte_carlo.iter().flatten() {
            assert!(i.low.is_finite() && i.high.is_finite() && i.numerical.is_finite());
        }
        for p in &analysis.budget.points {
            assert!(p.gum_expanded.is_finite() && p.worst_case.is_finite());
        }
        let _ = soundness::nonlinear(chain, &analysis);
    }
}

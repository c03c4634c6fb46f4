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

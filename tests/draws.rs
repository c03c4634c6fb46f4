//! Stable draws: each source's draws depend on the seed, its id and the
//! trial alone, so an edit elsewhere in a spec leaves
//! them bit-identical; and the normals they are drawn through.

mod common;

use catena::analysis::draws::inverse_normal_cdf;
use catena::check::check_bytes;
use catena::eval::{lower, SourceKind};
use catena::model::PartsCache;
use common::{catena, demo_specs, root};

fn budget(spec: &str) -> serde_json::Value {
    budget_at(spec, "5")
}

/// `budget` of `spec` at `points` points, 4 000 trials each.
fn budget_at(spec: &str, points: &str) -> serde_json::Value {
    let dir = root().join("tests/fixtures/budget");
    let args = [
        "budget", spec, "--format", "json", "--points", points, "--trials", "4000",
    ];
    let run = catena(&dir, &args, None);
    assert_eq!(run.status, 0, "{}{}", run.stdout, run.stderr);
    serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}", run.stdout))
}

/// Each point's (measurand, ambient) and its Monte Carlo interval with its
/// numerical width, as printed.
fn intervals(v: &serde_json::Value) -> Vec<(String, String)> {
    v["points"]
        .as_array()
        .expect("points")
        .iter()
        .map(|p| {
            let at = format!("{} at {}", p["measurand"], p["ambient"]);
            let mc = format!("{} ± {}", p["monte_carlo_95"], p["monte_carlo_numerical"]);
            (at, mc)
        })
        .collect()
}

/// A drift added to the converter's reference changes nothing at the
/// reference ambient, where it acts over 0 K: there every other source
/// must draw what it drew before, so the intervals are the same to the
/// last printed digit; at the other ambients the drift widens them.
#[test]
fn adding_a_source_leaves_the_other_draws_alone() {
    let before = intervals(&budget("stable_draws.catena"));
    let after = intervals(&budget("stable_draws_added.catena"));
    assert_eq!(before.len(), after.len());
    let (mut same, mut moved) = (0, 0);
    for ((at, old), (at_after, new)) in before.iter().zip(&after) {
        assert_eq!(at, at_after);
        if at.ends_with(" at 25.0") {
            assert_eq!(old, new, "{at}");
            same += 1;
        } else if old != new {
            moved += 1;
        }
    }
    assert_eq!(same, 5, "{before:?}");
    assert_eq!(moved, 10, "the drift acts away from the reference");
}

/// A point keeps its draws, its reading's noise and quantization
/// included, whatever other points a budget asks for: the points of a
/// three-point budget (the range's ends and middle) read as they do in
/// a five-point one.
#[test]
fn a_point_keeps_its_draws_whatever_the_other_points() {
    let at_points = |points: &str| intervals(&budget_at("stable_draws.catena", points));
    let (three, five) = (at_points("3"), at_points("5"));
    let shared: Vec<_> = three.iter().filter(|p| five.contains(p)).collect();
    assert_eq!(shared.len(), three.len(), "{three:?}\n{five:?}");
    assert!(three.iter().all(|(_, mc)| !mc.starts_with("[0.0, 0.0]")));
}

/// Stating the stages and parameters in another order draws the same.
#[test]
fn reordering_a_spec_draws_the_same() {
    assert_eq!(
        intervals(&budget("stable_draws.catena")),
        intervals(&budget("stable_draws_reordered.catena"))
    );
}

/// Wichura's AS 241 against SciPy's `norm.ppf` (SciPy 1.17.1, committed
/// fixture written by `tests/reference/normal.py`), from p = 1e-300 to
/// 1 − 1e-16 through all three of its regions.
#[test]
fn inverse_normal_cdf_matches_scipy() {
    let csv = std::fs::read_to_string(root().join("tests/reference/fixtures/normal_quantiles.csv"))
        .expect("fixture");
    let mut checked = 0;
    for line in csv.lines().skip(1) {
        let (p, x) = line.split_once(',').expect("two columns");
        let (p, x): (f64, f64) = (p.parse().unwrap(), x.parse().unwrap());
        let got = inverse_normal_cdf(p);
        let error = (got - x).abs() / x.abs().max(1.0);
        assert!(error < 1e-14, "p = {p}: {got} against {x}");
        checked += 1;
    }
    assert!(checked > 300, "the fixture holds {checked} quantiles");
}

/// A source's id names its stream, so two sources with one id would draw
/// the same values: fully correlated where they should be independent.
#[test]
fn every_demo_source_has_its_own_id() {
    for path in demo_specs() {
        let text = std::fs::read(&path).expect("demo spec");
        let base = root().join("specs");
        let name = path.to_string_lossy();
        let checked = check_bytes(&name, &text, &base, &mut PartsCache::default());
        for chain in &checked.chains {
            let plan = lower(chain).unwrap_or_else(|e| panic!("{}: {e}", chain.name));
            let mut ids: Vec<&str> = plan
                .slots
                .iter()
                .filter(|s| s.kind != SourceKind::Exact)
                .map(|s| s.id.as_str())
                .collect();
            let count = ids.len();
            ids.sort_unstable();
            ids.dedup();
            assert_eq!(ids.len(), count, "{}: {ids:?}", chain.name);
            assert!(count > 3, "{}", chain.name);
        }
    }
}

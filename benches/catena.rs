//! Speed of the main paths, on the demo specs. Run with `cargo bench`; the
//! figures and the machine they were taken on are in the README.

use std::path::Path;

use catena::analysis::budget::{self, Options as BudgetOptions};
use catena::analysis::monte_carlo::{interval, intervals, sample, Condition};
use catena::analysis::report::{analyse, Options, DEFAULT_TRIALS};
use catena::check::check_bytes;
use catena::eval::{lower, Env};
use catena::model::PartsCache;

fn main() {
    divan::main();
}

/// Monte Carlo with `trials` at each of the first `points` budget points,
/// as `analyse` runs it.
fn monte_carlo_over_points(
    plan: &catena::eval::Plan,
    b: &budget::Budget,
    points: usize,
    trials: usize,
) -> f64 {
    let points = &b.points[..points.min(b.points.len())];
    let conditions = Condition::of_points(points);
    intervals(plan, &conditions, &b.noise, trials, 1, &|_, _| {})
        .expect("runs")
        .iter()
        .map(|i| i.high)
        .sum()
}

fn spec(name: &str) -> Vec<u8> {
    std::fs::read(
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("specs")
            .join(name),
    )
    .expect("demo spec")
}

fn specs_dir() -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("specs")
}

/// `check` of one demo spec, in process: parse, resolve, evaluate the
/// corners, range envelopes, GUM budget and verdicts.
#[divan::bench(args = ["cold_store.catena", "bakery_oven.catena", "weighing_hopper.catena"])]
fn check_one_spec(bencher: divan::Bencher, name: &str) {
    let bytes = spec(name);
    bencher.bench(|| {
        check_bytes(name, &bytes, &specs_dir(), &mut PartsCache::default())
            .findings
            .len()
    });
}

/// `check` of a tree of 1,000 specs: the five demos, each 200 times, on
/// every core as the command line does.
#[divan::bench(sample_count = 5)]
fn check_thousand_specs(bencher: divan::Bencher) {
    let names = [
        "cold_store.catena",
        "bakery_oven.catena",
        "battery_pack.catena",
        "greenhouse_soil.catena",
        "weighing_hopper.catena",
    ];
    let texts: Vec<(String, Vec<u8>)> = names.iter().map(|n| (n.to_string(), spec(n))).collect();
    let dir = specs_dir();
    // As `catena check` does: files on every core, one parts cache each.
    bencher.bench(|| {
        use rayon::prelude::*;
        (0..1000usize)
            .into_par_iter()
            .map_init(PartsCache::default, |parts, k| {
                let (name, bytes) = &texts[k % texts.len()];
                check_bytes(name, bytes, &dir, parts).findings.len()
            })
            .sum::<usize>()
    });
}

/// 10^5 Monte Carlo trials at one point of the largest demo chain (the
/// oven zone: a thermocouple, its cold-junction channel and two converters).
#[divan::bench(sample_count = 5)]
fn monte_carlo_1e5_largest_chain(bencher: divan::Bencher) {
    let checked = check_bytes(
        "bakery_oven.catena",
        &spec("bakery_oven.catena"),
        &specs_dir(),
        &mut PartsCache::default(),
    );
    let chain = checked
        .chains
        .iter()
        .find(|c| c.name == "oven_zone")
        .expect("the oven zone");
    let plan = lower(chain).expect("lowers");
    let b = budget::budget(
        chain,
        &plan,
        &BudgetOptions {
            points: 3,
            ..BudgetOptions::default()
        },
    )
    .expect("budget");
    let p = &b.points[1];
    let env = Env {
        measurand: p.measurand,
        ambient: p.ambient,
        cold_junction: p.ambient,
    };
    bencher.bench(|| interval(&plan, &env, &b.noise, p.code_step(), 100_000, 1).expect("runs"));
}

/// 10^6 trials at each of 21 points (the first ambient's) of a demo chain:
/// the cold store (a calibrated RTD: two runs a trial) and the oven zone
/// (the largest chain: eight stages, two converters, a thermocouple).
#[divan::bench(sample_count = 3, sample_size = 1, args = ["cold_store.catena:cold_store", "bakery_oven.catena:oven_zone"])]
fn monte_carlo_1e6_x_21(bencher: divan::Bencher, which: &str) {
    let (file, name) = which.split_once(':').expect("file:chain");
    let checked = check_bytes(file, &spec(file), &specs_dir(), &mut PartsCache::default());
    let chain = checked
        .chains
        .iter()
        .find(|c| c.name == name)
        .expect("the chain");
    let plan = lower(chain).expect("lowers");
    let b = budget::budget(chain, &plan, &BudgetOptions::default()).expect("budget");
    bencher.bench(|| monte_carlo_over_points(&plan, &b, 21, 1_000_000));
}

/// `budget` of every demo spec as the command runs it by default: 21
/// points at each ambient, the default trials per point, and the detail
/// (range envelopes, signal path, calibration, alarms) it prints.
#[divan::bench(sample_count = 5, sample_size = 1, args = ["cold_store.catena", "bakery_oven.catena", "battery_pack.catena", "greenhouse_soil.catena", "weighing_hopper.catena"])]
fn budget_default(bencher: divan::Bencher, name: &str) {
    let checked = check_bytes(name, &spec(name), &specs_dir(), &mut PartsCache::default());
    let plans: Vec<_> = checked
        .chains
        .iter()
        .map(|c| (c, lower(c).expect("lowers")))
        .collect();
    let options = Options {
        trials: Some(DEFAULT_TRIALS),
        detail: true,
        ..Options::default()
    };
    bencher.bench(|| {
        plans
            .iter()
            .map(|(c, p)| analyse(c, p, &options).expect("analyses").verdicts.len())
            .sum::<usize>()
    });
}

/// The Monte Carlo of each demo spec as `catena budget` runs it by
/// default: every chain, 21 points at each ambient, 10 000 trials a point,
/// each source's variance share. Run on one thread
/// (`RAYON_NUM_THREADS=1 cargo bench --bench catena -- monte_carlo_each_demo`)
/// the time over chains × points × trials is the CPU per trial and point.
#[divan::bench(sample_count = 5, sample_size = 1, args = DEMOS)]
fn monte_carlo_each_demo(bencher: divan::Bencher, name: &str) {
    let checked = check_bytes(name, &spec(name), &specs_dir(), &mut PartsCache::default());
    let runs: Vec<_> = checked
        .chains
        .iter()
        .map(|c| {
            let plan = lower(c).expect("lowers");
            let b = budget::budget(c, &plan, &BudgetOptions::default()).expect("budget");
            (plan, Condition::of_points(&b.points), b.noise)
        })
        .collect();
    let trial_points: usize = runs.iter().map(|(_, c, _)| c.len() * DEFAULT_TRIALS).sum();
    bencher
        .counter(divan::counter::ItemsCount::new(trial_points))
        .bench(|| {
            runs.iter()
                .map(|(plan, conditions, noise)| {
                    let seed = catena::analysis::report::DEFAULT_SEED;
                    sample(
                        plan,
                        conditions,
                        noise,
                        DEFAULT_TRIALS,
                        seed,
                        true,
                        &|_, _| {},
                    )
                    .expect("runs")
                    .len()
                })
                .sum::<usize>()
        });
}

/// Every demo spec.
const DEMOS: [&str; 9] = [
    "bakery_oven.catena",
    "battery_pack.catena",
    "cold_store.catena",
    "creamery.catena",
    "feed_silo.catena",
    "greenhouse_soil.catena",
    "pottery_kiln.catena",
    "timber_hoist.catena",
    "weighing_hopper.catena",
];

/// The chain `benches/numpy_mc.py` implements in vectorised NumPy, for the
/// ratio in the README: 10^6 trials at each of 21 points.
#[divan::bench(sample_count = 3, sample_size = 1)]
fn monte_carlo_gum_rtd_1e6_x_21(bencher: divan::Bencher) {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/budget");
    let bytes = std::fs::read(dir.join("gum_rtd.catena")).expect("fixture");
    let checked = check_bytes("gum_rtd.catena", &bytes, &dir, &mut PartsCache::default());
    let chain = &checked.chains[0];
    let plan = lower(chain).expect("lowers");
    let b = budget::budget(chain, &plan, &BudgetOptions::default()).expect("budget");
    bencher.bench(|| monte_carlo_over_points(&plan, &b, 21, 1_000_000));
}

#[path = "../tests/common/worst.rs"]
mod worst;

/// `check` of generated worst cases at two sizes each: the time per input
/// byte stays flat when every phase is linear.
#[divan::bench(sample_count = 3, sample_size = 1, args = [5_000, 20_000])]
fn worst_case_stages(n: usize) -> usize {
    check_text(&worst::many_stages(n))
}

#[divan::bench(sample_count = 3, sample_size = 1, args = [2_500, 10_000])]
fn worst_case_chains_rendered(n: usize) -> usize {
    let checked = check_bytes(
        "w.catena",
        worst::many_chains(n).as_bytes(),
        Path::new("."),
        &mut PartsCache::default(),
    );
    let all = checked.findings.sorted();
    catena::diagnostics::render_human(&all, false, 100).len()
}

#[divan::bench(sample_count = 3, sample_size = 1, args = [50_000, 200_000])]
fn worst_case_braces(n: usize) -> usize {
    check_text(&worst::braces(n))
}

fn check_text(text: &str) -> usize {
    check_bytes(
        "w.catena",
        text.as_bytes(),
        Path::new("."),
        &mut PartsCache::default(),
    )
    .findings
    .len()
}

//! One pass: a report starts from what the check computed (its plan and
//! the analysis its verdicts came from) and must come out as a fresh
//! analysis would, to the bit, whatever the two were asked.

mod common;

use std::path::Path;

use catena::analysis::budget;
use catena::analysis::report::{analyse, analyse_reusing, Options};
use catena::analysis::{CheckOptions, Keep};
use catena::check::{check_bytes_with, CheckedFile};
use catena::eval::lower;
use catena::model::PartsCache;

const TRIALS: usize = 200;

fn checked(spec: &Path, options: &CheckOptions) -> CheckedFile {
    let bytes = std::fs::read(spec).expect("the spec reads");
    let base = spec.parent().expect("a spec has a folder");
    let name = spec.to_string_lossy();
    check_bytes_with(&name, &bytes, base, &mut PartsCache::default(), options)
}

/// Specs whose chains have requirements, so the check analyses them.
fn specs() -> Vec<std::path::PathBuf> {
    let mut specs = common::demo_specs();
    for name in ["gum_rtd", "calibrated_offset", "matched_divider"] {
        specs.push(common::root().join(format!("tests/fixtures/budget/{name}.catena")));
    }
    specs
}

fn report_options(points: usize, trials: Option<usize>, seed: u64) -> Options {
    Options {
        budget: budget::Options {
            points,
            ..budget::Options::default()
        },
        trials,
        seed,
        detail: true,
    }
}

/// Each report the check's analysis is asked to become: the same options
/// (everything reused), other Monte Carlo draws, no Monte Carlo, other
/// points (nothing reused).
fn asked() -> Vec<Options> {
    vec![
        report_options(21, Some(TRIALS), 1),
        report_options(21, Some(TRIALS / 2), 1),
        report_options(21, Some(TRIALS), 7),
        report_options(21, None, 1),
        report_options(5, Some(TRIALS), 1),
    ]
}

#[test]
fn a_report_from_the_checks_analysis_is_the_fresh_one() {
    let options = CheckOptions {
        monte_carlo: true,
        trials: TRIALS,
        keep: Keep::Reports,
        ..CheckOptions::default()
    };
    let mut reused = 0;
    for spec in specs() {
        let checked = checked(&spec, &options);
        assert!(checked.resolved, "{} resolves", spec.display());
        assert_eq!(checked.analysed.len(), checked.chains.len());
        for chain in &checked.chains {
            let Some(earlier) = checked.analysis(chain) else {
                continue;
            };
            let plan = checked.plan(chain).expect("an analysed chain has a plan");
            let lowered = lower(chain).expect("it lowers");
            assert_eq!(format!("{:?}", *plan), format!("{lowered:?}"));
            for wanted in asked() {
                let fresh = analyse(chain, &lowered, &wanted).expect("it analyses");
                let from_check =
                    analyse_reusing(chain, &plan, &wanted, Some(earlier.clone()), &|_, _| {})
                        .expect("it analyses");
                assert_eq!(
                    format!("{fresh:?}"),
                    format!("{from_check:?}"),
                    "{} chain {} asked {wanted:?}",
                    spec.display(),
                    chain.name
                );
                reused += 1;
            }
        }
    }
    assert!(reused >= 20, "only {reused} analyses compared");
}

/// `check` alone keeps nothing: its plans and analyses are dropped per
/// chain, so checking many chains holds no more than one at a time.
#[test]
fn check_alone_keeps_no_plan() {
    for spec in common::demo_specs() {
        let checked = checked(&spec, &CheckOptions::default());
        assert!(checked.analysed.is_empty(), "{}", spec.display());
    }
}

/// The check's findings do not depend on whether a report follows.
#[test]
fn findings_are_the_same_with_or_without_a_report() {
    for spec in specs() {
        let alone = checked(&spec, &CheckOptions::default());
        let show = |c: &CheckedFile| format!("{:?}", c.findings.clone().sorted());
        for keep in [Keep::Plans, Keep::Reports] {
            let kept = checked(
                &spec,
                &CheckOptions {
                    keep,
                    ..CheckOptions::default()
                },
            );
            assert_eq!(show(&alone), show(&kept), "{} {keep:?}", spec.display());
            assert_eq!(kept.analysed.len(), kept.chains.len());
        }
    }
}

/// The fault verdicts `check` keeps (judged against the window built from
/// its own range envelopes) are the ones a fresh fault analysis gives, so
/// `catena checklist` can list them without a second pass.
#[test]
fn the_checks_fault_verdicts_are_the_fresh_ones() {
    let options = CheckOptions {
        keep: Keep::Plans,
        ..CheckOptions::default()
    };
    let mut compared = 0;
    for spec in common::demo_specs() {
        let checked = checked(&spec, &options);
        for chain in &checked.chains {
            let kept = checked
                .faults(chain)
                .expect("a clean chain's faults are kept");
            let plan = lower(chain).expect("it lowers");
            let fresh = catena::analysis::faults::check(chain, &plan, None).expect("it judges");
            assert_eq!(kept, &fresh, "{} chain {}", spec.display(), chain.name);
            compared += 1;
        }
    }
    assert!(compared >= 10, "only {compared} chains compared");
}

//! Recorded outputs: `check`, `budget` and `eval` on every demo spec and
//! every fixture, compared byte for byte with `tests/golden/`.
//!
//! Restructuring the code must not move a number or a byte of output; this
//! test is the guard. When a change is meant to move an output, re-record
//! with `CATENA_GOLDEN=record cargo test --test golden` and review the diff.

mod common;

use std::fs;
use std::path::{Path, PathBuf};

use serde_json::Value;

const TRIALS: &str = "300";
const POINTS: &str = "3";

#[test]
fn outputs_match_the_recording() {
    let root = common::root();
    let specs = spec_files(&root);
    assert!(specs.len() > 100, "found only {} specs", specs.len());
    let record = std::env::var("CATENA_GOLDEN").is_ok_and(|v| v == "record");
    let golden = root.join("tests/golden");
    let mut differ = Vec::new();
    for (spec, transcript) in transcripts(&root, &specs) {
        let path = golden.join(recording_name(&spec));
        if record {
            fs::create_dir_all(&golden).expect("the recording folder can be made");
            fs::write(&path, &transcript).expect("the recording can be written");
        } else if fs::read_to_string(&path).ok().as_deref() != Some(transcript.as_str()) {
            differ.push(spec);
        }
    }
    assert!(
        differ.is_empty(),
        "outputs differ from tests/golden/ (or are not recorded) for {} specs:\n  {}\n\
         re-record with CATENA_GOLDEN=record cargo test --test golden when intended",
        differ.len(),
        differ.join("\n  ")
    );
}

/// Every recording names a spec that still exists, so none goes stale.
#[test]
fn every_recording_has_its_spec() {
    let root = common::root();
    let names: Vec<String> = spec_files(&root)
        .iter()
        .map(|s| recording_name(s))
        .collect();
    let Ok(entries) = fs::read_dir(root.join("tests/golden")) else {
        panic!("tests/golden/ is missing");
    };
    for entry in entries {
        let name = entry.expect("a folder entry").file_name();
        let name = name.to_string_lossy().into_owned();
        assert!(names.contains(&name), "tests/golden/{name} has no spec");
    }
}

fn recording_name(spec: &str) -> String {
    format!("{}.txt", spec.replace('/', "__"))
}

/// Relative paths of the demo specs and fixtures, sorted.
fn spec_files(root: &Path) -> Vec<String> {
    let mut found = Vec::new();
    for dir in ["specs", "tests/fixtures"] {
        collect(&root.join(dir), &mut found);
    }
    let mut specs: Vec<String> = found
        .iter()
        .map(|p| {
            let relative = p.strip_prefix(root).expect("under the root");
            relative.to_string_lossy().into_owned()
        })
        .collect();
    specs.sort();
    specs
}

fn collect(dir: &Path, found: &mut Vec<PathBuf>) {
    let Ok(entries) = fs::read_dir(dir) else {
        return;
    };
    for entry in entries.flatten() {
        let path = entry.path();
        if path.is_dir() {
            collect(&path, found);
        } else if path.extension().is_some_and(|e| e == "catena") {
            found.push(path);
        }
    }
}

/// The transcripts, built on two threads (the runs are independent).
fn transcripts(root: &Path, specs: &[String]) -> Vec<(String, String)> {
    let half = specs.len().div_ceil(2);
    std::thread::scope(|scope| {
        let workers: Vec<_> = specs
            .chunks(half)
            .map(|chunk| {
                scope.spawn(move || {
                    chunk
                        .iter()
                        .map(|s| (s.clone(), transcript(root, s)))
                        .collect::<Vec<_>>()
                })
            })
            .collect();
        workers
            .into_iter()
            .flat_map(|w| w.join().expect("a worker finishes"))
            .collect()
    })
}

fn transcript(root: &Path, spec: &str) -> String {
    let mut text = String::new();
    run(root, &["check", "--format", "json", spec], &mut text);
    let budget = run(
        root,
        &[
            "budget", spec, "--format", "json", "--trials", TRIALS, "--points", POINTS,
        ],
        &mut text,
    );
    if budget.status != 0 {
        return text;
    }
    run(
        root,
        &[
            "budget",
            spec,
            "--trials",
            TRIALS,
            "--points",
            POINTS,
            "--per-point",
        ],
        &mut text,
    );
    for (chain, at, ambient) in eval_points(&budget.stdout) {
        let args = [
            "eval",
            spec,
            "--format",
            "json",
            "--chain",
            &chain,
            "--at",
            &at,
            "--ambient",
            &ambient,
        ];
        run(root, &args, &mut text);
    }
    text
}

fn run(root: &Path, args: &[&str], text: &mut String) -> common::Run {
    let out = common::catena(root, args, None);
    text.push_str(&format!("==== catena {}\n", args.join(" ")));
    text.push_str(&out.stdout);
    if !out.stderr.is_empty() {
        text.push_str("---- stderr\n");
        text.push_str(&out.stderr);
    }
    text.push_str(&format!("---- exit {}\n", out.status));
    out
}

/// Every (chain, measurand, ambient) the budget evaluated.
fn eval_points(budget_json: &str) -> Vec<(String, String, String)> {
    let parsed: Value = serde_json::from_str(budget_json).expect("budget JSON parses");
    let chains = match parsed {
        Value::Array(chains) => chains,
        one => vec![one],
    };
    let mut points = Vec::new();
    for chain in &chains {
        let name = chain["chain"].as_str().expect("a chain name").to_owned();
        let unit = chain["measurand_unit"].as_str().unwrap_or("");
        for point in chain["points"].as_array().expect("points") {
            let at = point["measurand"].as_f64().expect("a measurand value");
            let ambient = point["ambient"].as_f64().expect("an ambient value");
            points.push((
                name.clone(),
                format!("{at} {unit}"),
                format!("{ambient} degC"),
            ));
        }
    }
    points
}

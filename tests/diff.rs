//! `catena diff` and `catena compare` through the binary: a gain change
//! shows in the budget and the headroom, a change that moves nothing
//! reports no change, `--rev` follows a rename and reads the parts file
//! from the revision, and candidate chains line up side by side.

mod common;

use common::{catena, git, json, root};

const FIXTURES: &str = "tests/fixtures/diff";
/// Enough trials for Monte Carlo to run on both sides, few enough for a
/// debug build.
const TRIALS: &str = "2000";

fn fixture(name: &str) -> String {
    format!("{FIXTURES}/{name}")
}

/// `catena diff OLD NEW --trials TRIALS ..more`, from the repository root.
fn diff(old: &str, new: &str, trials: &str, more: &[&str]) -> common::Run {
    let mut args = vec!["diff", old, new, "--trials", trials];
    args.extend_from_slice(more);
    catena(&root(), &args, None)
}

#[test]
fn a_gain_change_moves_the_budget_and_the_headroom() {
    let (old, new) = (
        fixture("cold_store.catena"),
        fixture("cold_store_gain.catena"),
    );
    let human = diff(&old, &new, TRIALS, &[]);
    assert_eq!(human.status, 0, "{}", human.stderr);
    insta::assert_snapshot!("diff-gain-human", human.stdout);
    let md = diff(&old, &new, TRIALS, &["--format", "markdown"]);
    insta::assert_snapshot!("diff-gain-markdown", md.stdout);

    let run = diff(&old, &new, TRIALS, &["--format", "json"]);
    let doc = json(&run.stdout);
    assert_eq!(doc["schema_version"], 2);
    // Past the converter's end: worse, whatever the gain bought.
    assert_eq!(doc["direction"], "worse");
    let chain = &doc["files"][0]["chains"][0];
    let spec = chain["spec"].as_array().expect("spec changes");
    assert_eq!(spec.len(), 1, "only the gain changed: {spec:?}");
    assert_eq!(spec[0]["subject"], "front.gain");
    assert_eq!(spec[0]["new"]["line"], 34);
    // What the model reads, without the line's comment.
    assert_eq!(spec[0]["new"]["text"], "gain 5 ± 0.05 %");
    // 5/4 the gain: the converter input passes its end (headroom < 0).
    let headroom = chain["outcome"]["headroom"].as_array().expect("headroom");
    let conv = headroom
        .iter()
        .find(|m| m["name"] == "conv input")
        .expect("conv input moved");
    assert!(conv["old"].as_f64().unwrap() > 0.0 && conv["new"].as_f64().unwrap() < 0.0);
    assert_eq!(chain["regression"], true);

    let gated = diff(&old, &new, TRIALS, &["--fail-on", "regression"]);
    assert_eq!(gated.status, 1);
}

/// Stages reordered, a comment and a second chain: the compared chain's
/// spec and results are the same, so nothing is reported beyond the new
/// chain's name.
#[test]
fn a_change_that_moves_nothing_reports_no_change() {
    let (old, new) = (
        fixture("cold_store.catena"),
        fixture("cold_store_moved.catena"),
    );
    let human = diff(&old, &new, TRIALS, &["--fail-on", "regression"]);
    assert_eq!(human.status, 0, "{}", human.stderr);
    insta::assert_snapshot!("diff-moved-human", human.stdout);
    let run = diff(&old, &new, TRIALS, &["--format", "json"]);
    let doc = json(&run.stdout);
    assert_eq!(doc["direction"], "neutral");
    let file = &doc["files"][0];
    assert_eq!(file["added_chains"], serde_json::json!(["spare_store"]));
    let chain = &file["chains"][0];
    assert_eq!(chain["spec"], serde_json::json!([]));
    for part in ["requirements", "worst", "contributors", "headroom", "other"] {
        assert_eq!(
            chain["outcome"][part],
            serde_json::json!([]),
            "{part} moved"
        );
    }
}

/// Two chains of one file compare as `FILE#chain`.
#[test]
fn two_chains_of_one_file_compare() {
    let moved = fixture("cold_store_moved.catena");
    let (a, b) = (
        format!("{moved}#cold_store"),
        format!("{moved}#spare_store"),
    );
    let run = diff(&a, &b, "0", &["--format", "json"]);
    assert_eq!(run.status, 0, "{}", run.stderr);
    let chain = &json(&run.stdout)["files"][0]["chains"][0];
    assert_eq!(chain["chain"], "spare_store");
    assert_eq!(chain["old_chain"], "cold_store");
    assert_eq!(chain["direction"], "neutral");
}

#[test]
fn diff_takes_two_specs_or_a_revision() {
    let run = catena(&root(), &["diff", &fixture("cold_store.catena")], None);
    assert_eq!(run.status, 2);
    assert!(run.stderr.contains("OLD and NEW"), "{}", run.stderr);
}

fn throwaway_repository(name: &str) -> common::TempDir {
    let dir = common::temp_dir("diff", name);
    std::fs::create_dir_all(dir.join("specs/parts")).expect("temp folder");
    git(&dir, &["init", "-q"]);
    dir
}

const AMPLIFIER_PART: &str = "parts:\n  front_amp:\n    kind: amplifier\n    gain: 4 ± 0.05 %\n    noise: NOISE nV/rtHz\n    input: 0.1 V .. 3.1 V\n    output: 0.05 V .. 3.25 V\n";

/// The spec renamed and its part's noise changed since the commit: the
/// old spec is found under its old name, its parts file is read as it
/// was at the revision, and a spec that only uses that part is compared
/// too.
#[test]
fn a_rename_between_revisions_is_followed() {
    let dir = throwaway_repository("rename");
    let spec = std::fs::read_to_string(root().join(fixture("cold_store.catena")))
        .expect("fixture")
        .replace(
            "chain cold_store",
            "use \"parts/amps.yaml\"\n\nchain cold_store",
        )
        .replace(
            "amplifier front {\n        gain 4 ± 0.05 %",
            "amplifier front : front_amp {\n        gain 4 ± 0.05 %",
        )
        // The part states the noise.
        .replace("        noise 12 nV/rtHz\n", "");
    std::fs::write(dir.join("specs/store.catena"), &spec).expect("write");
    // Unchanged itself, but its part changes below.
    std::fs::write(dir.join("specs/other.catena"), &spec).expect("write");
    std::fs::write(
        dir.join("specs/parts/amps.yaml"),
        AMPLIFIER_PART.replace("NOISE", "12"),
    )
    .expect("write");
    git(&dir, &["add", "."]);
    git(&dir, &["commit", "-q", "-m", "first"]);
    git(&dir, &["mv", "specs/store.catena", "specs/cold.catena"]);
    std::fs::write(
        dir.join("specs/parts/amps.yaml"),
        AMPLIFIER_PART.replace("NOISE", "40"),
    )
    .expect("write");

    let run = catena(
        &dir,
        &[
            "diff", "--rev", "HEAD", "--trials", TRIALS, "--format", "json",
        ],
        None,
    );
    assert_eq!(run.status, 0, "{}", run.stderr);
    let doc = json(&run.stdout);
    let file = &doc["files"][0];
    assert_eq!(file["old"], "HEAD:specs/store.catena");
    assert_eq!(file["new"], "specs/cold.catena");
    let spec = &file["chains"][0]["spec"];
    assert_eq!(spec[0]["subject"], "front.noise", "{spec}");
    assert_eq!(spec[0]["old"]["text"], "noise: 12 nV/rtHz");
    assert_eq!(spec[0]["old"]["file"], "HEAD:specs/parts/amps.yaml");
    assert_eq!(spec[0]["new"]["text"], "noise: 40 nV/rtHz");
    assert_eq!(spec[0]["new"]["file"], "specs/parts/amps.yaml");
    assert_eq!(spec.as_array().map(Vec::len), Some(1), "{spec}");
    // The spec that only uses the changed part is compared too.
    let other = &doc["files"][1];
    assert_eq!(other["new"], "specs/other.catena");
    assert_eq!(other["chains"][0]["spec"][0]["subject"], "front.noise");

    // Named, the spec is found under its old name just the same.
    let named = catena(
        &dir,
        &[
            "diff",
            "--rev",
            "HEAD",
            "specs/cold.catena",
            "--trials",
            "0",
            "--format",
            "markdown",
        ],
        None,
    );
    assert_eq!(named.status, 0, "{}", named.stderr);
    assert!(
        named
            .stdout
            .contains("`HEAD:specs/store.catena` → `specs/cold.catena`"),
        "{}",
        named.stdout
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn an_unknown_revision_is_a_usage_error() {
    let dir = throwaway_repository("unknown");
    let run = catena(&dir, &["diff", "--rev", "no-such-rev"], None);
    assert_eq!(run.status, 2);
    assert!(run.stderr.contains("no-such-rev"), "{}", run.stderr);
    let _ = std::fs::remove_dir_all(&dir);
}

/// A converter's pin may sit on its rail (a grounded low side), so
/// `check` gives it no margin; the least headroom `compare` names is the
/// least of the limits that keep one. The kiln's negative input pin sits
/// 1.9 % of its span above its rail; its converter input keeps 6.3 %,
/// the least of the rest (`budget --format json`'s limits).
#[test]
fn compare_names_the_least_headroom_that_must_keep_a_margin() {
    let kiln = "specs/pottery_kiln.catena";
    let run = catena(
        &root(),
        &["budget", kiln, "--trials", "0", "--format", "json"],
        None,
    );
    let limits = json(&run.stdout)["limits"].as_array().unwrap().clone();
    let headroom = |l: &serde_json::Value| l["headroom"].as_f64().unwrap();
    let is_pin = |l: &serde_json::Value| l["limit"].as_str().unwrap().contains("pin");
    let pins = limits.iter().filter(|l| is_pin(l)).map(headroom);
    let least_pin = pins.fold(f64::INFINITY, f64::min);
    let least = limits.iter().filter(|l| !is_pin(l)).map(headroom);
    let least = least.fold(f64::INFINITY, f64::min);
    assert!(least_pin < least, "{least_pin} {least}");
    let args = ["compare", kiln, "--trials", "0", "--format", "markdown"];
    let run = catena(&root(), &args, None);
    assert_eq!(run.status, 0, "{}", run.stderr);
    let row = run
        .stdout
        .lines()
        .find(|l| l.starts_with("| least headroom"));
    let row = row.expect("a least headroom row");
    let want = format!("| least headroom | {:.3} % (conv input) |", least * 100.0);
    assert_eq!(row, want);
}

#[test]
fn compare_lines_candidates_up() {
    let run = catena(
        &root(),
        &[
            "compare",
            &fixture("cold_store.catena"),
            &fixture("cold_store_gain.catena"),
            "--trials",
            TRIALS,
            "--format",
            "markdown",
        ],
        None,
    );
    assert_eq!(run.status, 0, "{}", run.stderr);
    insta::assert_snapshot!("compare-markdown", run.stdout);
    let run = catena(
        &root(),
        &[
            "compare",
            &fixture("cold_store_moved.catena"),
            "--trials",
            "0",
            "--format",
            "json",
        ],
        None,
    );
    let doc = json(&run.stdout);
    assert_eq!(doc["schema_version"], 1);
    let names: Vec<&str> = doc["candidates"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["name"].as_str().unwrap())
        .collect();
    assert_eq!(
        names,
        [
            format!("{FIXTURES}/cold_store_moved.catena#cold_store"),
            format!("{FIXTURES}/cold_store_moved.catena#spare_store")
        ]
    );
}

/// A tracking group added between two dividers is a spec change of its own.
#[test]
fn a_tracking_group_is_a_spec_change() {
    let run = diff(
        "tests/fixtures/budget/unmatched_divider.catena",
        "tests/fixtures/budget/matched_divider.catena",
        "0",
        &["--format", "json"],
    );
    assert_eq!(run.status, 0, "{}", run.stderr);
    let spec = &json(&run.stdout)["files"][0]["chains"][0]["spec"];
    let group = spec
        .as_array()
        .expect("spec changes")
        .iter()
        .find(|c| c["what"] == "tracking group")
        .unwrap_or_else(|| panic!("no tracking group change: {spec}"));
    assert_eq!(group["kind"], "added");
    assert_eq!(group["subject"], "pair");
}

/// The kiln's front end with a 10 uA burnout current, then with 1 uA: an
/// open couple no longer leaves the valid window, so the fault became
/// silent, which `--fail-on regression` fails on; the way back makes it
/// detectable again.
#[test]
fn a_fault_made_silent_is_a_regression() {
    let (old, new) = (
        fixture("kiln_burnout.catena"),
        fixture("kiln_weak_burnout.catena"),
    );
    let md = diff(&old, &new, "0", &["--format", "markdown"]);
    assert_eq!(md.status, 0, "{}", md.stderr);
    insta::assert_snapshot!("diff-silent-fault-markdown", md.stdout);

    let run = diff(&old, &new, "0", &["--format", "json"]);
    let doc = json(&run.stdout);
    assert_eq!(doc["regression"], true);
    let faults = &doc["files"][0]["chains"][0]["outcome"]["faults"];
    let open = faults
        .as_array()
        .expect("fault changes")
        .iter()
        .find(|f| f["stage"] == "tc" && f["fault"] == "open")
        .unwrap_or_else(|| panic!("no open couple in {faults}"));
    assert_eq!(open["old"]["verdict"], "detectable");
    assert!(open["old"]["threshold"]
        .as_str()
        .is_some_and(|t| t.starts_with("code > ")));
    assert_eq!(open["new"]["verdict"], "silent");
    // By hand: 1 uA through the 10 kΩ bias resistor is 10 mV across the
    // open input; × 36 plus the reference divider's 2.5 V × 10/71.9 gives
    // 0.7077 V, code 0.7077 / 2.5 × 2^23 = 2 374 680, inside the window.
    let hand = (0.010 * 36.0 + 2.5 * 10.0 / 71.9) / 2.5 * 8_388_608.0;
    let codes = &open["new"]["codes"];
    let (lo, hi) = (codes[0].as_f64().unwrap(), codes[1].as_f64().unwrap());
    assert!(lo <= hand && hand <= hi, "{hand} outside {codes}");
    assert_eq!(open["regression"], true);

    let gated = diff(&old, &new, "0", &["--fail-on", "regression"]);
    assert_eq!(gated.status, 1, "{}", gated.stdout);
    let back = diff(
        &new,
        &old,
        "0",
        &["--fail-on", "regression", "--format", "json"],
    );
    assert_eq!(back.status, 0, "{}", back.stdout);
    assert_eq!(json(&back.stdout)["direction"], "better");
}

/// Two candidates priced from a parts file: each chain's unit cost is the
/// sum of what its stages and parts state, its power the converters'
/// stated draw plus what the excitation delivers into its load, and a
/// powered stage that states nothing is named.
#[test]
fn compare_sums_cost_and_power() {
    let spec = fixture("candidates.catena");
    let md = catena(
        &root(),
        &["compare", &spec, "--trials", "0", "--format", "markdown"],
        None,
    );
    // The NTC candidate misses its accuracy: a verdict, not a failure to
    // evaluate.
    assert_eq!(md.status, 0, "{}", md.stderr);
    insta::assert_snapshot!("compare-cost-power-markdown", md.stdout);

    let run = catena(
        &root(),
        &["compare", &spec, "--trials", "0", "--format", "json"],
        None,
    );
    let doc = json(&run.stdout);
    let bill = |i: usize| doc["candidates"][i]["outcome"]["bill"].clone();
    let rtd = bill(0);
    // 14.50 (probe part) + 0.80 (drive) + 0.35 (rref) + 6.20 (converter part).
    assert!(
        (rtd["cost"].as_f64().unwrap() - 21.85).abs() < 1e-9,
        "{rtd}"
    );
    assert_eq!(rtd["unpriced"], serde_json::json!([]));
    // By hand: the load is the Pt1000 at 15 degC (1058.5 Ω, + 0.7 Ω of
    // class A) and the 4.99 kΩ reference in series, carrying 250 uA
    // + 0.5 %: at most 1.520 V, so 250 uA × 1.520 V = 0.380 mW delivered,
    // plus the converter's stated 1.5 mW.
    let drive = rtd["power"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["stage"] == "drive")
        .expect("the excitation's power")
        .clone();
    assert_eq!(drive["basis"], "delivered");
    let volts = (1058.49 + 0.70 + 4990.0 * 1.0001) * 250e-6 * 1.005;
    let delivered = 250e-6 * volts;
    let watts = drive["watts"].as_f64().unwrap();
    assert!(
        (watts / delivered - 1.0).abs() < 1e-3,
        "{watts} against {delivered}"
    );
    let total = rtd["power_w"].as_f64().unwrap();
    assert!((total - (watts + 1.5e-3)).abs() < 1e-12, "{rtd}");
    let ntc = bill(1);
    assert_eq!(ntc["unpriced"], serde_json::json!(["supply"]));
    // Passive stages (the bead, the divider) are in the excitation's
    // delivered power, not missing.
    assert_eq!(ntc["unpowered"], serde_json::json!([]));
}

/// Adding `protects` is a change a reviewer must see: the line itself,
/// and the silent fault it turns from a warning into an error.
#[test]
fn a_protects_line_shows_with_the_severities_it_moves() {
    let (old, new) = (
        "tests/fixtures/faults/check_open_couple_silent.catena",
        "tests/fixtures/faults/check_open_couple_protects.catena",
    );
    let run = diff(old, new, "0", &["--format", "json"]);
    assert_eq!(run.status, 0, "{}", run.stderr);
    let doc = json(&run.stdout);
    let chain = &doc["files"][0]["chains"][0];
    let spec = chain["spec"].as_array().expect("spec changes");
    let protects = spec
        .iter()
        .find(|c| c["subject"] == "protects")
        .unwrap_or_else(|| panic!("protects is a change: {spec:?}"));
    assert_eq!(protects["kind"], "added");
    assert_eq!(protects["new"]["text"], "protects property");
    assert_eq!(protects["new"]["line"], 7);
    let faults = chain["outcome"]["faults"]
        .as_array()
        .expect("fault changes");
    let open = faults
        .iter()
        .find(|f| f["stage"] == "tc" && f["fault"] == "open")
        .unwrap_or_else(|| panic!("the open couple's severity moved: {faults:?}"));
    assert_eq!(open["old"]["severity"], "warning");
    assert_eq!(open["new"]["severity"], "error");

    // And back: removing it is told the same way.
    let human = diff(new, old, "0", &[]);
    assert_eq!(human.status, 0, "{}", human.stderr);
    assert!(human.stdout.contains("protects"), "{}", human.stdout);
    assert!(human.stdout.contains("(error)"), "{}", human.stdout);
}

/// A cost takes a number alone and a power a power unit: `cost 5 %` is
/// not a price of 0.05, nor `power 5 %` a power.
#[test]
fn a_cost_takes_no_unit_and_a_power_takes_watts() {
    let dir = common::temp_dir("diff", "units");
    let spec = std::fs::read_to_string(root().join(fixture("candidates.catena")))
        .expect("the fixture reads");
    std::fs::create_dir_all(dir.join("parts")).expect("parts folder");
    std::fs::copy(
        root().join(fixture("parts/priced.yaml")),
        dir.join("parts/priced.yaml"),
    )
    .expect("parts copy");
    for (line, code) in [("cost 5 %", "P375"), ("power 5 %", "U102")] {
        let text = spec.replacen("cost 0.80", &format!("cost 0.80\n        {line}"), 1);
        let text = if line.starts_with("cost") {
            text.replacen("cost 0.80\n", "", 1)
        } else {
            text
        };
        std::fs::write(dir.join("c.catena"), text).expect("spec written");
        let run = catena(&dir, &["check", "c.catena", "--format", "json"], None);
        assert_eq!(run.status, 1, "{line}: {}", run.stdout);
        assert!(run.stdout.contains(code), "{line}: {}", run.stdout);
    }
}

/// An IC sensor's power is its supply's high end times what it draws,
/// where both are stated; a current-output sensor draws its own output,
/// the most at the top of the range. Without them it is "not stated".
#[test]
fn compare_takes_an_ic_sensors_power_from_its_supply() {
    let chain = |name: &str, sensor: &str| {
        format!(
            "chain {name} \"IC sensor\" {{\n    measurand temperature 0 degC .. 100 degC\n    ambient 20 degC .. 30 degC\n    sensor ic {{\n{sensor}\n    }}\n    {load}adc conv {{\n        bits 12\n        input single\n        vref 4.096 V\n        power 1 mW\n    }}\n    convert reading {{ method linear }}\n    {wiring}\n}}\n",
            load = if sensor.contains("ic_current") {
                "sensor load { resistor 4.7 kohm }\n    "
            } else {
                ""
            },
            wiring = if sensor.contains("ic_current") {
                "ic -> load -> conv -> reading"
            } else {
                "ic -> conv -> reading"
            },
        )
    };
    let dir = common::temp_dir("diff", "ic-power");
    let text = [
        chain(
            "voltage_out",
            "        ic_voltage\n        slope 10 mV/K\n        output 500 mV at 0 degC\n        supply 2.7 V .. 5.5 V\n        supply_current 60 uA",
        ),
        chain(
            "current_out",
            "        ic_current\n        slope 1 uA/K\n        supply 3 V .. 5.5 V",
        ),
        chain(
            "unstated",
            "        ic_voltage\n        slope 10 mV/K\n        output 500 mV at 0 degC\n        supply 2.7 V .. 5.5 V",
        ),
    ]
    .concat();
    std::fs::write(dir.join("ic.catena"), text).expect("spec written");
    let run = catena(
        &dir,
        &["compare", "ic.catena", "--trials", "0", "--format", "json"],
        None,
    );
    let doc = json(&run.stdout);
    let bill = |i: usize| doc["candidates"][i]["outcome"]["bill"].clone();
    let ic_watts = |i: usize| {
        bill(i)["power"]
            .as_array()
            .and_then(|p| p.iter().find(|p| p["stage"] == "ic").cloned())
    };
    // 5.5 V × 60 uA.
    let v = ic_watts(0).unwrap_or_else(|| panic!("{}", run.stdout));
    assert_eq!(v["basis"], "supply");
    assert!(
        (v["watts"].as_f64().unwrap() - 5.5 * 60e-6).abs() < 1e-12,
        "{v}"
    );
    // 5.5 V × 1 uA/K × 373.15 K.
    let c = ic_watts(1).unwrap_or_else(|| panic!("{}", run.stdout));
    assert!(
        (c["watts"].as_f64().unwrap() - 5.5 * 1e-6 * 373.15).abs() < 1e-12,
        "{c}"
    );
    // No supply current: named, not guessed.
    assert!(ic_watts(2).is_none(), "{}", bill(2));
    assert_eq!(bill(2)["unpowered"], serde_json::json!(["ic"]));
    let human = catena(&dir, &["compare", "ic.catena", "--trials", "0"], None);
    assert!(human.stdout.contains("not stated: ic"), "{}", human.stdout);
}

/// The Monte Carlo worst of a diff's or a compare's outcome: (old, new) of
/// a diff's chain, or a compare candidate's value with its numerical width.
fn monte_carlo_worst(worst: &serde_json::Value) -> Option<&serde_json::Value> {
    worst
        .as_array()
        .expect("worst")
        .iter()
        .find(|w| w["name"] == "monte_carlo" || w["method"] == "monte_carlo")
}

/// `diff` and `compare` take the sampling flags `budget` and `report` take
/// (`--trials`, `--seed`, `--points`, with `catena.yaml` under them), and
/// the trials reach the analysis: a class A element made class B moves
/// the Monte Carlo worst at 500 trials to the value `compare` gives at
/// 500, not at 2000; none at 0 trials; `monte_carlo.trials` in
/// `catena.yaml` stands where the flag is not given.
#[test]
fn diff_trials_reach_the_analysis() {
    let dir = common::temp_dir("diff", "trials");
    let old = std::fs::read_to_string(fixture("cold_store.catena")).unwrap();
    assert!(old.contains("        class A\n"));
    std::fs::write(dir.join("old.catena"), &old).unwrap();
    std::fs::write(
        dir.join("new.catena"),
        old.replace("        class A\n", "        class B\n"),
    )
    .unwrap();
    let diff_worst = |more: &[&str]| {
        let mut args = vec!["diff", "old.catena", "new.catena", "--format", "json"];
        args.extend_from_slice(more);
        let run = catena(&dir, &args, None);
        assert_eq!(run.status, 0, "{}", run.stderr);
        let doc = json(&run.stdout);
        let worst = &doc["files"][0]["chains"][0]["outcome"]["worst"];
        (doc["trials"].clone(), monte_carlo_worst(worst).cloned())
    };
    let compare_worst = |trials: &str| {
        let args = [
            "compare",
            "old.catena",
            "--trials",
            trials,
            "--format",
            "json",
        ];
        let run = catena(&dir, &args, None);
        assert_eq!(run.status, 0, "{}", run.stderr);
        let doc = json(&run.stdout);
        let worst = &doc["candidates"][0]["outcome"]["worst"];
        monte_carlo_worst(worst)
            .cloned()
            .expect("a Monte Carlo worst")
    };
    let (few, many) = (compare_worst("500"), compare_worst("2000"));
    assert_ne!(few["value"], many["value"]);
    assert!(few["numerical"].as_f64().unwrap() > many["numerical"].as_f64().unwrap());

    let (trials, moved) = diff_worst(&["--trials", "500"]);
    assert_eq!(trials, 500);
    let moved = moved.expect("class B moves the Monte Carlo worst");
    assert_eq!(moved["old"], few["value"]);
    assert!(moved["new"].as_f64().unwrap() > moved["old"].as_f64().unwrap());
    assert_eq!(
        diff_worst(&["--trials", "2000"]).1.unwrap()["old"],
        many["value"]
    );
    assert_eq!(diff_worst(&["--trials", "0"]).1, None);
    let bad = catena(
        &dir,
        &["diff", "old.catena", "new.catena", "--points", "1"],
        None,
    );
    assert_eq!(bad.status, 2, "{}", bad.stderr);

    std::fs::write(dir.join("catena.yaml"), "monte_carlo:\n  trials: 500\n").unwrap();
    let (trials, configured) = diff_worst(&[]);
    assert_eq!(trials, 500);
    assert_eq!(configured.unwrap()["old"], few["value"]);
    assert_eq!(diff_worst(&["--trials", "0"]).1, None, "the flag wins");
}

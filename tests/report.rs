//! `catena report`: the Markdown and JSON reports of every demo spec as
//! snapshots, the HTML as a structural summary (tags and plot ids, no
//! coordinates), byte-identical output across runs and thread counts,
//! and a folder's reports with their index.

use std::path::Path;
use std::process::Command;

fn report(spec: &str, format: &str, threads: &str) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_catena"))
        .args(["report", spec, "--format", format, "--trials", "1000"])
        .env("RAYON_NUM_THREADS", threads)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("catena runs");
    assert!(
        out.status.code().is_some_and(|c| c <= 1),
        "{spec}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    redact(&String::from_utf8_lossy(&out.stdout))
}

/// The spec's git revision moves with every commit, and whether the
/// working copy differs depends on the checkout.
fn redact(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for line in text.lines() {
        if line.contains("\"revision\"") {
            out.push_str("    \"revision\": \"[revision]\",");
        } else if line.contains("\"modified\"") {
            out.push_str("    \"modified\": \"[state]\",");
        } else if line.starts_with("| spec revision |") {
            out.push_str("| spec revision | [revision] |");
        } else {
            out.push_str(line);
        }
        out.push('\n');
    }
    out
}

fn demo_specs() -> Vec<String> {
    let mut specs: Vec<String> =
        std::fs::read_dir(Path::new(env!("CARGO_MANIFEST_DIR")).join("specs"))
            .expect("specs folder")
            .filter_map(|e| e.ok())
            .map(|e| e.path())
            .filter(|p| p.extension().is_some_and(|x| x == "catena"))
            .map(|p| format!("specs/{}", p.file_name().unwrap().to_string_lossy()))
            .collect();
    specs.sort();
    specs
}

fn name(spec: &str) -> String {
    Path::new(spec)
        .file_stem()
        .unwrap()
        .to_string_lossy()
        .into_owned()
}

#[test]
fn markdown_reports_of_every_demo_spec() {
    for spec in demo_specs() {
        let md = report(&spec, "md", "1");
        // A pull-request comment holds 65,536 characters.
        assert!(
            md.chars().count() < 65_000,
            "{spec}: {} characters",
            md.chars().count()
        );
        insta::assert_snapshot!(format!("report-md-{}", name(&spec)), md);
        // A chain that trips leads its verdict with the caution it
        // closes with.
        let trips = "This chain raises alarms or trips";
        let leading = md.matches(&format!("**Caution.** {trips}")).count();
        assert_eq!(leading, md.matches(&format!("- {trips}")).count(), "{spec}");
        if spec.contains("pottery_kiln") {
            assert_eq!(leading, 1, "the kiln's high alarm");
        }
    }
}

#[test]
fn json_reports_of_every_demo_spec() {
    for spec in demo_specs() {
        let json = report(&spec, "json", "1");
        let doc: serde_json::Value = serde_json::from_str(&json).expect("valid JSON");
        assert_eq!(doc["schema_version"], 1);
        insta::assert_snapshot!(format!("report-json-{}", name(&spec)), json);
    }
}

/// Tags, classes, ids and text of the HTML with every number inside SVG
/// attributes dropped: a plotting change shows, as structure.
fn structure(html: &str) -> String {
    let mut out = String::new();
    let mut in_svg = false;
    for piece in html.split('<').skip(1) {
        let (tag, text) = piece.split_once('>').unwrap_or((piece, ""));
        let tag_name = tag.split_whitespace().next().unwrap_or("");
        if tag_name == "svg" {
            in_svg = true;
        }
        if tag_name == "/svg" {
            in_svg = false;
        }
        if in_svg {
            let keep: Vec<&str> = tag
                .split_whitespace()
                .filter(|a| {
                    !a.contains('=')
                        || a.starts_with("class=")
                        || a.starts_with("id=")
                        || a.starts_with("text-anchor=")
                })
                .collect();
            out.push_str(&format!("<{}>", keep.join(" ")));
            if !text.trim().is_empty() {
                out.push_str(text.trim());
            }
            out.push('\n');
        } else if !tag_name.starts_with("td") && !tag_name.starts_with("/td") {
            out.push_str(&format!("<{tag_name}>\n"));
        }
    }
    out
}

#[test]
fn html_report_structure_of_the_cold_store() {
    let html = report("specs/cold_store.catena", "html", "1");
    assert!(!html.contains("<script") && !html.contains(" src=") && !html.contains("<link"));
    // Every Markdown heading level the renderer writes becomes a heading,
    // never a paragraph that shows its hashes.
    assert!(
        !html.contains("<p>#"),
        "a Markdown heading leaked into the HTML"
    );
    insta::assert_snapshot!("report-html-cold_store", structure(&html));
}

#[test]
fn reports_are_byte_identical_across_runs_and_thread_counts() {
    for format in ["json", "html"] {
        let one = report("specs/creamery.catena", format, "1");
        assert_eq!(
            one,
            report("specs/creamery.catena", format, "1"),
            "{format}"
        );
        assert_eq!(
            one,
            report("specs/creamery.catena", format, "2"),
            "{format}"
        );
    }
}

#[test]
fn a_folder_gives_a_report_per_spec_and_an_index() {
    let out = std::env::temp_dir().join(format!("catena-report-folder-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&out);
    let status = Command::new(env!("CARGO_BIN_EXE_catena"))
        .args(["report", "specs", "--format", "md", "--trials", "200", "-o"])
        .arg(&out)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .status()
        .expect("catena runs");
    assert!(status.code().is_some_and(|c| c <= 1));
    let index = std::fs::read_to_string(out.join("index.md")).expect("an index");
    for spec in demo_specs() {
        let file = format!("{}.md", name(&spec));
        assert!(out.join(&file).exists(), "{file}");
        assert!(index.contains(&format!("]({file})")), "{index}");
        // The plots a Markdown report links are written beside it.
        let md = std::fs::read_to_string(out.join(&file)).unwrap();
        for link in md.split("](").skip(1) {
            let target = link.split(')').next().unwrap();
            if target.ends_with(".svg") {
                assert!(out.join(target).exists(), "{target}");
            }
        }
    }
    let _ = std::fs::remove_dir_all(&out);
}

#[test]
fn a_missing_chain_is_a_usage_error() {
    let out = Command::new(env!("CARGO_BIN_EXE_catena"))
        .args(["report", "specs/cold_store.catena", "--chain", "cold_stor"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("did you mean `cold_store`"));
}

fn json(args: &[&str]) -> serde_json::Value {
    let out = Command::new(env!("CARGO_BIN_EXE_catena"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("catena runs");
    serde_json::from_str(&String::from_utf8_lossy(&out.stdout)).expect("valid JSON")
}

/// The signal path's gain is per written measurand unit (per microstrain
/// here, where SI is per unit strain: a factor of 10⁶ apart), and agrees
/// with a central difference of `catena eval` at the worst point.
#[test]
fn the_signal_path_gain_is_per_written_unit_and_matches_eval() {
    let spec = "specs/timber_hoist.catena";
    let report = json(&["report", spec, "--format", "json", "--trials", "0"]);
    let chain = &report["chains"][0];
    let chain_name = chain["name"].as_str().unwrap();
    let at = &chain["budget"]["worst_at"];
    let (x, ambient) = (at[0].as_f64().unwrap(), at[1].as_f64().unwrap());
    let node = |x: f64, stage: &str| -> f64 {
        let eval = json(&[
            "eval",
            spec,
            "--chain",
            chain_name,
            "--at",
            &format!("{x} ue"),
            "--ambient",
            &format!("{ambient} degC"),
            "--format",
            "json",
        ]);
        eval["nodes"][stage]["value"].as_f64().unwrap()
    };
    let rows = chain["budget"]["path"].as_array().unwrap();
    assert!(!rows.is_empty());
    for row in rows {
        let stage = row["stage"].as_str().unwrap();
        if row["signal_unit"] == "code" {
            continue; // whole codes: a 1 ue step is a few hundred codes, too coarse to difference
        }
        let by_eval = (node(x + 1.0, stage) - node(x - 1.0, stage)) / 2.0;
        let gain = row["gain"].as_f64().unwrap();
        assert!(
            (gain - by_eval).abs() <= 1e-4 * by_eval.abs().max(1e-12),
            "{stage}: report {gain} per ue, eval {by_eval} per ue"
        );
        let stage_row = chain["stages"]
            .as_array()
            .unwrap()
            .iter()
            .find(|s| s["stage"] == stage)
            .unwrap();
        if let Some(g) = stage_row["gain"].as_f64() {
            assert!(
                (g - gain).abs() <= 1e-9 * gain.abs(),
                "{stage}: {g} against {gain}"
            );
        }
    }
}

/// A trip that a fault firmware cannot see can mask fails the verdict
/// though every requirement passes (there are none here), names the
/// alarm and each masking fault in words, and exits 1 as `check` does.
#[test]
fn a_masked_trip_fails_the_verdict() {
    let spec = "tests/fixtures/eval/press_transducer.catena";
    let out = Command::new(env!("CARGO_BIN_EXE_catena"))
        .args(["report", spec, "--format", "json", "--trials", "0"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("catena runs");
    assert_eq!(out.status.code(), Some(1));
    let report: serde_json::Value =
        serde_json::from_str(&String::from_utf8_lossy(&out.stdout)).expect("valid JSON");
    let verdict = &report["chains"][0]["verdict"];
    assert_eq!(verdict["pass"], false);
    assert_eq!(verdict["requirements"].as_array().map(Vec::len), Some(0));
    let trip = &verdict["masked_trips"][0];
    assert_eq!(
        (trip["side"].as_str(), trip["at"].as_f64()),
        (Some("high"), Some(230.0))
    );
    let conditions: Vec<&str> = trip["masked_by"]
        .as_array()
        .expect("masking faults")
        .iter()
        .filter_map(|f| f["condition"].as_str())
        .collect();
    assert!(
        conditions.contains(&"excitation lead open"),
        "{conditions:?}"
    );
    assert_eq!(report["summary"][0]["pass"], false);
    let md = report_md(spec);
    assert!(md.contains("**FAIL**"), "{md}");
    assert!(md.contains("| `alarm high 230 bar` |"), "{md}");
}

fn report_md(spec: &str) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_catena"))
        .args(["report", spec, "--format", "md", "--trials", "0"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("catena runs");
    String::from_utf8_lossy(&out.stdout).into_owned()
}

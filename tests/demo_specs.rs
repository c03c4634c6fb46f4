//! The demo specs cannot rot: each checks clean, is in canonical layout,
//! and formatting never changes what `check` reports.

mod common;

use std::collections::BTreeSet;

use catena::check::{check_bytes, check_str};
use catena::model::value::ParamValue;
use catena::model::PartsCache;
use catena::syntax::ast::StageKind;
use catena::syntax::format::format_source;
use common::{catena, demo_specs, root};

#[test]
fn every_demo_spec_checks_clean() {
    let specs = demo_specs();
    assert!(specs.len() >= 5, "at least five demo specs");
    let run = catena(&root(), &["check", "--deny", "warnings", "specs"], None);
    assert_eq!(run.status, 0, "{}", run.stderr);
    assert!(run.stderr.contains(&format!(
        "checked {} files: 0 errors, 0 warnings",
        specs.len()
    )));
}

#[test]
fn demo_specs_are_in_canonical_layout() {
    let run = catena(&root(), &["fmt", "--check", "specs"], None);
    assert_eq!(run.status, 0, "would reformat: {}", run.stdout);
}

/// The demos together use every stage kind and every sensor model the
/// front end knows, an amplifier reference, a thermocouple bias and a
/// converter's limits (directly or through a shipped part), read from
/// their resolved chains: a comment or a stage name proves nothing.
#[test]
fn demo_specs_cover_every_model() {
    let used = uses(&demo_specs());
    for kind in StageKind::ALL {
        let word = kind.keyword();
        assert!(used.contains(word), "no demo spec has a `{word}` stage");
    }
    for fact in [
        "sensor rtd",
        "sensor thermocouple",
        "sensor thermistor",
        "sensor ic_voltage",
        "sensor ic_current",
        "sensor strain_gauge",
        "sensor transducer",
        "sensor resistor",
        "bridge divider",
        "bridge quarter",
        "wires 2",
        "wires 3",
        "wires 4",
        "cold_junction",
        "lowpass rc",
        "lowpass butterworth",
        "lowpass bessel",
        "bias_voltage",
        "amplifier.ref",
        "ref_range",
        "sampling_capacitance",
    ] {
        assert!(used.contains(fact), "no demo spec uses `{fact}`");
    }
}

/// What resolved chains use, as words: each stage's kind, `kind model`,
/// every parameter's name, `name word` or `name count` for a parameter
/// given as one, and `kind.port` for every port an edge arrives at.
fn uses(specs: &[std::path::PathBuf]) -> BTreeSet<String> {
    let mut used = BTreeSet::new();
    for spec in specs {
        let bytes = std::fs::read(spec).expect("a demo spec reads");
        let base = spec.parent().expect("a spec has a folder");
        let name = spec.to_string_lossy();
        let checked = check_bytes(&name, &bytes, base, &mut PartsCache::default());
        for chain in &checked.chains {
            for stage in &chain.stages {
                let kind = stage.kind.keyword();
                used.insert(kind.to_string());
                used.extend(stage.model.map(|m| format!("{kind} {m}")));
                for param in &stage.params {
                    used.insert(param.name.to_string());
                    match &param.value {
                        ParamValue::Word(w) => used.insert(format!("{} {w}", param.name)),
                        ParamValue::Count(n) => used.insert(format!("{} {n}", param.name)),
                        _ => false,
                    };
                }
            }
            for edge in &chain.connections {
                let kind = chain.stages[edge.to].kind.keyword();
                used.insert(format!("{kind}.{}", edge.to_port.name()));
            }
        }
    }
    used
}

/// The finder reads what the chain does, not its comments or names.
#[test]
fn uses_are_read_from_the_chain_not_its_text() {
    let dir = common::temp_dir("demo", "uses");
    let spec = dir.join("t.catena");
    let text = std::fs::read_to_string(root().join("specs/cold_store.catena"))
        .expect("a demo reads")
        .replace("wires 3", "wires 3 # wires 4, thermocouple");
    std::fs::write(&spec, text).expect("the spec is written");
    let used = uses(&[spec]);
    assert!(used.contains("wires 3"));
    assert!(!used.contains("wires 4") && !used.contains("sensor thermocouple"));
}

fn summary(name: &str, text: &str) -> Vec<(String, String, usize)> {
    let checked = check_str(name, text);
    let file = checked.file.clone();
    checked
        .findings
        .sorted()
        .into_iter()
        .map(|f| {
            let line = file
                .as_ref()
                .map(|s| s.line_column(f.primary_offset()).0)
                .unwrap_or(0);
            (f.code.as_str().to_string(), f.message, line)
        })
        .collect()
}

/// Formatting is idempotent and keeps every finding (code, message, line)
/// of the demo specs and of the invalid fixtures that parse.
#[test]
fn fmt_is_idempotent_and_changes_no_finding() {
    let mut files = demo_specs();
    let invalid = root().join("tests/fixtures/invalid");
    for e in std::fs::read_dir(&invalid).expect("fixtures") {
        let p = e.expect("entry").path();
        if p.extension().is_some_and(|x| x == "catena") {
            files.push(p);
        }
    }
    files.sort();
    for path in files {
        let Ok(text) = std::fs::read_to_string(&path) else {
            continue;
        };
        let file = catena::diagnostics::SourceFile::new("x", text.clone());
        if catena::syntax::parse(&file).1.has_errors() {
            continue;
        }
        let once = format_source(&text);
        assert_eq!(
            format_source(&once),
            once,
            "{} is not idempotent",
            path.display()
        );
        // Blank lines may collapse, so compare findings without line numbers
        // when the layout moved lines; codes and messages must stay.
        let strip = |v: Vec<(String, String, usize)>| {
            v.into_iter().map(|(c, m, _)| (c, m)).collect::<Vec<_>>()
        };
        assert_eq!(
            strip(summary("x", &text)),
            strip(summary("x", &once)),
            "formatting {} changed its findings",
            path.display()
        );
    }
}

/// The README's tour of the language is a spec that checks clean when it
/// sits beside the shipped demos, with the part it names from the shipped
/// library.
#[test]
fn readme_tour_checks_clean() {
    let readme = std::fs::read_to_string(root().join("README.md")).expect("README.md");
    let tour = readme
        .split("## A tour of the language")
        .nth(1)
        .and_then(|rest| rest.split("```\n").nth(1))
        .expect("the tour has a code block");
    assert!(
        tour.contains("use \"parts/") && tour.contains(" : "),
        "{tour}"
    );
    let checked = catena::check::check_bytes(
        "tour.catena",
        tour.as_bytes(),
        &root().join("specs"),
        &mut catena::model::PartsCache::default(),
    );
    let findings: Vec<String> = checked
        .findings
        .iter()
        .map(|f| format!("{} {}", f.code.as_str(), f.message))
        .collect();
    assert!(checked.resolved && findings.is_empty(), "{findings:?}");
}

/// Every part of the shipped library is used by a demo or a test spec, so
/// none of them can stop checking unnoticed.
#[test]
fn every_shipped_part_is_used() {
    let mut specs = String::new();
    for dir in ["specs", "tests/fixtures"] {
        collect_specs(&root().join(dir), &mut specs);
    }
    let mut parts = 0;
    for entry in std::fs::read_dir(root().join("specs/parts")).expect("specs/parts/") {
        let path = entry.expect("entry").path();
        let text = std::fs::read_to_string(&path).expect("parts file");
        let names = text.lines().filter_map(|l| {
            let name = l.strip_prefix("  ")?.strip_suffix(':')?;
            name.chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '_')
                .then_some(name)
        });
        for name in names {
            parts += 1;
            assert!(
                specs.contains(&format!(": {name} ")),
                "part `{name}` of {} is used by no spec",
                path.display()
            );
        }
    }
    assert!(parts >= 10, "found {parts} parts");
}

fn collect_specs(dir: &std::path::Path, out: &mut String) {
    for entry in std::fs::read_dir(dir).expect("readable folder") {
        let path = entry.expect("entry").path();
        if path.is_dir() {
            collect_specs(&path, out);
        } else if path.extension().is_some_and(|e| e == "catena") {
            out.push_str(&std::fs::read_to_string(&path).expect("spec"));
        }
    }
}

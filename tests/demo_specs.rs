//! The demo specs cannot rot: each checks clean, is in canonical layout,
//! and formatting never changes what `check` reports.

mod common;

use catena::check::check_str;
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
/// front end knows.
#[test]
fn demo_specs_cover_every_model() {
    let mut text = String::new();
    for spec in demo_specs() {
        text.push_str(&std::fs::read_to_string(spec).expect("readable"));
    }
    for word in [
        "excitation",
        "sensor",
        "bridge",
        "amplifier",
        "filter",
        "adc",
        "convert",
        "rtd",
        "thermocouple",
        "thermistor",
        "ic_voltage",
        "ic_current",
        "strain_gauge",
        "transducer",
        "resistor",
        "divider",
        "quarter",
        "wires 2",
        "wires 3",
        "wires 4",
        "cold_junction",
        "butterworth",
        "bessel",
        "lowpass rc",
    ] {
        assert!(text.contains(word), "no demo spec uses `{word}`");
    }
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

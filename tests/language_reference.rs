//! The language reference (`grammar/README.md`) names every keyword of the
//! grammar and every parameter and model of the schema.

use std::collections::BTreeSet;

fn reference() -> String {
    std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/grammar/README.md"))
        .expect("reference exists")
}

/// The whole words of a text: runs of letters, digits and `_`, so that
/// `in` is not found in `input` nor `ref` in `ref_range`.
fn words(text: &str) -> BTreeSet<&str> {
    text.split(|c: char| !(c.is_alphanumeric() || c == '_'))
        .filter(|w| !w.is_empty())
        .collect()
}

#[test]
fn words_are_whole() {
    let found = words("`ref_range` and input (in.ref)");
    for word in ["ref_range", "and", "input", "in", "ref"] {
        assert!(found.contains(word), "{word}");
    }
    assert!(!words("`ref_range` input").contains("ref"));
    assert!(!words("input").contains("in"));
}

/// Every word-like string literal in the grammar, e.g. `"measurand"`.
fn grammar_keywords() -> BTreeSet<String> {
    let grammar =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/grammar/catena.pest"))
            .expect("grammar exists");
    let mut words = BTreeSet::new();
    for line in grammar
        .lines()
        .filter(|l| !l.trim_start().starts_with("//"))
    {
        for (i, piece) in line.split('"').enumerate() {
            if i % 2 == 1
                && piece.len() > 1
                && piece.chars().all(|c| c.is_ascii_alphabetic() || c == '_')
            {
                words.insert(piece.to_string());
            }
        }
    }
    words
}

#[test]
fn every_grammar_keyword_is_documented() {
    let text = reference();
    let documented = words(&text);
    let keywords = grammar_keywords();
    assert!(
        keywords.contains("measurand") && keywords.contains("excitation"),
        "keywords found: {keywords:?}"
    );
    let missing: Vec<&String> = keywords
        .iter()
        .filter(|w| !documented.contains(w.as_str()))
        .collect();
    assert!(
        missing.is_empty(),
        "keywords missing from grammar/README.md: {missing:?}"
    );
}

#[test]
fn every_parameter_is_documented() {
    let text = reference();
    let documented = words(&text);
    let missing: Vec<&str> = catena::model::schema::all_names()
        .filter(|n| !documented.contains(n))
        .collect();
    assert!(
        missing.is_empty(),
        "parameters missing from grammar/README.md: {missing:?}"
    );
    // A curve or type (some are one letter) counts only in its model line's
    // code span, `thermocouple type B | E | ...`.
    for (model, choices) in [
        ("`rtd ", catena::model::schema::RTD_CURVES),
        (
            "`thermocouple type ",
            catena::model::schema::THERMOCOUPLE_TYPES,
        ),
    ] {
        let at = text
            .find(model)
            .unwrap_or_else(|| panic!("nothing documents {model}`"));
        let span = text[at + 1..].split('`').next().unwrap_or("");
        let listed = words(span);
        for word in choices {
            assert!(
                listed.contains(word),
                "`{word}` missing from {model}...` in grammar/README.md"
            );
        }
    }
}

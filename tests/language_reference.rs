//! The language reference (`grammar/README.md`) names every keyword of the
//! grammar and every parameter and model of the schema.

use std::collections::BTreeSet;

fn reference() -> String {
    std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/grammar/README.md"))
        .expect("reference exists")
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
    let words = grammar_keywords();
    assert!(
        words.contains("measurand") && words.contains("excitation"),
        "keywords found: {words:?}"
    );
    let missing: Vec<&String> = words
        .iter()
        .filter(|w| !text.contains(&format!("`{w}")) && !text.contains(&format!(" {w} ")))
        .collect();
    assert!(
        missing.is_empty(),
        "keywords missing from grammar/README.md: {missing:?}"
    );
}

#[test]
fn every_parameter_is_documented() {
    let text = reference();
    let missing: Vec<&str> = catena::model::schema::all_names()
        .filter(|n| !text.contains(&format!("`{n}")) && !text.contains(&format!(" {n} ")))
        .collect();
    assert!(
        missing.is_empty(),
        "parameters missing from grammar/README.md: {missing:?}"
    );
    for word in catena::model::schema::RTD_CURVES
        .iter()
        .chain(catena::model::schema::THERMOCOUPLE_TYPES)
    {
        assert!(
            text.contains(word),
            "`{word}` missing from grammar/README.md"
        );
    }
}

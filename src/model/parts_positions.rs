//! Where each part and parameter of a parts file is written. serde_yaml
//! gives values without positions, and searching the text for them finds
//! the wrong place (a part named like a key elsewhere, a quoted value with
//! escapes); a second reading with saphyr's `MarkedYaml` keeps positions.
//! It runs only on a file serde_yaml has accepted (so its aliases and
//! nesting are already bounded).

use std::collections::HashMap;

use saphyr::{LoadableYamlNode, MarkedYaml, Scalar, YamlData};

use crate::diagnostics::Span;

/// One parameter line: its key and its value as written (quotes
/// included), and whether that source text is the value itself (a plain
/// scalar, or a quoted one without escapes), so spans inside it are exact.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct KeyValue {
    pub key: Span,
    pub value: Span,
    /// Byte offset where the value's own text starts (inside any quote).
    pub text_at: usize,
    /// The value carries a YAML tag (`!!str 4`), which serde_yaml resolves
    /// silently for the standard ones.
    pub tag: Option<usize>,
}

#[derive(Clone, Debug, Default)]
pub struct PartPositions {
    pub name: Span,
    pub keys: HashMap<String, KeyValue>,
    /// Keys that are not words (`1:`, `[a, b]:`), in the order written.
    pub odd_keys: Vec<Span>,
}

/// Positions by part name, in bytes.
#[derive(Debug, Default)]
pub struct Positions {
    pub parts: HashMap<String, PartPositions>,
    /// Part names that are not words, in the order written.
    pub odd_names: Vec<Span>,
}

/// Character index to byte offset for `text` (saphyr counts characters).
struct CharToByte {
    bytes: Vec<usize>,
    len: usize,
}

impl CharToByte {
    fn new(text: &str) -> Self {
        CharToByte {
            bytes: text.char_indices().map(|(b, _)| b).collect(),
            len: text.len(),
        }
    }

    fn at(&self, chars: usize) -> usize {
        self.bytes.get(chars).copied().unwrap_or(self.len)
    }
}

fn span_of(node: &MarkedYaml, map: &CharToByte) -> Span {
    let start = map.at(node.span.start.index());
    let end = map.at(node.span.end.index()).max(start);
    Span::new(start, end)
}

fn key_text<'a>(node: &'a MarkedYaml) -> Option<&'a str> {
    match &node.data {
        YamlData::Value(Scalar::String(s)) => Some(s.as_ref()),
        _ => None,
    }
}

/// Reads the positions of every part and parameter; None when the text
/// does not load (serde_yaml's finding stands then).
pub fn positions(text: &str) -> Option<Positions> {
    let docs = MarkedYaml::load_from_str(text).ok()?;
    let map = CharToByte::new(text);
    let root = docs.first()?;
    let YamlData::Mapping(top) = &root.data else {
        return None;
    };
    let (_, parts) = top.iter().find(|(k, _)| key_text(k) == Some("parts"))?;
    let YamlData::Mapping(parts) = &parts.data else {
        return None;
    };
    let mut out = Positions::default();
    for (name, body) in parts.iter() {
        let Some(name_text) = key_text(name) else {
            out.odd_names.push(span_of(name, &map));
            continue;
        };
        let mut part = PartPositions {
            name: span_of(name, &map),
            ..PartPositions::default()
        };
        if let YamlData::Mapping(body) = &body.data {
            for (key, value) in body.iter() {
                match key_text(key) {
                    Some(key_name) => {
                        let placed = key_value(text, key, value, &map);
                        part.keys.insert(key_name.to_string(), placed);
                    }
                    None => part.odd_keys.push(span_of(key, &map)),
                }
            }
        }
        out.parts.insert(name_text.to_string(), part);
    }
    Some(out)
}

fn key_value(text: &str, key: &MarkedYaml, value: &MarkedYaml, map: &CharToByte) -> KeyValue {
    let key_span = span_of(key, map);
    let mut value_span = span_of(value, map);
    // An empty value (`ic_voltage:`) sits just after the colon.
    if value_span.is_empty() || value_span.start < key_span.end {
        let after = text[key_span.end..]
            .find(':')
            .map_or(key_span.end, |i| key_span.end + i + 1);
        value_span = Span::new(after, after);
    }
    let written = &text[value_span.start..value_span.end];
    let quoted = written.starts_with(['"', '\'']);
    // A tag sits between the colon and the value (saphyr's span may or may
    // not include it).
    let before = text[key_span.end..value_span.start].trim_start_matches([':', ' ', '\t']);
    let tag = if written.starts_with('!') {
        Some(value_span.start)
    } else {
        before
            .starts_with('!')
            .then(|| value_span.start - before.len())
    };
    KeyValue {
        key: key_span,
        value: value_span,
        text_at: value_span.start + usize::from(quoted),
        tag,
    }
}

#[cfg(test)]
mod tests {
    use super::positions;

    /// A part named like a key elsewhere is found at its own place, and
    /// offsets are bytes even after non-ASCII text.
    #[test]
    fn parts_and_keys_are_placed_by_the_parser() {
        let text =
            "# ± µ\nparts:\n  gain:\n    kind: amplifier\n    gain: \"±±1 %\"\n  b:\n    gain: 5\n";
        let p = positions(text).unwrap();
        let part = &p.parts["gain"];
        assert_eq!(&text[part.name.start..part.name.end], "gain");
        assert!(text[..part.name.start].ends_with("parts:\n  "));
        let g = part.keys["gain"];
        assert_eq!(&text[g.value.start..g.value.end], "\"±±1 %\"");
        assert_eq!(&text[g.text_at..g.text_at + 2], "±");
        let b = p.parts["b"].keys["gain"];
        assert_eq!(&text[b.value.start..b.value.end], "5");
    }
}

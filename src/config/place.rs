//! Where a key or value sits in the configuration file. serde_yaml, which
//! reads the values, keeps no positions; the file is re-read with saphyr,
//! whose markers count characters, only when a place is needed.

use saphyr::{LoadableYamlNode, MarkedYaml, YamlData};

use crate::diagnostics::{SourceFile, Span};

/// The key (`key: true`) or the value at `path` (mapping keys, or
/// sequence indices as numbers); the whole file when it cannot be found.
pub fn locate(file: &SourceFile, path: &[&str], key: bool) -> Span {
    let text = file.text();
    let whole = Span::new(0, text.len().min(first_line_end(text)));
    let Ok(docs) = MarkedYaml::load_from_str(text) else {
        return whole;
    };
    let Some(mut node) = docs.first() else {
        return whole;
    };
    let mut key_span = None;
    for step in path {
        let next = match &node.data {
            YamlData::Mapping(map) => map
                .iter()
                .find(|(k, _)| k.data.as_str() == Some(step))
                .map(|(k, v)| (Some(k), v)),
            YamlData::Sequence(items) => step
                .parse::<usize>()
                .ok()
                .and_then(|i| items.get(i))
                .map(|v| (None, v)),
            _ => None,
        };
        let Some((k, v)) = next else {
            return whole;
        };
        key_span = k.map(|k| span_of(text, k));
        node = v;
    }
    match (key, key_span) {
        (true, Some(span)) => span,
        _ => span_of(text, node),
    }
}

/// A node's byte range, trimmed to its first line (a block value's end
/// marker lies on the line after it).
fn span_of(text: &str, node: &MarkedYaml) -> Span {
    let start = byte_at(text, node.span.start.index());
    let end = byte_at(text, node.span.end.index()).max(start);
    let line_end = start + first_line_end(&text[start..]);
    let end = end.min(line_end);
    let end = start + text[start..end].trim_end().len();
    Span::new(start, end.max(start))
}

fn first_line_end(text: &str) -> usize {
    text.find('\n').unwrap_or(text.len())
}

/// The byte offset of the `chars`-th character.
fn byte_at(text: &str, chars: usize) -> usize {
    text.char_indices()
        .nth(chars)
        .map(|(b, _)| b)
        .unwrap_or(text.len())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_and_values_are_found_past_non_ascii_text() {
        let text = "# µ‑room\nrules:\n  R602: deny\nparts:\n  - a.yaml\n  - bé.yaml\n";
        let file = SourceFile::new("catena.yaml", text);
        let at = |path: &[&str], key| file.slice(locate(&file, path, key)).to_string();
        assert_eq!(at(&["rules", "R602"], true), "R602");
        assert_eq!(at(&["rules", "R602"], false), "deny");
        assert_eq!(at(&["parts", "1"], false), "bé.yaml");
        assert_eq!(at(&["nowhere"], true), "# µ‑room");
    }
}

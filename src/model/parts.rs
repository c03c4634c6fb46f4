//! Parts libraries: `use "parts.yaml"` loads reusable part data. All YAML
//! handling is in this module, so the YAML parser could be swapped here.
//!
//! ```yaml
//! parts:
//!   inamp_x4:
//!     kind: amplifier
//!     gain: 4 ± 0.05 %
//!     offset: 20 uV max
//! ```
//! Values use the spec's own value syntax and get the same checks; a model
//! line without values (`thermistor`) is a key with an empty value.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use crate::diagnostics::{Code, Finding, Findings, SourceFile, Span};
use crate::syntax::ast::{Ident, Param, StageKind};

/// Parts files are small; this bounds a hostile one.
pub const MAX_PARTS_BYTES: usize = 1024 * 1024;

#[derive(Clone, Debug)]
pub struct Part {
    pub name: String,
    pub kind: StageKind,
    pub params: Vec<Param>,
    pub file: Arc<SourceFile>,
    pub name_span: Span,
    /// Some of its values were rejected (and reported).
    pub rejected: bool,
}

/// Loaded parts files of one run, by path, so a library shared by many
/// specs is read and checked once.
#[derive(Default)]
pub struct PartsCache {
    files: BTreeMap<PathBuf, Arc<Loaded>>,
}

#[derive(Debug, Default)]
pub struct Loaded {
    pub parts: Vec<Part>,
    pub findings: Findings,
}

impl PartsCache {
    pub fn load(&mut self, path: &Path, shown: &str) -> Arc<Loaded> {
        let key = std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf());
        if let Some(l) = self.files.get(&key) {
            return Arc::clone(l);
        }
        let loaded = Arc::new(load_file(path, shown));
        self.files.insert(key, Arc::clone(&loaded));
        loaded
    }
}

fn load_file(path: &Path, shown: &str) -> Loaded {
    let mut loaded = Loaded::default();
    let bytes = match crate::input::read_limited(path, MAX_PARTS_BYTES) {
        Ok(b) => b,
        Err(crate::input::ReadError::NotRegular(kind)) => {
            let file = SourceFile::new(shown, "");
            loaded.findings.push(
                Finding::new(
                    Code::L408,
                    &file,
                    format!("parts file `{shown}` is {kind}, not a regular file; it is not read"),
                )
                .help("name a YAML parts file in the `use` line"),
            );
            return loaded;
        }
        Err(crate::input::ReadError::Io(e)) => {
            let file = SourceFile::new(shown, "");
            loaded.findings.push(
                Finding::new(
                    Code::L401,
                    &file,
                    format!("cannot read parts file `{shown}`: {e}"),
                )
                .help("check the path in the `use` line; it is relative to the spec's folder"),
            );
            return loaded;
        }
    };
    if bytes.len() > MAX_PARTS_BYTES {
        let file = SourceFile::new(shown, "");
        loaded.findings.push(
            Finding::new(
                Code::L402,
                &file,
                format!("parts file is over {MAX_PARTS_BYTES} bytes, the limit"),
            )
            .help("split the library into several files"),
        );
        return loaded;
    }
    let text = match String::from_utf8(bytes) {
        Ok(t) => t,
        Err(_) => {
            let file = SourceFile::new(shown, "");
            loaded.findings.push(
                Finding::new(Code::L402, &file, "parts file is not UTF-8 text")
                    .help("parts files are YAML text"),
            );
            return loaded;
        }
    };
    let file = SourceFile::new(shown, text);
    parse_library(&file, &mut loaded);
    loaded
}

fn parse_library(file: &Arc<SourceFile>, loaded: &mut Loaded) {
    let doc: serde_yaml::Value = match serde_yaml::from_str(file.text()) {
        Ok(v) => v,
        Err(e) => {
            let at = e
                .location()
                .map(|l| l.index())
                .unwrap_or(0)
                .min(file.text().len());
            let message = e.to_string();
            let message = message
                .split(" at line ")
                .next()
                .unwrap_or(&message)
                .to_string();
            loaded.findings.push(
                Finding::new(
                    Code::L402,
                    file,
                    format!("parts file is not valid YAML: {}", message.to_lowercase()),
                )
                .label(Span::new(at, at), "here")
                .help("a parts file is a YAML mapping `parts:` of part names to parameter maps"),
            );
            return;
        }
    };
    let Some(parts) = doc.get("parts").and_then(|p| p.as_mapping()) else {
        loaded.findings.push(
            Finding::new(Code::L402, file, "parts file has no `parts:` mapping")
                .label(
                    Span::new(0, first_line_len(file)),
                    "expected `parts:` at the top",
                )
                .help("start the file with `parts:` and list parts under it"),
        );
        return;
    };
    for (name, body) in parts {
        let Some(name) = name.as_str() else { continue };
        let (name_span, body_start) = locate_key(file.text(), 0, name);
        let Some(body) = body.as_mapping() else {
            loaded.findings.push(
                Finding::new(
                    Code::L402,
                    file,
                    format!("part `{name}` is not a mapping of parameters"),
                )
                .label(name_span, "expected parameter lines under this name")
                .help("indent `kind:` and the parameters under the part's name"),
            );
            continue;
        };
        let kind = body.get("kind").and_then(|k| k.as_str());
        let Some(kind) = kind.and_then(StageKind::from_keyword) else {
            let (span, _) = locate_key(file.text(), body_start, "kind");
            let kinds = StageKind::ALL
                .iter()
                .map(|k| format!("`{}`", k.keyword()))
                .collect::<Vec<_>>()
                .join(", ");
            loaded.findings.push(
                Finding::new(
                    Code::L402,
                    file,
                    format!("part `{name}` has no valid `kind`"),
                )
                .label(
                    if kind.is_some() { span } else { name_span },
                    "`kind` missing or unknown",
                )
                .help(format!("add `kind:` with one of {kinds}")),
            );
            continue;
        };
        let mut params = Vec::new();
        let mut rejected = false;
        for (key, value) in body {
            let Some(key) = key.as_str() else { continue };
            if key == "kind" || key == "description" {
                continue;
            }
            let (key_span, value_at) = locate_key(file.text(), body_start, key);
            let text = match value {
                serde_yaml::Value::Null => String::new(),
                serde_yaml::Value::String(s) => s.clone(),
                serde_yaml::Value::Number(n) => n.to_string(),
                serde_yaml::Value::Bool(b) => b.to_string(),
                _ => {
                    loaded.findings.push(
                        Finding::new(
                            Code::L405,
                            file,
                            format!("`{key}` of part `{name}` is not a single value"),
                        )
                        .label(key_span, "a list or mapping")
                        .help(format!(
                            "write the value on one line, as in a spec: `{key}: 4 ± 1 %`"
                        )),
                    );
                    rejected = true;
                    continue;
                }
            };
            let offset = value_offset(file.text(), value_at, &text);
            let (values, found) = crate::syntax::parse_values(file, key, &text, offset);
            let failed = found.has_errors();
            loaded.findings.extend(found);
            if failed {
                rejected = true;
                continue;
            }
            params.push(Param {
                name: Ident {
                    name: key.to_string(),
                    span: key_span,
                },
                values,
                span: key_span.to(Span::new(offset, offset + text.len())),
            });
        }
        loaded.parts.push(Part {
            name: name.to_string(),
            kind,
            params,
            file: Arc::clone(file),
            name_span,
            rejected,
        });
    }
}

fn first_line_len(file: &SourceFile) -> usize {
    file.text().find('\n').unwrap_or(file.text().len())
}

/// Finds `key:` at or after `from` (YAML gives no spans): the key's span
/// and the offset just after its colon.
fn locate_key(text: &str, from: usize, key: &str) -> (Span, usize) {
    let mut offset = 0;
    for line in text.split_inclusive('\n') {
        let start = offset;
        offset += line.len();
        if start < from {
            continue;
        }
        let trimmed = line.trim_start();
        let indent = line.len() - trimmed.len();
        let bare = trimmed
            .strip_prefix(key)
            .filter(|r| r.trim_start().starts_with(':'));
        let quoted = [("\"", "\""), ("'", "'")].iter().find_map(|(o, c)| {
            trimmed
                .strip_prefix(o)
                .and_then(|r| r.strip_prefix(key))
                .and_then(|r| r.strip_prefix(c))
                .filter(|r| r.trim_start().starts_with(':'))
        });
        if let Some(rest) = bare.or(quoted) {
            let key_start = start + indent;
            let colon = start + line.len() - rest.len() + rest.find(':').unwrap_or(0);
            return (Span::new(key_start, colon), colon + 1);
        }
    }
    (
        Span::new(from.min(text.len()), from.min(text.len())),
        from.min(text.len()),
    )
}

/// Where a scalar value's text starts, when it is written plainly or
/// quoted on the key's line; else just after the colon.
fn value_offset(text: &str, after_colon: usize, value: &str) -> usize {
    let rest = text.get(after_colon..).unwrap_or("");
    let line = rest.split('\n').next().unwrap_or("");
    match line.find(value) {
        Some(i) if !value.is_empty() => after_colon + i,
        _ => after_colon + (line.len() - line.trim_start().len()),
    }
}

#[cfg(test)]
mod tests {
    use super::locate_key;

    #[test]
    fn keys_are_found_after_their_part() {
        let text = "parts:\n  a:\n    gain: 4\n  b:\n    gain: 5\n";
        let (_, b_at) = locate_key(text, 0, "b");
        let (span, after) = locate_key(text, b_at, "gain");
        assert_eq!(&text[span.start..span.end], "gain");
        assert_eq!(text[after..].trim_start().lines().next(), Some("5"));
    }
}

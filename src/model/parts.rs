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

use super::parts_positions::{positions, KeyValue, PartPositions};

/// Flow nesting (`[[[...` or `{{{...`) deeper than this is refused before
/// the YAML parser sees it: the parser's own recursion limit bites only
/// after work that grows with the square of the depth. A parts file needs
/// three levels.
pub const MAX_YAML_DEPTH: usize = 64;

/// The first place where flow brackets nest deeper than [`MAX_YAML_DEPTH`]
/// (outside quotes and comments), in one linear pass: the depth there and
/// its byte offset.
fn too_deep(text: &str) -> Option<(usize, usize)> {
    let (mut depth, mut quote, mut comment, mut prev) = (0usize, None::<u8>, false, b'\n');
    for (i, &b) in text.as_bytes().iter().enumerate() {
        match (quote, b) {
            _ if comment => comment = b != b'\n',
            (Some(q), _) if b == q && !(q == b'"' && prev == b'\\') => quote = None,
            (Some(_), _) => {}
            // A quote opens a scalar only where a token starts (`don't` has none).
            (None, b'"' | b'\'') if prev.is_ascii_whitespace() || b"[{,:-".contains(&prev) => {
                quote = Some(b)
            }
            (None, b'#') if prev.is_ascii_whitespace() => comment = true,
            (None, b'[' | b'{') => {
                depth += 1;
                if depth > MAX_YAML_DEPTH {
                    return Some((depth, i));
                }
            }
            (None, b']' | b'}') => depth = depth.saturating_sub(1),
            _ => {}
        }
        prev = if prev == b'\\' && b == b'\\' { 0 } else { b };
    }
    None
}

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
    if let Some((depth, at)) = too_deep(file.text()) {
        loaded.findings.push(
            Finding::new(
                Code::L402,
                &file,
                format!("parts file nests {depth} levels deep; parts files nest at most {MAX_YAML_DEPTH}"),
            )
            .label(Span::new(at, at + 1), "too deep here")
            .help("a part is a mapping of parameters to one-line values: flatten the nesting"),
        );
        return loaded;
    }
    parse_library(&file, &mut loaded);
    loaded
}

fn parse_library(file: &Arc<SourceFile>, loaded: &mut Loaded) {
    let Some(doc) = parse_document(file, &mut loaded.findings) else {
        return;
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
    let positions = positions(file.text()).unwrap_or_default();
    let mut odd_names = positions.odd_names.iter();
    for (name, body) in parts {
        let Some(name) = name.as_str() else {
            let at = odd_names.next().copied().unwrap_or_default();
            loaded
                .findings
                .push(not_a_string_key(file, name, "part name").label(at, "not a word"));
            continue;
        };
        let placed = positions.parts.get(name).cloned().unwrap_or_default();
        if let Some(part) = read_part(file, name, body, &placed, &mut loaded.findings) {
            loaded.parts.push(part);
        }
    }
}

/// The file as YAML, or L402 where the parser stopped.
fn parse_document(file: &Arc<SourceFile>, findings: &mut Findings) -> Option<serde_yaml::Value> {
    let e = match serde_yaml::from_str(file.text()) {
        Ok(v) => return Some(v),
        Err(e) => e,
    };
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
    findings.push(
        Finding::new(
            Code::L402,
            file,
            format!("parts file is not valid YAML: {}", message.to_lowercase()),
        )
        .label(Span::new(at, at), "here")
        .help("a parts file is a YAML mapping `parts:` of part names to parameter maps"),
    );
    None
}

/// One part: a mapping with its `kind` and parameter lines; None when it
/// is not one (reported).
fn read_part(
    file: &Arc<SourceFile>,
    name: &str,
    body: &serde_yaml::Value,
    placed: &PartPositions,
    findings: &mut Findings,
) -> Option<Part> {
    let name_span = placed.name;
    if let serde_yaml::Value::Tagged(t) = body {
        findings.push(tagged(file, name_span, name, &t.tag.to_string()));
        return None;
    }
    let Some(body) = body.as_mapping() else {
        findings.push(
            Finding::new(
                Code::L402,
                file,
                format!("part `{name}` is not a mapping of parameters"),
            )
            .label(name_span, "expected parameter lines under this name")
            .help("indent `kind:` and the parameters under the part's name"),
        );
        return None;
    };
    let kind = part_kind(file, name, body, placed, findings)?;
    let mut params = Vec::new();
    let mut rejected = false;
    let mut odd_keys = placed.odd_keys.iter();
    for (key, value) in body {
        let Some(key) = key.as_str() else {
            let at = odd_keys.next().copied().unwrap_or(name_span);
            let finding = not_a_string_key(file, key, "parameter name");
            findings.push(finding.label(at, "not a word"));
            rejected = true;
            continue;
        };
        if key == "kind" || key == "description" {
            continue;
        }
        let at = placed.keys.get(key).copied().unwrap_or_default();
        match read_param(file, name, key, value, &at, findings) {
            Some(param) => params.push(param),
            None => rejected = true,
        }
    }
    Some(Part {
        name: name.to_string(),
        kind,
        params,
        file: Arc::clone(file),
        name_span,
        rejected,
    })
}

/// The part's `kind`, or L402 where it is missing or unknown.
fn part_kind(
    file: &Arc<SourceFile>,
    name: &str,
    body: &serde_yaml::Mapping,
    placed: &PartPositions,
    findings: &mut Findings,
) -> Option<StageKind> {
    let kind = body.get("kind").and_then(|k| k.as_str());
    if let Some(kind) = kind.and_then(StageKind::from_keyword) {
        return Some(kind);
    }
    let span = placed.keys.get("kind").map(|k| k.value);
    let kinds = StageKind::ALL
        .iter()
        .map(|k| format!("`{}`", k.keyword()))
        .collect::<Vec<_>>()
        .join(", ");
    findings.push(
        Finding::new(
            Code::L402,
            file,
            format!("part `{name}` has no valid `kind`"),
        )
        .label(
            span.filter(|_| kind.is_some()).unwrap_or(placed.name),
            "`kind` missing or unknown",
        )
        .help(format!("add `kind:` with one of {kinds}")),
    );
    None
}

/// One parameter line of a part, parsed as a spec's; None when it is
/// rejected (reported).
fn read_param(
    file: &Arc<SourceFile>,
    name: &str,
    key: &str,
    value: &serde_yaml::Value,
    at: &KeyValue,
    findings: &mut Findings,
) -> Option<Param> {
    if let Some(tag_at) = at.tag {
        let tag = file.text()[tag_at..]
            .split_whitespace()
            .next()
            .unwrap_or("!");
        let tag_span = Span::new(tag_at, tag_at + tag.len());
        findings.push(tagged(file, tag_span, key, tag));
        return None;
    }
    let text = value_text(file, name, key, value, at, findings)?;
    let (values, found) = crate::syntax::parse_values(file, key, &text, at.text_at);
    let failed = found.has_errors();
    findings.extend(found);
    if failed {
        return None;
    }
    Some(Param {
        name: Ident {
            name: key.to_string(),
            span: at.key,
        },
        values,
        span: at.key.to(at.value),
    })
}

/// A YAML value as the text a spec would write after the name; None for
/// one that is not a single value (reported).
fn value_text(
    file: &Arc<SourceFile>,
    name: &str,
    key: &str,
    value: &serde_yaml::Value,
    at: &KeyValue,
    findings: &mut Findings,
) -> Option<String> {
    match value {
        serde_yaml::Value::Null => Some(String::new()),
        serde_yaml::Value::String(s) => Some(s.clone()),
        serde_yaml::Value::Number(n) => {
            let written = file.text().get(at.value.start..at.value.end).unwrap_or("");
            if yaml_only_number(written) {
                findings.push(yaml_number(file, at.value, written, n));
                return None;
            }
            Some(n.to_string())
        }
        serde_yaml::Value::Bool(b) => Some(b.to_string()),
        serde_yaml::Value::Tagged(t) => {
            findings.push(tagged(file, at.value, key, &t.tag.to_string()));
            None
        }
        _ => {
            findings.push(
                Finding::new(
                    Code::L405,
                    file,
                    format!("`{key}` of part `{name}` is not a single value"),
                )
                .label(at.key, "a list or mapping")
                .help(format!(
                    "write the value on one line, as in a spec: `{key}: 4 ± 1 %`"
                )),
            );
            None
        }
    }
}

/// Number forms YAML reads but a spec does not (`0x80`, `0o17`, `1_000`,
/// `.inf`): taken silently they would give a value nobody wrote.
fn yaml_only_number(written: &str) -> bool {
    let w = written.trim_start_matches(['+', '-']).to_ascii_lowercase();
    w.starts_with("0x")
        || w.starts_with("0o")
        || w.starts_with("0b")
        || w.contains('_')
        || w.starts_with('.') && w.len() > 1 && !w.as_bytes()[1].is_ascii_digit()
}

/// L411 for a number in a YAML-only form.
fn yaml_number(file: &Arc<SourceFile>, at: Span, written: &str, n: &serde_yaml::Number) -> Finding {
    Finding::new(
        Code::L411,
        file,
        format!("`{written}` is a YAML number form the spec language does not have"),
    )
    .label(at, format!("YAML reads this as {n}"))
    .help(format!(
        "write the value as in a spec, with its unit: `{n}` and the unit it is in"
    ))
}

/// L409: YAML allows any value as a key; a parts file names parts and
/// parameters with words.
fn not_a_string_key(file: &Arc<SourceFile>, key: &serde_yaml::Value, what: &str) -> Finding {
    let shown = serde_yaml::to_string(key)
        .map(|t| t.trim().to_string())
        .unwrap_or_default();
    let shown: String = shown.chars().take(40).collect();
    Finding::new(
        Code::L409,
        file,
        format!("a {what} must be a word; `{shown}` is not one"),
    )
    .help("name parts and parameters with words, as in a spec: `inamp_x4:`, `gain:`")
}

/// L410: a YAML tag would change how a value is read behind the reader's
/// back; parts files have none.
fn tagged(file: &Arc<SourceFile>, at: Span, name: &str, tag: &str) -> Finding {
    Finding::new(
        Code::L410,
        file,
        format!("`{name}` carries the YAML tag `{tag}`; parts files use no tags"),
    )
    .label(at, "tagged here")
    .help(format!("remove `{tag}` and write the value as in a spec"))
}

fn first_line_len(file: &SourceFile) -> usize {
    file.text().find('\n').unwrap_or(file.text().len())
}

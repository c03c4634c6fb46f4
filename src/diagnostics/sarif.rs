//! SARIF 2.1.0 (OASIS) output: one run, one rule per code that occurs,
//! one result per finding. Our own serde structs carry only the properties
//! Catena fills; `tests/reference/sarif_schema.py` validates the output
//! against the published schema.

use serde::Serialize;

use super::code::{Code, Severity};
use super::finding::{Finding, Label};
use super::source::SourceFile;

const SCHEMA_URI: &str =
    "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json";

#[derive(Serialize)]
struct Log {
    #[serde(rename = "$schema")]
    schema: &'static str,
    version: &'static str,
    runs: [Run; 1],
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Run {
    tool: Tool,
    results: Vec<SarifResult>,
    /// Catena counts columns in characters (Unicode scalar values).
    column_kind: &'static str,
}

#[derive(Serialize)]
struct Tool {
    driver: Driver,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Driver {
    name: &'static str,
    version: &'static str,
    rules: Vec<Rule>,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Rule {
    id: &'static str,
    short_description: Text,
    full_description: Text,
    help: Markdown,
    default_configuration: Configuration,
}

#[derive(Serialize)]
struct Text {
    text: String,
}

#[derive(Serialize)]
struct Markdown {
    text: String,
    markdown: String,
}

#[derive(Serialize)]
struct Configuration {
    level: &'static str,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct SarifResult {
    rule_id: &'static str,
    rule_index: usize,
    level: &'static str,
    message: Text,
    locations: Vec<Location>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    related_locations: Vec<Location>,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Location {
    #[serde(skip_serializing_if = "Option::is_none")]
    id: Option<usize>,
    physical_location: PhysicalLocation,
    #[serde(skip_serializing_if = "Option::is_none")]
    message: Option<Text>,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct PhysicalLocation {
    artifact_location: ArtifactLocation,
    #[serde(skip_serializing_if = "Option::is_none")]
    region: Option<Region>,
}

#[derive(Serialize)]
struct ArtifactLocation {
    uri: String,
}

/// Lines and columns are 1-based, the end column one past the last
/// character; the byte range is given as bytes, never as characters.
#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Region {
    start_line: usize,
    start_column: usize,
    end_line: usize,
    end_column: usize,
    byte_offset: usize,
    byte_length: usize,
}

pub(super) fn level(severity: Severity) -> &'static str {
    match severity {
        Severity::Error => "error",
        Severity::Warning => "warning",
    }
}

/// The SARIF log of one `check` run, pretty-printed, ending in a newline.
pub fn render_sarif(findings: &[Finding]) -> String {
    let mut codes: Vec<Code> = findings.iter().map(|f| f.code).collect();
    codes.sort();
    codes.dedup();
    let log = Log {
        schema: SCHEMA_URI,
        version: "2.1.0",
        runs: [Run {
            tool: Tool {
                driver: Driver {
                    name: "catena",
                    version: env!("CARGO_PKG_VERSION"),
                    rules: codes.iter().map(|&c| rule(c)).collect(),
                },
            },
            results: findings
                .iter()
                .map(|f| result(f, codes.binary_search(&f.code).unwrap_or(0)))
                .collect(),
            column_kind: "unicodeCodePoints",
        }],
    };
    // Serialising plain owned data cannot fail.
    let mut out = serde_json::to_string_pretty(&log).unwrap_or_default();
    out.push('\n');
    out
}

fn rule(code: Code) -> Rule {
    let page = code.explain();
    Rule {
        id: code.as_str(),
        short_description: Text {
            text: code.title().to_string(),
        },
        full_description: Text {
            text: first_paragraph(page),
        },
        help: Markdown {
            text: page.to_string(),
            markdown: page.to_string(),
        },
        default_configuration: Configuration {
            level: level(code.severity()),
        },
    }
}

/// The explain page's first paragraph after its heading, on one line.
fn first_paragraph(page: &str) -> String {
    page.lines()
        .skip_while(|l| l.starts_with('#') || l.trim().is_empty())
        .take_while(|l| !l.trim().is_empty())
        .collect::<Vec<_>>()
        .join(" ")
}

fn result(f: &Finding, rule_index: usize) -> SarifResult {
    let (primary, related) = match f.labels.split_first() {
        Some((first, rest)) => (Some(first), rest),
        None => (None, &[][..]),
    };
    SarifResult {
        rule_id: f.code.as_str(),
        rule_index,
        level: level(f.severity()),
        message: Text {
            text: full_message(f),
        },
        locations: vec![location(&f.file, primary, None)],
        related_locations: related
            .iter()
            .enumerate()
            .map(|(i, l)| location(&f.file, Some(l), Some(i + 1)))
            .collect(),
    }
}

/// The message with what follows it in the human report: the help line and
/// the finding it follows from.
pub(super) fn full_message(f: &Finding) -> String {
    let mut text = f.message.clone();
    if let Some(h) = &f.help {
        text.push_str("\nhelp: ");
        text.push_str(h);
    }
    if let Some(c) = &f.cause {
        text.push_str(&format!(
            "\nthis follows from {} on line {}: fix that first",
            c.code.as_str(),
            c.line
        ));
    }
    text
}

fn location(file: &SourceFile, label: Option<&Label>, id: Option<usize>) -> Location {
    Location {
        id,
        physical_location: PhysicalLocation {
            artifact_location: ArtifactLocation {
                uri: file_uri(file.name()),
            },
            region: label.map(|l| region(file, l)),
        },
        message: label.filter(|l| !l.text.is_empty()).map(|l| Text {
            text: l.text.clone(),
        }),
    }
}

fn region(file: &SourceFile, label: &Label) -> Region {
    let (start_line, start_column) = file.line_column(label.span.start);
    let (end_line, end_column) = file.line_column(label.span.end.max(label.span.start));
    Region {
        start_line,
        start_column,
        end_line,
        end_column,
        byte_offset: label.span.start,
        byte_length: label.span.len(),
    }
}

/// A path as a URI reference: relative paths stay relative (resolved
/// against the folder the tool ran in), absolute ones become `file:` URIs;
/// characters a URI reserves are percent-encoded.
pub(super) fn file_uri(path: &str) -> String {
    let path = path.replace('\\', "/");
    let mut out = String::with_capacity(path.len());
    for byte in path.bytes() {
        match byte {
            b'A'..=b'Z'
            | b'a'..=b'z'
            | b'0'..=b'9'
            | b'-'
            | b'.'
            | b'_'
            | b'~'
            | b'/'
            | b'+'
            | b'='
            | b'@' => out.push(byte as char),
            _ => out.push_str(&format!("%{byte:02X}")),
        }
    }
    if out.starts_with('/') {
        format!("file://{out}")
    } else {
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostics::Span;

    #[test]
    fn uris_encode_what_a_uri_reserves() {
        assert_eq!(file_uri("specs/a b#1.catena"), "specs/a%20b%231.catena");
        assert_eq!(file_uri("/tmp/x.catena"), "file:///tmp/x.catena");
        assert_eq!(file_uri("ä.catena"), "%C3%A4.catena");
    }

    #[test]
    fn columns_count_characters_and_bytes_stay_bytes() {
        let file = SourceFile::new("a.catena", "# µ\nsensor ßx {}\n");
        let f = Finding::new(Code::M208, &file, "unused").label(Span::new(12, 15), "here");
        let log: serde_json::Value = serde_json::from_str(&render_sarif(&[f])).unwrap();
        let region = &log["runs"][0]["results"][0]["locations"][0]["physicalLocation"]["region"];
        assert_eq!(region["startLine"], 2);
        assert_eq!(region["startColumn"], 8);
        assert_eq!(region["endColumn"], 10);
        assert_eq!(region["byteOffset"], 12);
        assert_eq!(region["byteLength"], 3);
        assert_eq!(log["runs"][0]["columnKind"], "unicodeCodePoints");
        assert_eq!(log["runs"][0]["tool"]["driver"]["rules"][0]["id"], "M208");
    }
}

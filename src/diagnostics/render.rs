use serde::Serialize;

use super::code::Severity;
use super::finding::Finding;

/// Renders findings as miette's graphical report. `color` is decided by the
/// caller (terminal, `NO_COLOR`); `width` fixes the wrap so output is stable.
pub fn render_human(findings: &[Finding], color: bool, width: usize) -> String {
    let theme = if color {
        miette::GraphicalTheme::unicode()
    } else {
        miette::GraphicalTheme::unicode_nocolor()
    };
    let handler = miette::GraphicalReportHandler::new_themed(theme)
        .with_width(width)
        .with_links(false);
    let mut out = String::new();
    for finding in findings {
        if has_long_lines(finding) {
            out.push_str(&render_plain(finding));
        } else {
            // Writing into a String cannot fail; a renderer panic must not
            // cost the user the finding, so it falls back to plain text.
            let mut one = String::new();
            let rendered = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
                handler.render_report(&mut one, finding).is_ok()
            }));
            if rendered.unwrap_or(false) {
                out.push_str(&one);
            } else {
                out.push_str(&render_plain(finding));
            }
        }
        out.push('\n');
    }
    out
}

/// Source lines this long are not worth drawing (and the graphical
/// renderer's padding overflows on them).
const MAX_DRAWN_LINE: usize = 400;

fn has_long_lines(f: &Finding) -> bool {
    let text = f.file.text();
    f.labels.iter().any(|l| {
        let start = text[..l.span.start.min(text.len())]
            .rfind('\n')
            .map(|n| n + 1)
            .unwrap_or(0);
        let end = text[l.span.start.min(text.len())..]
            .find('\n')
            .map(|n| n + l.span.start)
            .unwrap_or(text.len());
        end - start > MAX_DRAWN_LINE
    })
}

/// A finding without the source excerpt: code, message, place, help.
fn render_plain(f: &Finding) -> String {
    let (line, column) = f.file.line_column(f.primary_offset());
    let mut s = format!(
        "{}\n\n  × {}\n  at {}:{line}:{column}\n",
        f.code.as_str(),
        f.message,
        f.file.name()
    );
    for l in &f.labels {
        if !l.text.is_empty() {
            s.push_str(&format!("  - {}\n", l.text));
        }
    }
    if let Some(h) = &f.help {
        s.push_str(&format!("  help: {h}\n"));
    }
    if let Some(c) = &f.cause {
        s.push_str(&format!(
            "  this follows from {} on line {}: fix that first\n",
            c.code.as_str(),
            c.line
        ));
    }
    s
}

/// The JSON shape of one finding: documented in `catena explain --json`
/// terms in the README; field names are part of the interface.
#[derive(Serialize, Debug, PartialEq)]
pub struct JsonFinding {
    pub code: &'static str,
    pub severity: &'static str,
    pub message: String,
    pub file: String,
    pub line: usize,
    pub column: usize,
    pub span: JsonSpan,
    pub labels: Vec<JsonLabel>,
    pub help: Option<String>,
    /// The finding this one follows from (reported just before it).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub caused_by: Option<JsonCause>,
}

#[derive(Serialize, Debug, PartialEq)]
pub struct JsonCause {
    pub code: &'static str,
    pub line: usize,
}

#[derive(Serialize, Debug, PartialEq)]
pub struct JsonSpan {
    pub offset: usize,
    pub length: usize,
}

#[derive(Serialize, Debug, PartialEq)]
pub struct JsonLabel {
    pub line: usize,
    pub column: usize,
    pub span: JsonSpan,
    pub text: String,
}

impl From<&Finding> for JsonFinding {
    fn from(f: &Finding) -> Self {
        let primary = f.primary_span().unwrap_or_default();
        let (line, column) = f.file.line_column(primary.start);
        JsonFinding {
            code: f.code.as_str(),
            severity: match f.severity() {
                Severity::Error => "error",
                Severity::Warning => "warning",
            },
            message: f.message.clone(),
            file: f.file.name().to_string(),
            line,
            column,
            span: JsonSpan {
                offset: primary.start,
                length: primary.len(),
            },
            labels: f
                .labels
                .iter()
                .map(|l| {
                    let (line, column) = f.file.line_column(l.span.start);
                    JsonLabel {
                        line,
                        column,
                        span: JsonSpan {
                            offset: l.span.start,
                            length: l.span.len(),
                        },
                        text: l.text.clone(),
                    }
                })
                .collect(),
            help: f.help.clone(),
            caused_by: f.cause.as_ref().map(|c| JsonCause {
                code: c.code.as_str(),
                line: c.line,
            }),
        }
    }
}

/// The version of the findings document's shape; raised when a field
/// changes meaning or goes away, not when one is added.
pub const FINDINGS_SCHEMA_VERSION: u32 = 1;

/// `{"schema_version": 1, "findings": [...]}` with one finding per line,
/// so the output is one document for tools and still greps line by line.
pub fn render_json(findings: &[Finding]) -> String {
    let mut out = format!("{{\"schema_version\":{FINDINGS_SCHEMA_VERSION},\"findings\":[");
    for (i, f) in findings.iter().enumerate() {
        let json = JsonFinding::from(f);
        out.push_str(if i == 0 { "\n" } else { ",\n" });
        // Serialising plain owned data cannot fail.
        out.push_str(&serde_json::to_string(&json).unwrap_or_default());
    }
    out.push_str(if findings.is_empty() {
        "]}\n"
    } else {
        "\n]}\n"
    });
    out
}

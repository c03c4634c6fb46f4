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
        // Writing into a String cannot fail.
        let _ = handler.render_report(&mut out, finding);
        out.push('\n');
    }
    out
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
        }
    }
}

/// A JSON array with one object per finding, each on its own line, so the
/// output is one document for tools and still greps line by line.
pub fn render_json(findings: &[Finding]) -> String {
    let mut out = String::from("[");
    for (i, f) in findings.iter().enumerate() {
        let json = JsonFinding::from(f);
        out.push_str(if i == 0 { "\n" } else { ",\n" });
        // Serialising plain owned data cannot fail.
        out.push_str(&serde_json::to_string(&json).unwrap_or_default());
    }
    out.push_str(if findings.is_empty() { "]\n" } else { "\n]\n" });
    out
}

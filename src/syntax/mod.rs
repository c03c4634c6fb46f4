//! Source text to a typed AST with spans: prescan, pest grammar, lowering.

pub mod ast;
mod expected;
pub mod format;
mod grammar;
mod parser;
mod prescan;

use std::sync::Arc;

pub use ast::Ast;
pub use prescan::{decode, MAX_SOURCE_BYTES};

use crate::diagnostics::{Code, Finding, Findings, SourceFile, Span};

/// A file with more findings than this is almost surely not a spec; the
/// rest would only bury the first.
pub const MAX_FINDINGS_PER_FILE: usize = 100;

/// Parses a source file. Always returns an AST (possibly partial) and
/// every finding of the syntax stage.
pub fn parse(file: &Arc<SourceFile>) -> (Ast, Findings) {
    let findings = prescan::scan(file);
    if findings.has_errors() {
        return (Ast::default(), cap(file, findings));
    }
    let (ast, findings) = parser::parse_file(file);
    (ast, cap(file, findings))
}

/// Parses the values of one parameter written outside a spec (a parts
/// file entry): `text` is found at `offset` in `file`.
pub fn parse_values(
    file: &Arc<SourceFile>,
    name: &str,
    text: &str,
    offset: usize,
) -> (Vec<ast::Value>, Findings) {
    match parser::parse_param_values(file, name, text, offset) {
        Ok(r) => r,
        Err(f) => {
            let mut fs = Findings::new();
            fs.push(f);
            (Vec::new(), fs)
        }
    }
}

fn cap(file: &Arc<SourceFile>, findings: Findings) -> Findings {
    if findings.len() <= MAX_FINDINGS_PER_FILE {
        return findings;
    }
    let total = findings.len();
    let mut kept = Findings::new();
    let mut last = Span::default();
    for f in findings.into_iter().take(MAX_FINDINGS_PER_FILE) {
        last = f.primary_span().unwrap_or(last);
        kept.push(f);
    }
    kept.push(
        Finding::new(
            Code::S009,
            file,
            format!("{total} syntax findings; showing the first {MAX_FINDINGS_PER_FILE}"),
        )
        .label(Span::new(last.end, last.end), "stopped here")
        .help("fix the first findings and run again; is this a `.catena` file?"),
    );
    kept
}

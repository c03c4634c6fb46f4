//! One-line renderings of findings: workflow commands that CI runners turn
//! into annotations on the changed lines, and `file:line:col:` lines that
//! editors and `grep` read.

use super::finding::Finding;
use super::sarif::{full_message, level};

/// One workflow command per finding:
/// `::error file=F,line=L,col=C,endLine=..,endColumn=..,title=CODE::message`.
pub fn render_github(findings: &[Finding]) -> String {
    let mut out = String::new();
    for f in findings {
        let mut props = vec![format!("file={}", escape_property(f.file.name()))];
        if let Some(span) = f.primary_span() {
            let (line, col) = f.file.line_column(span.start);
            let (end_line, end_col) = f.file.line_column(span.end.max(span.start));
            props.push(format!("line={line}"));
            props.push(format!("col={col}"));
            props.push(format!("endLine={end_line}"));
            props.push(format!("endColumn={end_col}"));
        }
        let title = format!("{} {}", f.code.as_str(), f.code.title());
        props.push(format!("title={}", escape_property(&title)));
        out.push_str(&format!(
            "::{} {}::{}\n",
            level(f.severity()),
            props.join(","),
            escape_data(&full_message(f))
        ));
    }
    out
}

/// `file:line:col: severity code message`, one line per finding.
pub fn render_short(findings: &[Finding]) -> String {
    let mut out = String::new();
    for f in findings {
        let (line, col) = f.file.line_column(f.primary_offset());
        // A message is one line by convention; make sure of it.
        let message = f.message.replace(['\r', '\n'], " ");
        out.push_str(&format!(
            "{}:{line}:{col}: {} {} {message}\n",
            f.file.name(),
            level(f.severity()),
            f.code.as_str()
        ));
    }
    out
}

/// A workflow command's message: `%`, CR and LF are encoded.
pub fn escape_data(text: &str) -> String {
    text.replace('%', "%25")
        .replace('\r', "%0D")
        .replace('\n', "%0A")
}

/// A workflow command's property value: as a message, and `:` and `,`
/// too, which would otherwise end the value.
pub fn escape_property(text: &str) -> String {
    escape_data(text).replace(':', "%3A").replace(',', "%2C")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostics::{Code, SourceFile, Span};

    #[test]
    fn github_escapes_percent_newline_and_colon() {
        let file = SourceFile::new("dir,a:b.catena", "gain 4 %\n");
        let f = Finding::new(Code::P313, &file, "`4 %`: of what?\nsay 50% of span")
            .label(Span::new(5, 8), "here")
            .help("write `% of span`");
        assert_eq!(
            render_github(&[f]),
            "::error file=dir%2Ca%3Ab.catena,line=1,col=6,endLine=1,endColumn=9,\
             title=P313 percentage without a basis::`4 %25`: of what?%0Asay 50%25 of span\
             %0Ahelp: write `%25 of span`\n"
        );
    }

    #[test]
    fn short_is_one_line_per_finding() {
        let file = SourceFile::new("a.catena", "x\ny\n");
        let f = Finding::new(Code::M208, &file, "stage `y` is not used").label(Span::new(2, 3), "");
        assert_eq!(
            render_short(&[f]),
            "a.catena:2:1: warning M208 stage `y` is not used\n"
        );
    }
}

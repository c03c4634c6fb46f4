//! The report as one self-contained HTML file: inline CSS and SVG,
//! nothing fetched, no script. Its content is the Markdown report's,
//! block for block (the Markdown renderer writes a small, fixed subset:
//! headings, paragraphs, pipe tables, lists and plot references), so the
//! two never disagree; plots are inlined where the Markdown links them.

use std::fmt::Write;

use super::svg::escape;

/// Print and screen styles: A4 and Letter both fit the content width,
/// each chain and each long section starts a page, a plot never splits.
const CSS: &str = "\
:root{color-scheme:light}\
body{font-family:system-ui,-apple-system,'Segoe UI',Roboto,sans-serif;color:#1d1d1d;background:#ffffff;margin:0;line-height:1.45}\
main{max-width:1000px;margin:0 auto;padding:24px 28px 60px}\
h1{font-size:1.6em;margin:0.2em 0 0.6em}\
h2{font-size:1.35em;border-bottom:2px solid #0072B2;padding-bottom:4px;margin-top:2em}\
h3{font-size:1.12em;margin-top:1.6em}\
h4{font-size:1em;margin-top:1.2em}\
table{border-collapse:collapse;margin:0.6em 0 1em;font-size:0.9em;max-width:100%}\
th,td{border:1px solid #c8c8c8;padding:3px 7px;text-align:left;vertical-align:top;overflow-wrap:break-word}\
th{background:#eef3f8}\
tr:nth-child(even) td{background:#fafafa}\
code{font-family:ui-monospace,'DejaVu Sans Mono',Menlo,monospace;font-size:0.92em;overflow-wrap:break-word}\
strong.fail{color:#b00020}\
figure{margin:0.8em 0 1.2em;break-inside:avoid;page-break-inside:avoid}\
figure svg{max-width:100%;height:auto;display:block}\
figcaption{font-size:0.85em;color:#555555}\
.provenance td:first-child{white-space:nowrap}\
@media print{\
@page{margin:12mm}\
main{max-width:none;padding:0}\
body{font-size:10.5pt}\
h2{break-before:page;page-break-before:always}\
h1+h2{break-before:auto;page-break-before:auto}\
h3.part{break-before:page;page-break-before:always}\
h2,h3,h4{break-after:avoid;page-break-after:avoid}\
tr,figure,svg{break-inside:avoid;page-break-inside:avoid}\
figure svg{max-height:230mm}\
}";

/// The HTML page of a Markdown report; `plots` are inlined where the
/// Markdown references `plot:N`.
pub fn from_markdown(title: &str, markdown: &str, plots: &[(String, String)]) -> String {
    let mut body = String::new();
    let lines: Vec<&str> = markdown.lines().collect();
    let mut i = 0;
    while i < lines.len() {
        let line = lines[i];
        if line.starts_with('|') {
            let start = i;
            while i < lines.len() && lines[i].starts_with('|') {
                i += 1;
            }
            table(&mut body, &lines[start..i]);
            continue;
        }
        block(&mut body, line, plots);
        i += 1;
    }
    page(title, &body)
}

/// A whole page around `body`.
pub fn page(title: &str, body: &str) -> String {
    format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<title>{}</title>\n<style>{CSS}</style>\n</head>\n<body>\n<main>\n{body}</main>\n</body>\n</html>\n",
        escape(title)
    )
}

fn block(out: &mut String, line: &str, plots: &[(String, String)]) {
    if let Some(t) = line.strip_prefix("### ") {
        // The long sections start a printed page; the short ones flow.
        let long = matches!(
            t,
            "Stages" | "Error budget" | "Noise and resolution" | "Faults and limits"
        );
        let class = if long { " class=\"part\"" } else { "" };
        let _ = writeln!(out, "<h3{class}>{}</h3>", inline(t));
    } else if let Some(t) = line.strip_prefix("#### ") {
        let _ = writeln!(out, "<h4>{}</h4>", inline(t));
    } else if let Some(t) = line.strip_prefix("## ") {
        let _ = writeln!(out, "<h2>{}</h2>", inline(t));
    } else if let Some(t) = line.strip_prefix("# ") {
        let _ = writeln!(out, "<h1>{}</h1>", inline(t));
    } else if let Some(t) = line.strip_prefix("- ") {
        let _ = writeln!(out, "<ul><li>{}</li></ul>", inline(t));
    } else if let Some(rest) = line.strip_prefix("![") {
        figure(out, rest, plots);
    } else if line.starts_with("<details>") {
        // Print shows everything: a heading instead of a fold.
        let summary = line
            .trim_start_matches("<details><summary>")
            .trim_end_matches("</summary>");
        let _ = writeln!(out, "<h4>{}</h4>", escape(summary));
    } else if line.starts_with("</details>") || line.trim().is_empty() {
    } else {
        let _ = writeln!(out, "<p>{}</p>", inline(line));
    }
}

fn figure(out: &mut String, rest: &str, plots: &[(String, String)]) {
    let Some((title, target)) = rest.split_once("](") else {
        return;
    };
    let target = target.trim_end_matches(')');
    let Some(svg) = target
        .strip_prefix("plot:")
        .and_then(|k| k.parse::<usize>().ok())
        .and_then(|k| plots.get(k))
    else {
        return;
    };
    let _ = writeln!(
        out,
        "<figure>{}<figcaption>{}</figcaption></figure>",
        svg.1,
        escape(title)
    );
}

fn cells(row: &str) -> Vec<String> {
    let inner = row.trim().trim_start_matches('|').trim_end_matches('|');
    let mut out = Vec::new();
    let mut cell = String::new();
    let mut chars = inner.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\\' if chars.peek() == Some(&'|') => {
                cell.push('|');
                chars.next();
            }
            '|' => out.push(std::mem::take(&mut cell).trim().to_string()),
            c => cell.push(c),
        }
    }
    out.push(cell.trim().to_string());
    out
}

fn table(out: &mut String, rows: &[&str]) {
    let head = cells(rows[0]);
    let class = if head.iter().all(String::is_empty) {
        " class=\"provenance\""
    } else {
        ""
    };
    let _ = write!(out, "<table{class}>");
    if head.iter().any(|h| !h.is_empty()) {
        out.push_str("<thead><tr>");
        for h in &head {
            let _ = write!(out, "<th>{}</th>", inline(h));
        }
        out.push_str("</tr></thead>");
    }
    out.push_str("<tbody>");
    for row in rows.iter().skip(2) {
        out.push_str("<tr>");
        for c in cells(row) {
            let _ = write!(out, "<td>{}</td>", inline(&c));
        }
        out.push_str("</tr>");
    }
    out.push_str("</tbody></table>\n");
}

/// Code spans, bold and `<br>`, the inline markup the Markdown report
/// uses; everything else is escaped.
fn inline(s: &str) -> String {
    let mut out = String::new();
    for (k, part) in s.split("<br>").enumerate() {
        if k > 0 {
            out.push_str("<br>");
        }
        for (j, piece) in part.split('`').enumerate() {
            if j % 2 == 1 {
                let _ = write!(out, "<code>{}</code>", escape(piece));
                continue;
            }
            for (b, text) in piece.split("**").enumerate() {
                if b % 2 == 1 {
                    let class = if matches!(text, "fail" | "FAIL" | "no") || text.contains("beyond")
                    {
                        " class=\"fail\""
                    } else {
                        ""
                    };
                    let _ = write!(out, "<strong{class}>{}</strong>", escape(text));
                } else {
                    out.push_str(&escape(text));
                }
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_pipe_table_becomes_a_table() {
        let html = from_markdown(
            "t",
            "| a | b |\n| --- | --- |\n| `x\\|y` | **fail** |\n",
            &[],
        );
        assert!(html.contains("<th>a</th><th>b</th>"), "{html}");
        assert!(
            html.contains("<td><code>x|y</code></td><td><strong class=\"fail\">fail</strong></td>"),
            "{html}"
        );
    }

    #[test]
    fn text_is_escaped() {
        assert_eq!(
            inline("a < b & `c>d`"),
            "a &lt; b &amp; <code>c&gt;d</code>"
        );
    }

    #[test]
    fn plots_are_inlined_and_nothing_is_fetched() {
        let plots = vec![("p.svg".to_string(), "<svg></svg>".to_string())];
        let html = from_markdown("t", "![A plot](plot:0)\n", &plots);
        assert!(html.contains("<figure><svg></svg><figcaption>A plot</figcaption></figure>"));
        assert!(!html.contains("src=") && !html.contains("<script") && !html.contains("http:"));
    }
}

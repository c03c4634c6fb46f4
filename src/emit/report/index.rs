//! The index page of a folder's reports: one row per chain of every
//! spec, linking each spec's report.

use std::fmt::Write;

use serde::Serialize;

use super::fmt::value;
use super::html::page;
use super::model::{Report, SummaryRow, SCHEMA_VERSION};
use super::render::ReportFormat;
use super::svg::escape;

#[derive(Clone, Debug, Serialize)]
pub struct Entry {
    pub spec: String,
    /// The report's file, relative to the index; absent when the spec
    /// has errors that leave no chain to report.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub report: Option<String>,
    pub chains: Vec<SummaryRow>,
}

impl Entry {
    pub fn of(report: &Report, file: &str) -> Entry {
        Entry {
            spec: report.provenance.spec.clone(),
            report: Some(file.to_string()),
            chains: report.summary.clone(),
        }
    }

    pub fn failed(spec: &str) -> Entry {
        Entry {
            spec: spec.to_string(),
            report: None,
            chains: Vec::new(),
        }
    }
}

#[derive(Serialize)]
struct IndexJson<'a> {
    schema_version: u32,
    reports: &'a [Entry],
}

pub fn render(entries: &[Entry], format: ReportFormat) -> String {
    match format {
        ReportFormat::Json => {
            let doc = IndexJson {
                schema_version: SCHEMA_VERSION,
                reports: entries,
            };
            serde_json::to_string_pretty(&doc).unwrap_or_default() + "\n"
        }
        ReportFormat::Md => markdown(entries),
        ReportFormat::Html => html(entries),
    }
}

fn verdict(r: &SummaryRow) -> &'static str {
    if r.error.is_some() {
        "not analysed"
    } else if r.pass {
        "pass"
    } else {
        "fail"
    }
}

fn markdown(entries: &[Entry]) -> String {
    let mut out = String::from("# Review reports\n\n| spec | chain | verdict | requirements met | limits flagged | largest GUM expanded |\n| --- | --- | --- | --- | --- | --- |\n");
    for e in entries {
        let spec = match &e.report {
            Some(f) => format!("[`{}`]({f})", e.spec),
            None => format!("`{}`", e.spec),
        };
        if e.chains.is_empty() {
            let _ = writeln!(out, "| {spec} | | errors: see `catena check` | | | |");
        }
        for r in &e.chains {
            let _ = writeln!(
                out,
                "| {spec} | `{}` | {} | {} of {} | {} | {} |",
                r.chain,
                verdict(r),
                r.requirements_met,
                r.requirements,
                r.limits_flagged,
                value(r.gum_expanded, &r.unit)
            );
        }
    }
    out
}

fn html(entries: &[Entry]) -> String {
    let mut body = String::from("<h1>Review reports</h1>\n<table><thead><tr><th>spec</th><th>chain</th><th>verdict</th><th>requirements met</th><th>limits flagged</th><th>largest GUM expanded</th></tr></thead><tbody>");
    for e in entries {
        let spec = match &e.report {
            Some(f) => format!(
                "<a href=\"{}\"><code>{}</code></a>",
                escape(f),
                escape(&e.spec)
            ),
            None => format!("<code>{}</code>", escape(&e.spec)),
        };
        if e.chains.is_empty() {
            let _ = write!(body, "<tr><td>{spec}</td><td></td><td>errors: see <code>catena check</code></td><td></td><td></td><td></td></tr>");
        }
        for r in &e.chains {
            let _ = write!(
                body,
                "<tr><td>{spec}</td><td><code>{}</code></td><td>{}</td><td>{} of {}</td><td>{}</td><td>{}</td></tr>",
                escape(&r.chain),
                verdict(r),
                r.requirements_met,
                r.requirements,
                r.limits_flagged,
                escape(&value(r.gum_expanded, &r.unit))
            );
        }
    }
    body.push_str("</tbody></table>\n");
    page("Review reports", &body)
}

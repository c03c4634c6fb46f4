//! One report model, three renderers.

use super::html;
use super::markdown::{self, PlotLink};
use super::model::Report;
use super::plots::{chain_plots, Plot};

#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum ReportFormat {
    Html,
    Md,
    Json,
}

impl ReportFormat {
    pub fn extension(self) -> &'static str {
        match self {
            ReportFormat::Html => "html",
            ReportFormat::Md => "md",
            ReportFormat::Json => "json",
        }
    }

    pub fn from_extension(ext: &str) -> Option<ReportFormat> {
        match ext {
            "html" | "htm" => Some(ReportFormat::Html),
            "md" | "markdown" => Some(ReportFormat::Md),
            "json" => Some(ReportFormat::Json),
            _ => None,
        }
    }
}

/// A rendered report and the files it links (name, SVG text).
pub struct Rendered {
    pub text: String,
    pub plots: Vec<(String, String)>,
}

/// `plot_stem` names the plot files a Markdown report links (None: the
/// report goes to standard output and links none).
pub fn render(report: &Report, format: ReportFormat, plot_stem: Option<&str>) -> Rendered {
    match format {
        ReportFormat::Json => Rendered {
            text: serde_json::to_string_pretty(report).unwrap_or_default() + "\n",
            plots: Vec::new(),
        },
        ReportFormat::Md => {
            let Some(stem) = plot_stem else {
                let none: Vec<Vec<PlotLink>> = report.chains.iter().map(|_| Vec::new()).collect();
                return Rendered {
                    text: markdown::render(report, &none),
                    plots: Vec::new(),
                };
            };
            let mut files = Vec::new();
            let links = linked(report, &mut |plot, chain| {
                let part = if plot.id == "error" {
                    format!("-{}", plot.part)
                } else {
                    String::new()
                };
                let name = format!("{stem}-{chain}-{}{part}.svg", plot.id);
                files.push((name.clone(), plot.svg));
                name
            });
            Rendered {
                text: markdown::render(report, &links),
                plots: files,
            }
        }
        ReportFormat::Html => {
            let mut inline = Vec::new();
            let links = linked(report, &mut |plot, _| {
                inline.push((plot.title.clone(), plot.svg));
                format!("plot:{}", inline.len() - 1)
            });
            let text = markdown::render(report, &links);
            let title = format!("Review report: {}", report.provenance.spec);
            Rendered {
                text: html::from_markdown(&title, &text, &inline),
                plots: Vec::new(),
            }
        }
    }
}

/// Every chain's plots as links, `target` naming where each goes.
fn linked(report: &Report, target: &mut dyn FnMut(Plot, &str) -> String) -> Vec<Vec<PlotLink>> {
    report
        .chains
        .iter()
        .map(|c| {
            let chain: String = c
                .name
                .chars()
                .map(|ch| {
                    if ch.is_ascii_alphanumeric() || ch == '_' {
                        ch
                    } else {
                        '-'
                    }
                })
                .collect();
            chain_plots(c, report.provenance.margin)
                .into_iter()
                .map(|p| {
                    let id = p.id;
                    let title = p.title.clone();
                    PlotLink {
                        id,
                        title,
                        file: target(p, &chain),
                    }
                })
                .collect()
        })
        .collect()
}

//! The report's plots, drawn from the report model alone.

use crate::analysis::faults::FaultCodes;

use super::fmt::{share, value};
use super::model::ChainReport;
use super::svg::{bars, strips, Axis, Chart, Item, Strip, Style};

/// One plot of a chain: an id (`error`, `contributors`, `headroom`,
/// `path`, `step`, `frequency`, `diagram`), its title and its SVG.
pub struct Plot {
    pub id: &'static str,
    /// Distinguishes plots of one id (the ambient of an error plot).
    pub part: usize,
    pub title: String,
    pub svg: String,
}

/// Every plot of a chain, in the order its sections show them.
pub fn chain_plots(c: &ChainReport, margin: f64) -> Vec<Plot> {
    let key = ident(&c.name);
    let mut out = vec![diagram(c, &key)];
    if c.error.is_some() {
        return out;
    }
    out.extend(error_plots(c, &key));
    out.extend(contributors(c, &key));
    out.extend(path(c, &key));
    out.extend(step(c, &key));
    out.extend(frequency(c, &key));
    out.extend(codes(c, &key));
    out.extend(headroom(c, margin, &key));
    out
}

/// A chain name as an id fragment.
fn ident(name: &str) -> String {
    name.chars()
        .map(|c| if c.is_ascii_alphanumeric() { c } else { '-' })
        .collect()
}

fn plot(id: &'static str, part: usize, title: String, svg: String) -> Plot {
    Plot {
        id,
        part,
        title,
        svg,
    }
}

/// Error versus measurand, one plot per ambient.
fn error_plots(c: &ChainReport, key: &str) -> Vec<Plot> {
    let b = &c.budget;
    let mut ambients: Vec<f64> = Vec::new();
    for p in &b.points {
        if !ambients.contains(&p.ambient) {
            ambients.push(p.ambient);
        }
    }
    ambients
        .iter()
        .enumerate()
        .map(|(k, &ambient)| {
            let pts: Vec<_> = b.points.iter().filter(|p| p.ambient == ambient).collect();
            let (lo, hi) = (c.summary.range[0], c.summary.range[1]);
            let mut top = pts
                .iter()
                .map(|p| p.worst_case.max(p.gum_expanded))
                .fold(0.0, f64::max);
            for p in &pts {
                if let Some([l, h]) = p.monte_carlo_95 {
                    top = top.max(l.abs()).max(h.abs());
                }
            }
            if let Some(r) = b.requirement {
                top = top.max(r);
            }
            let mut items = vec![
                Item::PlusMinus {
                    label: "worst case".to_string(),
                    style: Style { index: 1 },
                    points: pts.iter().map(|p| (p.measurand, p.worst_case)).collect(),
                },
                Item::PlusMinus {
                    label: "GUM expanded (k = 2)".to_string(),
                    style: Style { index: 0 },
                    points: pts.iter().map(|p| (p.measurand, p.gum_expanded)).collect(),
                },
            ];
            if pts.iter().all(|p| p.monte_carlo_95.is_some()) {
                let end = |i: usize| -> Vec<(f64, f64)> {
                    pts.iter()
                        .filter_map(|p| p.monte_carlo_95.map(|m| (p.measurand, m[i])))
                        .collect()
                };
                items.insert(
                    0,
                    Item::Band {
                        label: "Monte Carlo 95 %".to_string(),
                        style: Style { index: 2 },
                        lower: end(0),
                        upper: end(1),
                    },
                );
            }
            if let Some(r) = b.requirement {
                items.push(Item::HLimit {
                    label: format!("required ± {}", value(r, &c.unit)),
                    y: r,
                });
                items.push(Item::HLimit {
                    label: String::new(),
                    y: -r,
                });
            }
            let title = format!(
                "Error over the range at ambient {} degC",
                crate::units::format::trimmed(ambient, 4)
            );
            let chart = Chart {
                id: format!("{key}-error-{k}"),
                title: title.clone(),
                x: Axis::linear(&c.summary.quantity, &c.measurand_unit, lo, hi),
                y: Axis::linear("error", &c.unit, -top * 1.05, top * 1.05),
                items,
            };
            plot("error", k, title, chart.render())
        })
        .collect()
}

fn contributors(c: &ChainReport, key: &str) -> Option<Plot> {
    let b = &c.budget;
    let rows: Vec<(String, f64, String)> = b
        .contributors
        .iter()
        .filter(|x| x.standard_uncertainty > 0.0)
        .map(|x| {
            (
                x.id.clone(),
                x.standard_uncertainty,
                format!(
                    "{} ({} of the variance)",
                    value(x.standard_uncertainty, &c.unit),
                    share(x.gum_share)
                ),
            )
        })
        .collect();
    if rows.is_empty() {
        return None;
    }
    let title = format!(
        "Largest contributors at {} {}, ambient {} degC",
        crate::units::format::trimmed(b.worst_at[0], 6),
        c.measurand_unit,
        crate::units::format::trimmed(b.worst_at[1], 4)
    );
    let svg = bars(
        &format!("{key}-contributors"),
        &title,
        "standard uncertainty",
        &c.unit,
        &rows,
    );
    Some(plot("contributors", 0, title, svg))
}

fn path(c: &ChainReport, key: &str) -> Option<Plot> {
    let rows: Vec<(String, f64, String)> = c
        .budget
        .path
        .iter()
        .filter(|p| p.error.is_finite())
        .map(|p| (p.stage.clone(), p.error, value(p.error, &c.unit)))
        .collect();
    if rows.iter().all(|r| r.1 <= 0.0) {
        return None;
    }
    let title = super::fmt::path_title(c);
    let svg = bars(
        &format!("{key}-path"),
        &title,
        "standard uncertainty",
        &c.unit,
        &rows,
    );
    Some(plot("path", 0, title, svg))
}

fn step(c: &ChainReport, key: &str) -> Option<Plot> {
    let d = &c.dynamics;
    let last = d.step.last()?;
    if last[0] <= 0.0 {
        return None;
    }
    let mut items = vec![
        Item::Line {
            label: "reading after a measurand step".to_string(),
            style: Style { index: 0 },
            points: d.step.iter().map(|p| (p[0], p[1] * 100.0)).collect(),
            markers: false,
        },
        Item::HLimit {
            label: "90 % of the step".to_string(),
            y: 90.0,
        },
    ];
    if let Some(t) = d.response_90_s {
        items.push(Item::VMark {
            label: format!("90 % at {}", value(t, "s")),
            x: t,
        });
    }
    if let Some(r) = d.requirement_s {
        items.push(Item::VMark {
            label: format!("required {}", value(r, "s")),
            x: r,
        });
    }
    let title = "Step response".to_string();
    let chart = Chart {
        id: format!("{key}-step"),
        title: title.clone(),
        x: Axis::linear("time", "s", 0.0, last[0]),
        y: Axis::linear("reading", "%", 0.0, 110.0),
        items,
    };
    Some(plot("step", 0, title, chart.render()))
}

fn frequency(c: &ChainReport, key: &str) -> Option<Plot> {
    let d = &c.dynamics;
    let (first, last) = (d.frequency.first()?, d.frequency.last()?);
    let floor = d
        .frequency
        .iter()
        .map(|p| p[1])
        .fold(0.0, f64::min)
        .max(-160.0);
    let mut items = vec![Item::Line {
        label: "filter and converter averaging".to_string(),
        style: Style { index: 0 },
        points: d
            .frequency
            .iter()
            .map(|p| (p[0], p[1].max(floor)))
            .collect(),
        markers: false,
    }];
    for [hz, _] in &d.mains {
        items.push(Item::VMark {
            label: format!("{} Hz", crate::units::format::trimmed(*hz, 4)),
            x: *hz,
        });
    }
    let title = "Frequency response".to_string();
    let chart = Chart {
        id: format!("{key}-frequency"),
        title: title.clone(),
        x: Axis::logarithmic("frequency", "Hz", first[0], last[0]),
        y: Axis::linear("gain", "dB", floor, 0.0),
        items,
    };
    Some(plot("frequency", 0, title, chart.render()))
}

/// The valid code window and each fault's codes against it, along the
/// code axis as a share of the converter's full scale.
fn codes(c: &ChainReport, key: &str) -> Option<Plot> {
    let list = c.faults.as_ref()?;
    if list.faults.is_empty() {
        return None;
    }
    let w = &list.window;
    let full = (w.rails.0.unsigned_abs().max(w.rails.1.unsigned_abs()) as f64).max(1.0);
    let pct = |code: i64| code as f64 / full * 100.0;
    let rows: Vec<Strip> = list
        .faults
        .iter()
        .map(|f| Strip {
            label: format!("{} {}", f.stage, f.fault.replace('_', " ")),
            // A summed channel's fault is judged on that channel's own
            // code, which this axis (the sum's) does not show: its codes
            // are named in the note, not drawn against the sum's window.
            spans: strip_spans(f, &pct),
            hidden: f.hidden(),
            note: strip_note(f),
        })
        .collect();
    let title = "Each fault's codes against the valid code window".to_string();
    let axis = Axis::linear(
        "converter code",
        "% of full scale",
        pct(w.rails.0).min(0.0),
        pct(w.rails.1),
    );
    let svg = strips(
        &format!("{key}-codes"),
        &title,
        &axis,
        (pct(w.low), pct(w.high)),
        &rows,
    );
    Some(plot("codes", 0, title, svg))
}

/// Where a fault's codes lie on the sum's axis: nowhere for a summed
/// channel's own code, which that axis does not show.
fn strip_spans(
    f: &crate::analysis::checklist::FaultRow,
    pct: &dyn Fn(i64) -> f64,
) -> Vec<(f64, f64)> {
    match (f.codes, &f.channel) {
        (None, _) | (Some(_), Some(_)) => Vec::new(),
        (Some(FaultCodes::Span(a, b)), None) => vec![(pct(a), pct(b))],
        (Some(FaultCodes::EitherEnd(a, b)), None) => vec![(pct(a), pct(a)), (pct(b), pct(b))],
    }
}

/// What a fault's strip says beside it: its codes (on its channel's own
/// code where it is a summed channel's), and its verdict when firmware
/// cannot see it.
fn strip_note(f: &crate::analysis::checklist::FaultRow) -> String {
    let Some(codes) = f.codes else {
        return f.verdict.to_string();
    };
    let codes = match &f.channel {
        Some(channel) => format!("on {channel}: {}", codes.words()),
        None => codes.words(),
    };
    if f.hidden() {
        format!("{codes}, {}", f.verdict)
    } else {
        codes
    }
}

/// Each limited node's reach over the range, as a share of its allowed
/// interval (0 % and 100 % are its ends), with the margin band.
fn headroom(c: &ChainReport, margin: f64, key: &str) -> Option<Plot> {
    let limits: Vec<_> = c.limits.iter().filter(|l| !l.profile.is_empty()).collect();
    if limits.is_empty() {
        return None;
    }
    let margin = margin * 100.0;
    let (mut lo, mut hi) = (0.0f64, 100.0f64);
    let mut items = vec![
        Item::HBand {
            label: format!(
                "inside the {} % margin",
                crate::units::format::trimmed(margin, 3)
            ),
            y0: 0.0,
            y1: margin,
        },
        Item::HBand {
            label: String::new(),
            y0: 100.0 - margin,
            y1: 100.0,
        },
        Item::HLimit {
            label: "limit".to_string(),
            y: 0.0,
        },
        Item::HLimit {
            label: String::new(),
            y: 100.0,
        },
    ];
    for (i, l) in limits.iter().enumerate() {
        let lower: Vec<(f64, f64)> = l
            .profile
            .iter()
            .map(|p| (p.measurand, p.low * 100.0))
            .collect();
        let upper: Vec<(f64, f64)> = l
            .profile
            .iter()
            .map(|p| (p.measurand, p.high * 100.0))
            .collect();
        for &(_, y) in lower.iter().chain(&upper) {
            lo = lo.min(y);
            hi = hi.max(y);
        }
        items.push(Item::Band {
            label: format!("{} {}", l.stage, l.limit),
            style: Style { index: i },
            lower,
            upper,
        });
    }
    let title = "Headroom to each limit over the range".to_string();
    let chart = Chart {
        id: format!("{key}-headroom"),
        title: title.clone(),
        x: Axis::linear(
            &c.summary.quantity,
            &c.measurand_unit,
            c.summary.range[0],
            c.summary.range[1],
        ),
        y: Axis::linear(
            "position in the allowed range",
            "%",
            lo.max(-100.0),
            hi.min(200.0),
        ),
        items,
    };
    Some(plot("headroom", 0, title, chart.render()))
}

/// The chain as a block diagram.
fn diagram(c: &ChainReport, key: &str) -> Plot {
    let title = format!("Block diagram of {}", c.name);
    let svg = super::diagram::render(&c.diagram, &format!("{key}-diagram"), &title);
    plot("diagram", 0, title, svg)
}

#[cfg(test)]
mod strip_tests {
    use super::*;
    use crate::analysis::checklist::FaultRow;

    fn row(channel: Option<&str>) -> FaultRow {
        FaultRow {
            stage: "leg_2".into(),
            fault: "excitation_lead_open",
            condition: "excitation lead open",
            codes: Some(FaultCodes::Span(-1363, 1363)),
            verdict: "detectable",
            threshold: None,
            channel: channel.map(str::to_string),
            reason: None,
            action: String::new(),
        }
    }

    /// A summed channel's own codes are named, not drawn on the sum's axis.
    #[test]
    fn a_channels_codes_are_not_drawn_on_the_sums_axis() {
        let pct = |code: i64| code as f64 / 100.0;
        assert!(strip_spans(&row(Some("leg_2_in")), &pct).is_empty());
        assert_eq!(
            strip_note(&row(Some("leg_2_in"))),
            "on leg_2_in: -1363 .. 1363"
        );
        assert_eq!(strip_spans(&row(None), &pct), vec![(-13.63, 13.63)]);
        assert_eq!(strip_note(&row(None)), "-1363 .. 1363");
    }
}

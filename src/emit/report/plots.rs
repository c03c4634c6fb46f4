//! The report's plots, drawn from the report model alone.

use std::fmt::Write;

use super::fmt::{share, value};
use super::model::ChainReport;
use super::svg::{bars, escape, open, strips, Axis, Chart, Item, Strip, Style, PALETTE};

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
                y: Axis::nice("error", &c.unit, -top * 1.05, top * 1.05),
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
    let title = "Error along the signal path (1σ, referred to the measurand)".to_string();
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
        y: Axis::nice("reading", "%", 0.0, 110.0),
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
        y: Axis::nice("gain", "dB", floor, 0.0),
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
            span: f.codes.map(|(a, b)| (pct(a), pct(b))),
            hidden: f.hidden(),
            note: match (f.codes, f.hidden()) {
                (None, _) => f.verdict.to_string(),
                (Some((a, b)), hidden) => {
                    let codes = if a == b {
                        a.to_string()
                    } else {
                        format!("{a} .. {b}")
                    };
                    if hidden {
                        format!("{codes}, {}", f.verdict)
                    } else {
                        codes
                    }
                }
            },
        })
        .collect();
    let title = "Each fault's codes against the valid code window".to_string();
    let axis = Axis::nice(
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
        y: Axis::nice(
            "position in the allowed range",
            "%",
            lo.max(-100.0),
            hi.min(200.0),
        ),
        items,
    };
    Some(plot("headroom", 0, title, chart.render()))
}

const BOX_W: f64 = 128.0;
const BOX_H: f64 = 46.0;
const COL_GAP: f64 = 64.0;
const ROW_GAP: f64 = 52.0;

/// The chain as boxes in columns by their depth in the graph, edges
/// with their signal type.
fn diagram(c: &ChainReport, key: &str) -> Plot {
    let d = &c.diagram;
    let longest = d
        .nodes
        .iter()
        .map(|n| n.name.chars().count().max(kind_label(n).chars().count()))
        .max()
        .unwrap_or(8);
    let box_w = BOX_W.max(longest as f64 * 7.4 + 18.0);
    let columns = d.nodes.iter().map(|n| n.layer + 1).max().unwrap_or(1);
    let rows_of = rows(d, columns);
    let place: Vec<(f64, f64)> = d
        .nodes
        .iter()
        .zip(&rows_of)
        .map(|(node, &row)| {
            (
                20.0 + node.layer as f64 * (box_w + COL_GAP),
                40.0 + row as f64 * (BOX_H + ROW_GAP),
            )
        })
        .collect();
    let rows = rows_of.iter().map(|r| r + 1).max().unwrap_or(1);
    let w = 40.0 + columns as f64 * (box_w + COL_GAP) - COL_GAP;
    let h = 50.0 + rows as f64 * (BOX_H + ROW_GAP);
    let title = format!("Block diagram of {}", c.name);
    let id = format!("{key}-diagram");
    let mut s = open(&id, &title, w, h);
    let _ = write!(
        s,
        r##"<defs><marker id="{id}-arrow" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="7" markerHeight="7" orient="auto-start-reverse"><path d="M0 0 L10 5 L0 10 Z" fill="#333333"/></marker></defs><text x="20" y="20" class="title">{}</text><g class="plot-area" data-x="0" data-y="0" data-width="{}" data-height="{}">"##,
        escape(&title),
        w,
        h
    );
    let at = |name: &str| {
        d.nodes
            .iter()
            .position(|n| n.name == name)
            .map(|i| place[i])
    };
    // Labels under a box, one line each, so two never overlap.
    let mut below: Vec<usize> = vec![0; d.nodes.len()];
    for e in &d.edges {
        let (Some(a), Some(b)) = (at(&e.from), at(&e.to)) else {
            continue;
        };
        let target = d.nodes.iter().position(|n| n.name == e.to).unwrap_or(0);
        let k = below[target];
        if edge(&mut s, e, (a, b), box_w, &id, k) {
            below[target] += 1;
        }
    }
    for (node, &(x, y)) in d.nodes.iter().zip(&place) {
        let colour = PALETTE[kind_index(&node.kind)];
        let _ = write!(
            s,
            r##"<rect class="data" x="{}" y="{}" width="{}" height="{BOX_H}" rx="5" fill="#ffffff" stroke="{colour}" stroke-width="2"/><text x="{}" y="{}" text-anchor="middle" class="box">{}</text><text x="{}" y="{}" text-anchor="middle" class="kind">{}</text>"##,
            r(x),
            r(y),
            r(box_w),
            r(x + box_w / 2.0),
            r(y + 19.0),
            escape(&node.name),
            r(x + box_w / 2.0),
            r(y + 36.0),
            escape(&kind_label(node))
        );
    }
    s.push_str("</g></svg>");
    plot("diagram", 0, title, s)
}

/// Each node's row in its column: columns left to right, each node
/// placed by the mean row of the stages feeding it (fewer crossings),
/// ties in the spec's order.
fn rows(d: &super::model::Diagram, columns: usize) -> Vec<usize> {
    let mut row = vec![0usize; d.nodes.len()];
    let index = |name: &str| d.nodes.iter().position(|n| n.name == name);
    for layer in 0..columns {
        let mut members: Vec<(f64, usize)> = d
            .nodes
            .iter()
            .enumerate()
            .filter(|(_, n)| n.layer == layer)
            .map(|(i, n)| {
                let feeders: Vec<f64> = d
                    .edges
                    .iter()
                    .filter(|e| e.to == n.name)
                    .filter_map(|e| index(&e.from))
                    .filter(|&f| d.nodes[f].layer < layer)
                    .map(|f| row[f] as f64)
                    .collect();
                let mean = if feeders.is_empty() {
                    i as f64
                } else {
                    feeders.iter().sum::<f64>() / feeders.len() as f64
                };
                (mean, i)
            })
            .collect();
        members.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        for (k, (_, i)) in members.into_iter().enumerate() {
            row[i] = k;
        }
    }
    row
}

/// Where an edge lands on the bottom of a box, by the input it feeds.
fn port_share(port: &str) -> f64 {
    match port {
        "exc" => 0.2,
        "arm" => 0.45,
        "cj" => 0.6,
        "ref" => 0.75,
        _ => 0.5,
    }
}

/// An edge's signal in a word.
fn short(signal: &str) -> &str {
    match signal {
        "excitation voltage" => "excitation",
        other => other,
    }
}

/// Draws one edge from box `a` to box `b` with its label: beside the
/// arrow on a box's left side, or under the box (line `k` there) for
/// any other input. Returns whether it used a line under the box.
fn edge(
    s: &mut String,
    e: &super::model::DiagramEdge,
    (a, b): ((f64, f64), (f64, f64)),
    box_w: f64,
    id: &str,
    k: usize,
) -> bool {
    let (x1, y1) = (a.0 + box_w, a.1 + BOX_H / 2.0);
    let side = e.port == "in" && b.0 > a.0;
    let (x2, y2) = if side {
        (b.0, b.1 + BOX_H / 2.0)
    } else {
        (b.0 + box_w * port_share(&e.port), b.1 + BOX_H)
    };
    let (c1, c2) = if side {
        let mx = r((x1 + x2) / 2.0);
        (format!("{mx} {}", r(y1)), format!("{mx} {}", r(y2)))
    } else {
        (
            format!("{} {}", r(x2), r(y1)),
            format!("{} {}", r(x2), r(y2 + 30.0)),
        )
    };
    let (tx, ty, anchor, text) = if side {
        (x2 - 8.0, y2 - 6.0, "end", short(&e.signal).to_string())
    } else {
        (
            x2 + 6.0,
            y2 + 14.0 + 13.0 * k as f64,
            "start",
            format!("{}: {}", e.port, short(&e.signal)),
        )
    };
    let _ = write!(
        s,
        r##"<path class="data" d="M{x1} {y1} C{c1} {c2} {x2} {y2}" fill="none" stroke="#333333" stroke-width="1.4" marker-end="url(#{id}-arrow)"><title>{} → {}.{}: {}</title></path><text x="{tx}" y="{ty}" text-anchor="{anchor}" class="edge">{}</text>"##,
        escape(&e.from),
        escape(&e.to),
        escape(&e.port),
        escape(&e.signal),
        escape(&text),
        x1 = r(x1),
        y1 = r(y1),
        x2 = r(x2),
        y2 = r(y2),
        tx = r(tx),
        ty = r(ty),
    );
    !side
}

fn r(x: f64) -> String {
    crate::units::format::trimmed((x * 100.0).round() / 100.0, 12)
}

fn kind_index(kind: &str) -> usize {
    match kind {
        "excitation" => 4,
        "sensor" => 1,
        "bridge" => 3,
        "amplifier" => 0,
        "filter" => 2,
        "adc" => 5,
        _ => 0,
    }
}

fn kind_label(node: &super::model::DiagramNode) -> String {
    match &node.model {
        Some(m) => format!("{} · {m}", node.kind),
        None => node.kind.clone(),
    }
}

//! The chain as a block diagram: boxes in columns by their depth in the
//! graph, edges with their signal type. The layout is worked out first,
//! as rectangles, and the gaps between boxes are sized to the labels
//! they hold, so no label can land on a box; the SVG is drawn from it.

use std::fmt::Write;

use super::model::{Diagram, DiagramEdge, DiagramNode};
use super::svg::{escape, open, PALETTE};
use crate::syntax::ast::StageKind;

const BOX_W: f64 = 128.0;
const BOX_H: f64 = 46.0;
/// The least gaps between columns and rows; labels may widen them.
const COL_GAP: f64 = 64.0;
const ROW_GAP: f64 = 52.0;
/// A character of the diagram's 12 px text, generous so a label's
/// rectangle holds it in any sans-serif font.
const TEXT_CHAR_W: f64 = 7.4;
/// The text's extent above and below its baseline.
const ASCENT: f64 = 12.0;
const DESCENT: f64 = 4.0;
/// Room a label keeps from a box and from the arrow it names.
const PAD: f64 = 8.0;
/// The first label under a box sits this far below its bottom edge
/// (baseline), the next ones a line further each.
const FIRST_LINE: f64 = 14.0;
const LINE_H: f64 = 13.0;

/// A rectangle of the drawing: a box, or the extent of a label's text.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Rect {
    pub x: f64,
    pub y: f64,
    pub w: f64,
    pub h: f64,
}

impl Rect {
    pub fn overlaps(&self, other: &Rect) -> bool {
        self.x < other.x + other.w
            && other.x < self.x + self.w
            && self.y < other.y + other.h
            && other.y < self.y + self.h
    }
}

/// An edge's label: its text and where it is anchored (its baseline).
struct Label {
    text: String,
    x: f64,
    y: f64,
    /// `end`: the text ends at `x`; `start`: it begins there.
    anchor: &'static str,
}

impl Label {
    fn rect(&self) -> Rect {
        let w = self.text.chars().count() as f64 * TEXT_CHAR_W;
        let x = if self.anchor == "end" {
            self.x - w
        } else {
            self.x
        };
        Rect {
            x,
            y: self.y - ASCENT,
            w,
            h: ASCENT + DESCENT,
        }
    }
}

/// One edge drawn: a cubic curve and its label.
struct EdgeDrawing<'a> {
    edge: &'a DiagramEdge,
    from: (f64, f64),
    controls: [(f64, f64); 2],
    to: (f64, f64),
    label: Label,
}

/// Where everything goes.
pub struct Layout<'a> {
    pub width: f64,
    pub height: f64,
    pub box_w: f64,
    /// One per node, in the diagram's order.
    pub boxes: Vec<Rect>,
    edges: Vec<EdgeDrawing<'a>>,
}

impl Layout<'_> {
    /// Every edge label's extent.
    pub fn labels(&self) -> Vec<Rect> {
        self.edges.iter().map(|e| e.label.rect()).collect()
    }
}

/// The chain's block diagram as SVG, with the element id `id`.
pub fn render(d: &Diagram, id: &str, title: &str) -> String {
    let l = layout(d);
    let mut s = open(id, title, l.width, l.height);
    let _ = write!(
        s,
        r##"<defs><marker id="{id}-arrow" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="7" markerHeight="7" orient="auto-start-reverse"><path d="M0 0 L10 5 L0 10 Z" fill="#333333"/></marker></defs><text x="20" y="20" class="title">{}</text><g class="plot-area" data-x="0" data-y="0" data-width="{}" data-height="{}">"##,
        escape(title),
        r(l.width),
        r(l.height)
    );
    for e in &l.edges {
        draw_edge(&mut s, e, id);
    }
    for (node, b) in d.nodes.iter().zip(&l.boxes) {
        draw_box(&mut s, node, b);
    }
    s.push_str("</g></svg>");
    s
}

/// Columns by depth, rows by [`rows`]; the column gap holds the widest
/// label beside an arrow, the row gap the most label lines under a box.
pub fn layout(d: &Diagram) -> Layout<'_> {
    let longest = d
        .nodes
        .iter()
        .map(|n| n.name.chars().count().max(kind_label(n).chars().count()))
        .max()
        .unwrap_or(8);
    let box_w = BOX_W.max(longest as f64 * TEXT_CHAR_W + 18.0);
    let columns = d.nodes.iter().map(|n| n.layer + 1).max().unwrap_or(1);
    let row_of = rows(d, columns);
    let index = |name: &str| d.nodes.iter().position(|n| n.name == name);
    let ends: Vec<Option<(usize, usize)>> = d
        .edges
        .iter()
        .map(|e| Some((index(&e.from)?, index(&e.to)?)))
        .collect();
    let beside = |e: &DiagramEdge, (a, b): (usize, usize)| {
        e.port == "in" && d.nodes[b].layer > d.nodes[a].layer
    };
    let mut under = vec![0usize; d.nodes.len()];
    let mut widest_beside = 0.0f64;
    for (e, ends) in d.edges.iter().zip(&ends) {
        let Some(ends) = *ends else { continue };
        if beside(e, ends) {
            widest_beside = widest_beside.max(label_text(e, true).chars().count() as f64);
        } else {
            under[ends.1] += 1;
        }
    }
    let col_gap = COL_GAP.max(widest_beside * TEXT_CHAR_W + 2.0 * PAD);
    let lines = under.iter().copied().max().unwrap_or(0);
    let row_gap = ROW_GAP.max(FIRST_LINE + LINE_H * lines.saturating_sub(1) as f64 + DESCENT + PAD);
    let boxes: Vec<Rect> = d
        .nodes
        .iter()
        .zip(&row_of)
        .map(|(node, &row)| Rect {
            x: 20.0 + node.layer as f64 * (box_w + col_gap),
            y: 40.0 + row as f64 * (BOX_H + row_gap),
            w: box_w,
            h: BOX_H,
        })
        .collect();
    let mut line = vec![0usize; d.nodes.len()];
    let mut edges = Vec::new();
    for (e, ends) in d.edges.iter().zip(&ends) {
        let Some((a, b)) = *ends else { continue };
        let side = beside(e, (a, b));
        edges.push(place_edge(e, (&boxes[a], &boxes[b]), side, line[b]));
        if !side {
            line[b] += 1;
        }
    }
    let rows = row_of.iter().map(|r| r + 1).max().unwrap_or(1);
    let right = edges
        .iter()
        .map(|e| e.label.rect())
        .map(|r| r.x + r.w + PAD)
        .fold(0.0, f64::max);
    Layout {
        width: (40.0 + columns as f64 * (box_w + col_gap) - col_gap).max(right),
        height: 50.0 + rows as f64 * (BOX_H + row_gap),
        box_w,
        boxes,
        edges,
    }
}

/// An edge from box `a` to box `b`: into the left side of `b` with its
/// label in the gap before it (`side`), or into `b`'s bottom edge with
/// its label on line `k` under it.
fn place_edge<'a>(
    e: &'a DiagramEdge,
    (a, b): (&Rect, &Rect),
    side: bool,
    k: usize,
) -> EdgeDrawing<'a> {
    let from = (a.x + a.w, a.y + a.h / 2.0);
    if side {
        let to = (b.x, b.y + b.h / 2.0);
        let mx = (from.0 + to.0) / 2.0;
        return EdgeDrawing {
            edge: e,
            from,
            controls: [(mx, from.1), (mx, to.1)],
            to,
            label: Label {
                text: label_text(e, true),
                x: to.0 - PAD,
                y: to.1 - 6.0,
                anchor: "end",
            },
        };
    }
    let to = (b.x + b.w * port_share(&e.port), b.y + b.h);
    EdgeDrawing {
        edge: e,
        from,
        controls: [(to.0, from.1), (to.0, to.1 + 30.0)],
        to,
        label: Label {
            text: label_text(e, false),
            x: to.0 + 6.0,
            y: to.1 + FIRST_LINE + LINE_H * k as f64,
            anchor: "start",
        },
    }
}

/// Each node's row in its column: columns left to right, each node
/// placed by the mean row of the stages feeding it (fewer crossings),
/// ties in the spec's order.
fn rows(d: &Diagram, columns: usize) -> Vec<usize> {
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

/// An edge's label: its signal in a word, with the input it feeds when
/// it lands under the box.
fn label_text(e: &DiagramEdge, side: bool) -> String {
    let signal = match e.signal.as_str() {
        "excitation voltage" => "excitation",
        other => other,
    };
    if side {
        signal.to_string()
    } else {
        format!("{}: {signal}", e.port)
    }
}

fn draw_edge(s: &mut String, e: &EdgeDrawing, id: &str) {
    let [c1, c2] = e.controls;
    let _ = write!(
        s,
        r##"<path class="data" d="M{} {} C{} {} {} {} {} {}" fill="none" stroke="#333333" stroke-width="1.4" marker-end="url(#{id}-arrow)"><title>{} → {}.{}: {}</title></path><text x="{}" y="{}" text-anchor="{}" class="edge">{}</text>"##,
        r(e.from.0),
        r(e.from.1),
        r(c1.0),
        r(c1.1),
        r(c2.0),
        r(c2.1),
        r(e.to.0),
        r(e.to.1),
        escape(&e.edge.from),
        escape(&e.edge.to),
        escape(&e.edge.port),
        escape(&e.edge.signal),
        r(e.label.x),
        r(e.label.y),
        e.label.anchor,
        escape(&e.label.text),
    );
}

fn draw_box(s: &mut String, node: &DiagramNode, b: &Rect) {
    let colour = PALETTE[kind_index(&node.kind)];
    let middle = r(b.x + b.w / 2.0);
    let _ = write!(
        s,
        r##"<rect class="data" x="{}" y="{}" width="{}" height="{BOX_H}" rx="5" fill="#ffffff" stroke="{colour}" stroke-width="2"/><text x="{middle}" y="{}" text-anchor="middle" class="box">{}</text><text x="{middle}" y="{}" text-anchor="middle" class="kind">{}</text>"##,
        r(b.x),
        r(b.y),
        r(b.w),
        r(b.y + 19.0),
        escape(&node.name),
        r(b.y + 36.0),
        escape(&kind_label(node))
    );
}

fn r(x: f64) -> String {
    crate::units::format::trimmed((x * 100.0).round() / 100.0, 12)
}

/// A stage kind's colour in the palette, by the keyword the report model
/// carries (a conversion shares the amplifier's).
fn kind_index(keyword: &str) -> usize {
    let kind = StageKind::ALL.into_iter().find(|k| k.keyword() == keyword);
    match kind {
        Some(StageKind::Excitation) => 4,
        Some(StageKind::Sensor) => 1,
        Some(StageKind::Bridge) => 3,
        Some(StageKind::Amplifier | StageKind::Convert) | None => 0,
        Some(StageKind::Filter) => 2,
        Some(StageKind::Adc) => 5,
    }
}

fn kind_label(node: &DiagramNode) -> String {
    match &node.model {
        Some(m) => format!("{} · {m}", node.kind),
        None => node.kind.clone(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn node(name: &str, kind: &str, layer: usize) -> DiagramNode {
        DiagramNode {
            name: name.to_string(),
            kind: kind.to_string(),
            model: None,
            layer,
        }
    }

    fn edge(from: &str, to: &str, port: &str, signal: &str) -> DiagramEdge {
        DiagramEdge {
            from: from.to_string(),
            to: to.to_string(),
            port: port.to_string(),
            signal: signal.to_string(),
        }
    }

    /// No label's text touches a box, and every label lies inside the
    /// drawing.
    fn assert_clear(d: &Diagram) {
        let l = layout(d);
        for (label, e) in l.labels().iter().zip(&l.edges) {
            for (b, n) in l.boxes.iter().zip(&d.nodes) {
                assert!(
                    !label.overlaps(b),
                    "label {:?} {label:?} overlaps box {} {b:?}",
                    e.label.text,
                    n.name
                );
            }
            assert!(label.x >= 0.0 && label.x + label.w <= l.width, "{label:?}");
            assert!(label.y >= 0.0 && label.y + label.h <= l.height, "{label:?}");
        }
    }

    /// A bridge fed by excitation and four arms, a reference from the
    /// first stage and long signal names beside the arrows: the case
    /// whose labels used to run into the next box.
    #[test]
    fn labels_clear_every_box_of_a_crowded_diagram() {
        let d = Diagram {
            nodes: vec![
                node("supply", "excitation", 0),
                node("gauge_a", "sensor", 1),
                node("gauge_b", "sensor", 1),
                node("bridge", "bridge", 2),
                node("in_amp", "amplifier", 3),
                node("conv", "adc", 4),
            ],
            edges: vec![
                edge("supply", "gauge_a", "in", "excitation voltage"),
                edge("supply", "gauge_b", "in", "excitation voltage"),
                edge("supply", "bridge", "exc", "excitation voltage"),
                edge("gauge_a", "bridge", "arm", "resistance"),
                edge("gauge_b", "bridge", "arm", "resistance"),
                edge("gauge_b", "bridge", "arm", "resistance"),
                edge("gauge_a", "bridge", "arm", "resistance"),
                edge("bridge", "in_amp", "in", "differential voltage"),
                edge("in_amp", "conv", "in", "voltage"),
                edge("supply", "conv", "ref", "excitation voltage"),
            ],
        };
        assert_clear(&d);
    }

    /// Diagrams of every shape a small generator makes: a chain of
    /// columns, each node fed from an earlier column on a drawn port.
    #[test]
    fn labels_clear_every_box_of_generated_diagrams() {
        let ports = ["in", "exc", "arm", "cj", "ref"];
        let signals = [
            "voltage",
            "current",
            "excitation voltage",
            "a long signal name here",
        ];
        let mut state = 0x2545_f491_4f6c_dd1du64;
        let mut next = |n: usize| {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state % n as u64) as usize
        };
        for _ in 0..300 {
            let count = 2 + next(7);
            let nodes: Vec<DiagramNode> = (0..count)
                .map(|i| {
                    node(
                        &format!("stage_{i}"),
                        "amplifier",
                        if i == 0 { 0 } else { 1 + next(i) },
                    )
                })
                .collect();
            let mut edges = Vec::new();
            for (i, n) in nodes.iter().enumerate().skip(1) {
                for _ in 0..1 + next(4) {
                    let from = nodes
                        .iter()
                        .find(|m| m.layer < n.layer)
                        .unwrap_or(&nodes[0]);
                    let from = if next(2) == 0 { from } else { &nodes[next(i)] };
                    edges.push(edge(&from.name, &n.name, ports[next(5)], signals[next(4)]));
                }
            }
            assert_clear(&Diagram { nodes, edges });
        }
    }
}

//! The chain as a block diagram: boxes in columns by their depth in the
//! graph. A signal into the next column's box is a curve named by its
//! signal type; any other edge runs in straight lines through the gaps
//! between boxes and enters its box from below at the port it names (or
//! from the side, past the columns between), so no edge passes behind a
//! box. The layout is worked out first, as rectangles, and the gaps are
//! sized to the labels and runs they hold, so no label can land on a
//! box; the SVG is drawn from it.

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
/// A port's name under a box sits this far below its bottom edge
/// (baseline).
const FIRST_LINE: f64 = 14.0;

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

/// How an edge is drawn.
enum Route {
    /// Into the next column's left side: a cubic curve across the gap.
    Curve([(f64, f64); 2]),
    /// Anywhere else: straight runs through the gaps between boxes (out
    /// into the gap after the source's column, along the gap under the
    /// target's row, then up into the target), so no edge passes behind
    /// a box and seems to feed it. The corners between `from` and `to`.
    Runs(Vec<(f64, f64)>),
}

/// One edge drawn: its route and its label.
struct EdgeDrawing<'a> {
    edge: &'a DiagramEdge,
    from: (f64, f64),
    route: Route,
    to: (f64, f64),
    label: Label,
}

impl EdgeDrawing<'_> {
    /// The straight runs of a routed edge, as thin rectangles.
    #[cfg(test)]
    fn runs(&self) -> Vec<Rect> {
        let Route::Runs(corners) = &self.route else {
            return Vec::new();
        };
        let points: Vec<(f64, f64)> = std::iter::once(self.from)
            .chain(corners.iter().copied())
            .chain(std::iter::once(self.to))
            .collect();
        points
            .windows(2)
            .map(|w| Rect {
                x: w[0].0.min(w[1].0),
                y: w[0].1.min(w[1].1),
                w: (w[0].0 - w[1].0).abs(),
                h: (w[0].1 - w[1].1).abs(),
            })
            .collect()
    }
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

/// How an edge runs, by where its ends sit.
#[derive(Clone, Copy, PartialEq)]
enum Kind {
    /// Into `in`, one column on: beside, across one gap.
    Beside,
    /// Into `in`, columns on: around the boxes between, into the side.
    Around,
    /// Into another input, or back: around, up into the box's bottom.
    Under,
}

fn kind_of(e: &DiagramEdge, (a, b): (&DiagramNode, &DiagramNode)) -> Kind {
    match (e.port == "in", b.layer) {
        (true, l) if l == a.layer + 1 => Kind::Beside,
        (true, l) if l > a.layer + 1 => Kind::Around,
        _ => Kind::Under,
    }
}

/// Room between parallel runs in one gap, and before the first.
const LANE: f64 = 6.0;
const LANE_START: f64 = 8.0;

/// Where one routed edge runs: its lane in the gap after its source's
/// column, its lane in the gap before its target's (an edge going
/// around), and its channel in the gap under its target's row.
#[derive(Clone, Copy)]
struct Runs {
    out: usize,
    before: Option<usize>,
    channel: usize,
}

/// The lanes (vertical runs) of each column gap and the channels
/// (horizontal runs) of each row gap, handed out edge by edge.
struct Lanes {
    /// Per edge; None for one beside its target.
    of_edge: Vec<Option<Runs>>,
    /// Most departing lanes in one column gap, most arriving ones, most
    /// channels in one row gap.
    most: (usize, usize, usize),
}

fn lanes(d: &Diagram, ends: &[Ends], kinds: &[Kind], row_of: &[usize]) -> Lanes {
    let columns = d.nodes.iter().map(|n| n.layer + 1).max().unwrap_or(1);
    let rows = row_of.iter().map(|r| r + 1).max().unwrap_or(1);
    let (mut out_of, mut into) = (vec![0usize; columns + 1], vec![0usize; columns + 1]);
    let mut in_row = vec![0usize; rows];
    let take = |count: &mut usize| {
        *count += 1;
        *count - 1
    };
    let of_edge = ends
        .iter()
        .zip(kinds)
        .map(|(ends, &kind)| {
            let (a, b) = (*ends)?;
            if kind == Kind::Beside {
                return None;
            }
            Some(Runs {
                out: take(&mut out_of[d.nodes[a].layer]),
                before: (kind == Kind::Around).then(|| take(&mut into[d.nodes[b].layer])),
                channel: take(&mut in_row[row_of[b]]),
            })
        })
        .collect();
    let most = (
        out_of.into_iter().max().unwrap_or(0),
        into.into_iter().max().unwrap_or(0),
        in_row.into_iter().max().unwrap_or(0),
    );
    Lanes { of_edge, most }
}

/// The room `count` runs take across a gap.
fn runs_room(count: usize) -> f64 {
    if count == 0 {
        0.0
    } else {
        LANE_START + LANE * (count - 1) as f64 + PAD
    }
}

/// An edge's two nodes, by index (None when a name is not a node's).
type Ends = Option<(usize, usize)>;

/// Each edge's two nodes and how it runs.
fn ends_and_kinds(d: &Diagram) -> (Vec<Ends>, Vec<Kind>) {
    let index = |name: &str| d.nodes.iter().position(|n| n.name == name);
    let ends: Vec<Ends> = d
        .edges
        .iter()
        .map(|e| Some((index(&e.from)?, index(&e.to)?)))
        .collect();
    let kinds = d
        .edges
        .iter()
        .zip(&ends)
        .map(|(e, ends)| match ends {
            Some((a, b)) => kind_of(e, (&d.nodes[*a], &d.nodes[*b])),
            None => Kind::Under,
        })
        .collect();
    (ends, kinds)
}

/// Columns by depth, rows by [`rows`]; the column gap holds the widest
/// label beside an arrow and the lanes of the edges that go around, the
/// row gap the port names under a box and the channels under them.
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
    let (ends, kinds) = ends_and_kinds(d);
    let widest_beside = d
        .edges
        .iter()
        .zip(&kinds)
        .filter(|(_, kind)| **kind != Kind::Under)
        .map(|(e, _)| label_text(e).chars().count() as f64 * TEXT_CHAR_W)
        .fold(0.0, f64::max);
    let lanes = lanes(d, &ends, &kinds, &row_of);
    let (departing, arriving, channels) = lanes.most;
    let col_gap =
        COL_GAP.max(runs_room(departing) + runs_room(arriving) + widest_beside + 2.0 * PAD);
    let labels_room = if kinds.contains(&Kind::Under) {
        FIRST_LINE + DESCENT
    } else {
        0.0
    };
    let grid = Grid {
        box_w,
        col_gap,
        row_gap: ROW_GAP.max(labels_room + runs_room(channels) + PAD),
        labels_room,
        arrivals_end: widest_beside + PAD,
    };
    let boxes: Vec<Rect> = d
        .nodes
        .iter()
        .zip(&row_of)
        .map(|(node, &row)| grid.cell(node.layer, row))
        .collect();
    let edges = place_edges(d, (&ends, &kinds), &lanes, &boxes, &grid);
    let rows = row_of.iter().map(|r| r + 1).max().unwrap_or(1);
    let right = edges
        .iter()
        .map(|e| e.label.rect())
        .map(|r| r.x + r.w + PAD)
        .fold(0.0, f64::max);
    Layout {
        width: (40.0 + columns as f64 * (box_w + col_gap) - col_gap)
            .max(right)
            .max(grid.gap_left(columns - 1) + runs_room(departing) + PAD),
        height: 50.0 + rows as f64 * (BOX_H + grid.row_gap),
        box_w,
        boxes,
        edges,
    }
}

/// Every edge drawn, each port named once under its box however many
/// edges feed it.
fn place_edges<'a>(
    d: &'a Diagram,
    (ends, kinds): (&[Ends], &[Kind]),
    lanes: &Lanes,
    boxes: &[Rect],
    grid: &Grid,
) -> Vec<EdgeDrawing<'a>> {
    let mut labelled: Vec<(usize, &str)> = Vec::new();
    let mut edges = Vec::new();
    for (i, (e, ends)) in d.edges.iter().zip(ends).enumerate() {
        let Some((a, b)) = *ends else { continue };
        let mut placed = match lanes.of_edge[i] {
            None => beside(e, (&boxes[a], &boxes[b])),
            Some(runs) => routed(e, (&boxes[a], &boxes[b]), grid, runs),
        };
        if kinds[i] == Kind::Under {
            if labelled.contains(&(b, e.port.as_str())) {
                placed.label.text.clear();
            }
            labelled.push((b, &e.port));
        }
        edges.push(placed);
    }
    edges
}

/// The spacing of the columns and rows.
struct Grid {
    box_w: f64,
    col_gap: f64,
    row_gap: f64,
    /// Under a box, the port names' room before the channels.
    labels_room: f64,
    /// Arriving lanes end this far before the next column: the labels
    /// beside arrows sit there.
    arrivals_end: f64,
}

impl Grid {
    fn cell(&self, column: usize, row: usize) -> Rect {
        Rect {
            x: 20.0 + column as f64 * (self.box_w + self.col_gap),
            y: 40.0 + row as f64 * (BOX_H + self.row_gap),
            w: self.box_w,
            h: BOX_H,
        }
    }

    /// The left side of the gap after `column`.
    fn gap_left(&self, column: usize) -> f64 {
        20.0 + column as f64 * (self.box_w + self.col_gap) + self.box_w
    }

    /// Departing lane `k`'s x in the gap after the box `a`: from its
    /// left.
    fn departing_lane(&self, a: &Rect, k: usize) -> f64 {
        a.x + a.w + LANE_START + LANE * k as f64
    }

    /// Arriving lane `k`'s x in the gap before the box at `x`: from the
    /// labels beside its arrows leftwards.
    fn arriving_lane(&self, x: f64, k: usize) -> f64 {
        x - self.arrivals_end - LANE_START - LANE * k as f64
    }

    /// Channel `k`'s y under the row whose boxes end at `bottom`.
    fn channel(&self, bottom: f64, k: usize) -> f64 {
        bottom + self.labels_room + LANE_START + LANE * k as f64
    }
}

/// An edge into the left side of the next column's box `b`, its label in
/// the gap before it.
fn beside<'a>(e: &'a DiagramEdge, (a, b): (&Rect, &Rect)) -> EdgeDrawing<'a> {
    let from = (a.x + a.w, a.y + a.h / 2.0);
    let to = (b.x, b.y + b.h / 2.0);
    let mx = (from.0 + to.0) / 2.0;
    EdgeDrawing {
        edge: e,
        from,
        route: Route::Curve([(mx, from.1), (mx, to.1)]),
        to,
        label: side_label(e, to),
    }
}

fn side_label(e: &DiagramEdge, to: (f64, f64)) -> Label {
    Label {
        text: label_text(e),
        x: to.0 - PAD,
        y: to.1 - 6.0,
        anchor: "end",
    }
}

/// An edge from box `a` around the boxes to box `b`: out along lane
/// `out` of the gap after `a`'s column, along channel `channel` under
/// `b`'s row, then into `b`'s side up lane `before` of the gap before it,
/// or up into its bottom edge at its port, named beside the arrowhead.
fn routed<'a>(
    e: &'a DiagramEdge,
    (a, b): (&Rect, &Rect),
    grid: &Grid,
    Runs {
        out,
        before,
        channel,
    }: Runs,
) -> EdgeDrawing<'a> {
    let from = (a.x + a.w, a.y + a.h / 2.0);
    let x_out = grid.departing_lane(a, out);
    let y = grid.channel(b.y + b.h, channel);
    let mut corners = vec![(x_out, from.1), (x_out, y)];
    let (to, label) = match before {
        Some(k) => {
            let to = (b.x, b.y + b.h / 2.0);
            let x_in = grid.arriving_lane(b.x, k);
            corners.extend([(x_in, y), (x_in, to.1)]);
            (to, side_label(e, to))
        }
        None => {
            let to = (b.x + b.w * port_share(&e.port), b.y + b.h);
            corners.push((to.0, y));
            let label = Label {
                text: e.port.clone(),
                x: to.0 + 6.0,
                y: to.1 + FIRST_LINE,
                anchor: "start",
            };
            (to, label)
        }
    };
    EdgeDrawing {
        edge: e,
        from,
        route: Route::Runs(corners),
        to,
        label,
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

/// An edge's label beside its arrow: its signal in a word. (Under a box
/// an edge is named by its port alone; the edge table beside the
/// diagram gives the signal, and the arrow's title both.)
fn label_text(e: &DiagramEdge) -> String {
    match e.signal.as_str() {
        "excitation voltage" => "excitation",
        other => other,
    }
    .to_string()
}

fn draw_edge(s: &mut String, e: &EdgeDrawing, id: &str) {
    let path = match &e.route {
        Route::Curve([c1, c2]) => format!(
            "M{} {} C{} {} {} {} {} {}",
            r(e.from.0),
            r(e.from.1),
            r(c1.0),
            r(c1.1),
            r(c2.0),
            r(c2.1),
            r(e.to.0),
            r(e.to.1)
        ),
        Route::Runs(corners) => {
            let mut d = format!("M{} {}", r(e.from.0), r(e.from.1));
            for &(x, y) in corners.iter().chain(std::iter::once(&e.to)) {
                let _ = write!(d, " L{} {}", r(x), r(y));
            }
            d
        }
    };
    let _ = write!(
        s,
        r##"<path class="data" d="{path}" fill="none" stroke="#333333" stroke-width="1.4" stroke-linejoin="round" marker-end="url(#{id}-arrow)"><title>{} → {}.{}: {}</title></path><text x="{}" y="{}" text-anchor="{}" class="edge">{}</text>"##,
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

    /// No label's text touches a box, no routed edge runs through a box
    /// (it may end on its own two), and every label and run lies inside
    /// the drawing.
    fn assert_clear(d: &Diagram) {
        let l = layout(d);
        let inside = |b: &Rect| Rect {
            x: b.x + 0.5,
            y: b.y + 0.5,
            w: b.w - 1.0,
            h: b.h - 1.0,
        };
        for e in &l.edges {
            for run in e.runs() {
                for (b, n) in l.boxes.iter().zip(&d.nodes) {
                    assert!(
                        !run.overlaps(&inside(b)),
                        "edge {} → {}.{} runs {run:?} through box {} {b:?}",
                        e.edge.from,
                        e.edge.to,
                        e.edge.port,
                        n.name
                    );
                }
                assert!(run.x >= 0.0 && run.x + run.w <= l.width, "{run:?}");
                assert!(run.y >= 0.0 && run.y + run.h <= l.height, "{run:?}");
            }
        }
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

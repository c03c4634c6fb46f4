//! A small SVG plotting module of our own: axes with 1-2-5 ticks and SI
//! prefixes, lines, bands, bars and limit lines, a legend, and text as
//! real `<text>`. Coordinates are written with two decimals so the same
//! data gives the same bytes. Colour is never the only channel: every
//! series also has its own dash pattern and marker.

use std::fmt::Write;

/// A palette safe for the common colour-vision deficiencies
/// (Okabe and Ito's), in an order whose neighbours also differ in
/// lightness, so greyscale prints tell them apart.
pub const PALETTE: [&str; 6] = [
    "#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9",
];
const DASHES: [&str; 6] = ["", "7 3", "2 3", "9 3 2 3", "4 2", "1 2"];
/// The requirement's limit lines.
pub const LIMIT_COLOUR: &str = "#000000";

pub const WIDTH: f64 = 720.0;
pub const HEIGHT: f64 = 380.0;
const LEFT: f64 = 78.0;
const RIGHT: f64 = 24.0;
const TOP: f64 = 58.0;
const BOTTOM: f64 = 56.0;
const CHAR_W: f64 = 6.6;

/// Escapes text for XML.
pub fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

fn n(x: f64) -> String {
    let r = (x * 100.0).round() / 100.0 + 0.0;
    crate::units::format::trimmed(r, 12)
}

/// An axis: the quantity, its unit, its range, and whether it is
/// logarithmic. `prefixable` units (V, s, Hz) get an SI prefix chosen
/// for the whole axis; others (K, degC, %) are written as they are.
/// Its ends always fall on ticks: the constructors widen the range to
/// whole ticks, and the range cannot be set otherwise.
#[derive(Clone, Debug)]
pub struct Axis {
    quantity: String,
    unit: String,
    lo: f64,
    hi: f64,
    /// The tick spacing of a linear axis (0 on a logarithmic one).
    step: f64,
    log: bool,
    prefixable: bool,
}

impl Axis {
    /// A linear axis over `lo..hi`, widened to whole 1-2-5 ticks.
    pub fn linear(quantity: &str, unit: &str, lo: f64, hi: f64) -> Axis {
        let (lo, hi) = padded(lo, hi);
        let (lo, hi, step) = whole_ticks(lo, hi);
        Axis {
            quantity: quantity.to_string(),
            unit: unit.to_string(),
            lo,
            hi,
            step,
            log: false,
            prefixable: matches!(unit, "V" | "A" | "s" | "Hz" | "Ω"),
        }
    }

    /// A logarithmic axis over `lo..hi`, widened to 1-2-5 values.
    pub fn logarithmic(quantity: &str, unit: &str, lo: f64, hi: f64) -> Axis {
        let lo = lo.max(1e-30);
        let hi = hi.max(lo * 10.0);
        Axis {
            quantity: quantity.to_string(),
            unit: unit.to_string(),
            lo: one_two_five(lo, true),
            hi: one_two_five(hi, false),
            step: 0.0,
            log: true,
            prefixable: true,
        }
    }

    fn t(&self, x: f64) -> f64 {
        if self.log {
            (x.max(1e-300).log10() - self.lo.log10()) / (self.hi.log10() - self.lo.log10())
        } else {
            (x - self.lo) / (self.hi - self.lo)
        }
    }

    /// The prefix and its scale for the whole axis.
    fn prefix(&self) -> (f64, &'static str) {
        if !self.prefixable || self.log {
            return (1.0, "");
        }
        let m = self.lo.abs().max(self.hi.abs());
        prefix_for(m)
    }

    fn title(&self) -> String {
        let (_, p) = self.prefix();
        if self.unit.is_empty() {
            self.quantity.clone()
        } else {
            format!("{} ({p}{})", self.quantity, self.unit)
        }
    }

    /// Tick values and their labels, from one end to the other.
    fn ticks(&self) -> Vec<(f64, String)> {
        if self.log {
            return log_ticks(self.lo, self.hi);
        }
        let (scale, _) = self.prefix();
        let first = (self.lo / self.step).round() as i64;
        let last = (self.hi / self.step).round() as i64;
        (first..=last)
            .map(|i| {
                let v = i as f64 * self.step;
                (v, crate::units::format::trimmed(v / scale + 0.0, 6))
            })
            .collect()
    }
}

fn prefix_for(m: f64) -> (f64, &'static str) {
    const P: [(f64, &str); 7] = [
        (1e6, "M"),
        (1e3, "k"),
        (1.0, ""),
        (1e-3, "m"),
        (1e-6, "µ"),
        (1e-9, "n"),
        (1e-12, "p"),
    ];
    if m == 0.0 || !m.is_finite() {
        return (1.0, "");
    }
    P.iter()
        .copied()
        .find(|(s, _)| m >= *s * 0.999)
        .unwrap_or((1e-12, "p"))
}

/// A range with room around it; a flat range gets some width.
fn padded(lo: f64, hi: f64) -> (f64, f64) {
    let (lo, hi) = if lo.is_finite() && hi.is_finite() {
        (lo.min(hi), lo.max(hi))
    } else {
        (0.0, 1.0)
    };
    if hi - lo <= f64::EPSILON * hi.abs().max(1.0) * 16.0 {
        let w = if lo == 0.0 { 1.0 } else { lo.abs() * 0.1 };
        return (lo - w, hi + w);
    }
    (lo, hi)
}

/// Fewest and most tick intervals an axis may have.
const INTERVALS: (i64, i64) = (4, 10);

/// `lo..hi` widened to whole multiples of a 1-2-5 step, with the step:
/// of the steps giving four to ten intervals, the one that widens the
/// range least (the larger step on a tie).
fn whole_ticks(lo: f64, hi: f64) -> (f64, f64, f64) {
    let top = (hi - lo).log10().floor() as i32;
    let widened = |step: f64| {
        let a = (lo / step + 1e-9).floor() * step;
        let b = (hi / step - 1e-9).ceil() * step;
        (a + 0.0, b + 0.0, step)
    };
    let candidates = (top - 2..=top + 1)
        .rev()
        .flat_map(|e| [5.0, 2.0, 1.0].map(|m| m * 10f64.powi(e)))
        .map(widened)
        .filter(|(a, b, step)| {
            let n = ((b - a) / step).round() as i64;
            (INTERVALS.0..=INTERVALS.1).contains(&n)
        });
    let mut best: Option<(f64, f64, f64)> = None;
    for c in candidates {
        // Ties keep the first candidate: the larger step.
        if best.is_none_or(|b| c.1 - c.0 < (b.1 - b.0) * (1.0 - 1e-9)) {
            best = Some(c);
        }
    }
    best.unwrap_or_else(|| widened(tick_step(hi - lo)))
}

/// A 1-2-5 step giving four to ten ticks over `span`.
fn tick_step(span: f64) -> f64 {
    let raw = span / 6.0;
    let decade = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * decade)
        .find(|s| span / s <= 8.0)
        .unwrap_or(10.0 * decade)
}

/// The 1-2-5 value nearest `x` at or below it (`down`) or at or above it.
fn one_two_five(x: f64, down: bool) -> f64 {
    let decade = 10f64.powf(x.log10().floor());
    let m = x / decade;
    let ladder = [1.0, 2.0, 5.0, 10.0];
    let picked = if down {
        ladder.into_iter().rev().find(|l| *l <= m * (1.0 + 1e-9))
    } else {
        ladder.into_iter().find(|l| *l >= m * (1.0 - 1e-9))
    };
    picked.unwrap_or(1.0) * decade
}

fn log_ticks(lo: f64, hi: f64) -> Vec<(f64, String)> {
    let mut out = Vec::new();
    let first = lo.log10().floor() as i32;
    let last = hi.log10().ceil() as i32;
    for e in first..=last {
        let decade = 10f64.powi(e);
        for m in [1.0, 2.0, 5.0] {
            let v = m * decade;
            if v >= lo * 0.999 && v <= hi * 1.001 {
                let (s, p) = prefix_for(v);
                out.push((v, format!("{}{p}", crate::units::format::trimmed(v / s, 3))));
            }
        }
    }
    out
}

/// How a series is drawn.
#[derive(Clone, Copy, Debug)]
pub struct Style {
    pub index: usize,
}

impl Style {
    fn colour(self) -> &'static str {
        PALETTE[self.index % PALETTE.len()]
    }
    fn dash(self) -> &'static str {
        DASHES[self.index % DASHES.len()]
    }
}

pub enum Item {
    Line {
        label: String,
        style: Style,
        points: Vec<(f64, f64)>,
        markers: bool,
    },
    /// A curve and its mirror image below zero (a ± interval).
    PlusMinus {
        label: String,
        style: Style,
        points: Vec<(f64, f64)>,
    },
    /// A filled band between two curves over the same x, its edges drawn
    /// in the series' dash.
    Band {
        label: String,
        style: Style,
        lower: Vec<(f64, f64)>,
        upper: Vec<(f64, f64)>,
    },
    /// A horizontal limit line across the plot.
    HLimit { label: String, y: f64 },
    /// A vertical marker line.
    VMark { label: String, x: f64 },
    /// A shaded horizontal stripe (a margin band).
    HBand { label: String, y0: f64, y1: f64 },
}

pub struct Chart {
    /// Unique within the document: prefixes ids (the clip path).
    pub id: String,
    pub title: String,
    pub x: Axis,
    pub y: Axis,
    pub items: Vec<Item>,
}

impl Chart {
    fn px(&self, x: f64) -> f64 {
        LEFT + self.x.t(x) * (WIDTH - LEFT - RIGHT)
    }
    fn py(&self, y: f64) -> f64 {
        HEIGHT - BOTTOM - self.y.t(y) * (HEIGHT - TOP - BOTTOM)
    }

    pub fn render(&self) -> String {
        let mut s = open(&self.id, &self.title, WIDTH, HEIGHT);
        self.axes(&mut s);
        let _ = write!(
            s,
            r#"<clipPath id="{id}-clip"><rect x="{x}" y="{y}" width="{w}" height="{h}"/></clipPath><g class="plot-area" data-x="{x}" data-y="{y}" data-width="{w}" data-height="{h}" clip-path="url(#{id}-clip)">"#,
            id = self.id,
            x = n(LEFT),
            y = n(TOP),
            w = n(WIDTH - LEFT - RIGHT),
            h = n(HEIGHT - TOP - BOTTOM)
        );
        let mut marks = 0;
        for item in &self.items {
            if let Item::VMark { label, x } = item {
                self.mark(&mut s, label, *x, marks);
                marks += 1;
                continue;
            }
            self.item(&mut s, item);
        }
        s.push_str("</g>");
        self.legend(&mut s);
        s.push_str("</svg>");
        s
    }

    fn axes(&self, s: &mut String) {
        let (l, r, t, b) = (LEFT, WIDTH - RIGHT, TOP, HEIGHT - BOTTOM);
        let _ = write!(
            s,
            r##"<rect x="{}" y="{}" width="{}" height="{}" fill="#ffffff" stroke="#444444"/>"##,
            n(l),
            n(t),
            n(r - l),
            n(b - t)
        );
        for (v, label) in self.x.ticks() {
            let x = self.px(v);
            let _ = write!(
                s,
                r##"<line x1="{x}" y1="{t}" x2="{x}" y2="{b}" stroke="#dddddd"/><text x="{x}" y="{ty}" text-anchor="middle" class="tick">{label}</text>"##,
                x = n(x),
                t = n(t),
                b = n(b),
                ty = n(b + 16.0),
                label = escape(&label)
            );
        }
        for (v, label) in self.y.ticks() {
            let y = self.py(v);
            let _ = write!(
                s,
                r##"<line x1="{l}" y1="{y}" x2="{r}" y2="{y}" stroke="#dddddd"/><text x="{tx}" y="{ty}" text-anchor="end" class="tick">{label}</text>"##,
                l = n(l),
                r = n(r),
                y = n(y),
                tx = n(l - 6.0),
                ty = n(y + 4.0),
                label = escape(&label)
            );
        }
        let _ = write!(
            s,
            r#"<text x="{}" y="{}" text-anchor="middle" class="axis">{}</text>"#,
            n((l + r) / 2.0),
            n(HEIGHT - 14.0),
            escape(&self.x.title())
        );
        let _ = write!(
            s,
            r#"<text transform="translate(16 {}) rotate(-90)" text-anchor="middle" class="axis">{}</text>"#,
            n((t + b) / 2.0),
            escape(&self.y.title())
        );
    }

    fn path(&self, points: &[(f64, f64)]) -> String {
        let mut d = String::new();
        for (i, &(x, y)) in points.iter().enumerate() {
            if !x.is_finite() || !y.is_finite() {
                continue;
            }
            let _ = write!(
                d,
                "{}{} {}",
                if i == 0 { "M" } else { " L" },
                n(self.px(x)),
                n(self.py(y))
            );
        }
        d
    }

    fn item(&self, s: &mut String, item: &Item) {
        match item {
            Item::Line {
                label,
                style,
                points,
                markers,
            } => {
                let dash = style.dash();
                let _ = write!(
                    s,
                    r#"<path class="data" d="{}" fill="none" stroke="{}" stroke-width="2"{}><title>{}</title></path>"#,
                    self.path(points),
                    style.colour(),
                    if dash.is_empty() {
                        String::new()
                    } else {
                        format!(r#" stroke-dasharray="{dash}""#)
                    },
                    escape(label)
                );
                if *markers {
                    for &(x, y) in points {
                        s.push_str(&marker(*style, self.px(x), self.py(y)));
                    }
                }
            }
            Item::PlusMinus {
                label,
                style,
                points,
            } => {
                let below: Vec<(f64, f64)> = points.iter().map(|&(x, y)| (x, -y)).collect();
                for side in [points, &below] {
                    self.item(
                        s,
                        &Item::Line {
                            label: label.clone(),
                            style: *style,
                            points: side.clone(),
                            markers: false,
                        },
                    );
                }
            }
            Item::Band {
                label,
                style,
                lower,
                upper,
            } => self.band(s, label, *style, lower, upper),
            Item::HLimit { label, y } => {
                let _ = write!(
                    s,
                    r#"<line class="data limit" x1="{}" y1="{y}" x2="{}" y2="{y}" stroke="{LIMIT_COLOUR}" stroke-width="1.6" stroke-dasharray="10 4 2 4"><title>{}</title></line>"#,
                    n(LEFT),
                    n(WIDTH - RIGHT),
                    escape(label),
                    y = n(self.py(*y))
                );
            }
            Item::VMark { label, x } => self.mark(s, label, *x, 0),
            Item::HBand { label, y0, y1 } => {
                let (a, b) = (self.py(*y0), self.py(*y1));
                let _ = write!(
                    s,
                    r##"<rect class="band" x="{}" y="{}" width="{}" height="{}" fill="#999999" fill-opacity="0.25"><title>{}</title></rect>"##,
                    n(LEFT),
                    n(a.min(b)),
                    n(WIDTH - LEFT - RIGHT),
                    n((a - b).abs()),
                    escape(label)
                );
            }
        }
    }

    /// A filled band with its edges drawn in the series' dash.
    fn band(
        &self,
        s: &mut String,
        label: &str,
        style: Style,
        lower: &[(f64, f64)],
        upper: &[(f64, f64)],
    ) {
        let mut pts: Vec<(f64, f64)> = upper.to_vec();
        pts.extend(lower.iter().rev().copied());
        let _ = write!(
            s,
            r#"<path class="data" d="{} Z" fill="{}" fill-opacity="0.22" stroke="none"><title>{}</title></path>"#,
            self.path(&pts),
            style.colour(),
            escape(label)
        );
        let dash = match style.dash() {
            "" => String::new(),
            d => format!(r#" stroke-dasharray="{d}""#),
        };
        for edge in [upper, lower] {
            let _ = write!(
                s,
                r#"<path class="data" d="{}" fill="none" stroke="{}" stroke-width="1.2"{dash}/>"#,
                self.path(edge),
                style.colour()
            );
        }
    }

    /// A vertical marker; the `k`-th one's label sits a line lower, and
    /// right of its line unless that would leave the plot.
    fn mark(&self, s: &mut String, label: &str, x: f64, k: usize) {
        let px = self.px(x);
        let width = label.chars().count() as f64 * CHAR_W;
        let (tx, anchor) = if px + 4.0 + width > WIDTH - RIGHT {
            (px - 4.0, "end")
        } else {
            (px + 4.0, "start")
        };
        let _ = write!(
            s,
            r##"<line class="data mark" x1="{px}" y1="{}" x2="{px}" y2="{}" stroke="#555555" stroke-dasharray="3 3"/><text x="{}" y="{}" text-anchor="{anchor}" class="mark">{}</text>"##,
            n(TOP),
            n(HEIGHT - BOTTOM),
            n(tx),
            n(TOP + 14.0 + 14.0 * k as f64),
            escape(label),
            px = n(px)
        );
    }

    fn legend(&self, s: &mut String) {
        let _ = write!(
            s,
            r#"<text x="{}" y="16" class="title">{}</text>"#,
            n(LEFT),
            escape(&self.title)
        );
        let (mut x, mut y) = (LEFT, 38.0);
        for item in &self.items {
            let Some(label) = legend_label(item) else {
                continue;
            };
            let w = 30.0 + label.chars().count() as f64 * CHAR_W + 16.0;
            if x + w > WIDTH - RIGHT && x > LEFT {
                x = LEFT;
                y += 16.0;
            }
            s.push_str(&swatch(item, x, y));
            let _ = write!(
                s,
                r#"<text x="{}" y="{}" class="legend">{}</text>"#,
                n(x + 30.0),
                n(y),
                escape(label)
            );
            x += w;
        }
    }
}

fn legend_label(item: &Item) -> Option<&str> {
    match item {
        Item::Line { label, .. }
        | Item::PlusMinus { label, .. }
        | Item::Band { label, .. }
        | Item::HLimit { label, .. }
        | Item::HBand { label, .. } => Some(label.as_str()).filter(|l| !l.is_empty()),
        Item::VMark { .. } => None,
    }
}

/// The legend's sample of an item, 24 px wide, left of its label.
fn swatch(item: &Item, x: f64, y: f64) -> String {
    let line = |colour: &str, width: &str, dash: &str| {
        format!(
            r#"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke="{colour}" stroke-width="{width}"{}/>"#,
            n(x),
            n(y - 4.0),
            n(x + 24.0),
            n(y - 4.0),
            if dash.is_empty() {
                String::new()
            } else {
                format!(r#" stroke-dasharray="{dash}""#)
            }
        )
    };
    let rect = |colour: &str, opacity: &str| {
        format!(
            r#"<rect x="{}" y="{}" width="24" height="9" fill="{colour}" fill-opacity="{opacity}"/>"#,
            n(x),
            n(y - 9.0)
        )
    };
    match item {
        Item::Line { style, markers, .. } => {
            let mut sw = line(style.colour(), "2", style.dash());
            if *markers {
                sw.push_str(&marker(*style, x + 12.0, y - 4.0));
            }
            sw
        }
        Item::PlusMinus { style, .. } => line(style.colour(), "2", style.dash()),
        Item::Band { style, .. } => {
            rect(style.colour(), "0.3") + &line(style.colour(), "1.2", style.dash())
        }
        Item::HLimit { .. } => line(LIMIT_COLOUR, "1.6", "10 4 2 4"),
        Item::HBand { .. } => rect("#999999", "0.35"),
        Item::VMark { .. } => String::new(),
    }
}

/// A marker shape per series: circle, square, triangle, diamond, ...
fn marker(style: Style, x: f64, y: f64) -> String {
    let c = style.colour();
    match style.index % 4 {
        0 => format!(
            r#"<circle class="data" cx="{}" cy="{}" r="3.2" fill="{c}"/>"#,
            n(x),
            n(y)
        ),
        1 => format!(
            r#"<rect class="data" x="{}" y="{}" width="6" height="6" fill="{c}"/>"#,
            n(x - 3.0),
            n(y - 3.0)
        ),
        2 => format!(
            r#"<path class="data" d="M{} {} L{} {} L{} {} Z" fill="{c}"/>"#,
            n(x),
            n(y - 4.0),
            n(x + 4.0),
            n(y + 3.0),
            n(x - 4.0),
            n(y + 3.0)
        ),
        _ => format!(
            r#"<path class="data" d="M{} {} L{} {} L{} {} L{} {} Z" fill="none" stroke="{c}" stroke-width="1.5"/>"#,
            n(x),
            n(y - 4.0),
            n(x + 4.0),
            n(y),
            n(x),
            n(y + 4.0),
            n(x - 4.0),
            n(y)
        ),
    }
}

/// The opening tag of a plot: a titled, described, scalable SVG.
pub fn open(id: &str, title: &str, w: f64, h: f64) -> String {
    format!(
        r#"<svg xmlns="http://www.w3.org/2000/svg" class="plot" id="{id}" viewBox="0 0 {} {}" width="{}" height="{}" role="img" aria-labelledby="{id}-title"><title id="{id}-title">{}</title><style>text{{font-family:sans-serif;font-size:12px;fill:#222222}} .title{{font-size:14px;font-weight:bold}} .tick{{font-size:11px}}</style>"#,
        n(w),
        n(h),
        n(w),
        n(h),
        escape(title)
    )
}

/// Horizontal bars (value, label) sorted by the caller, with a share
/// written at each bar's end.
pub fn bars(
    id: &str,
    title: &str,
    quantity: &str,
    unit: &str,
    rows: &[(String, f64, String)],
) -> String {
    let left = label_margin(rows.iter().map(|r| r.0.as_str()));
    let row_h = 22.0;
    let top = 40.0;
    let h = top + rows.len().max(1) as f64 * row_h + 50.0;
    let max = rows.iter().map(|r| r.1).fold(0.0, f64::max);
    let axis = Axis::linear(quantity, unit, 0.0, if max > 0.0 { max } else { 1.0 });
    let note_w = note_width(rows.iter().map(|r| r.2.as_str()));
    let plot_w = WIDTH - left - note_w.max(40.0);
    let px = |v: f64| left + axis.t(v) * plot_w;
    let mut s = open(id, title, WIDTH, h);
    let _ = write!(
        s,
        r#"<text x="{}" y="20" class="title">{}</text>"#,
        n(left),
        escape(title)
    );
    let bottom = top + rows.len() as f64 * row_h;
    let frame = RowFrame {
        left,
        plot_w,
        top,
        bottom,
    };
    frame.axis_and_area(&mut s, &axis, &px);
    for (i, (label, v, note)) in rows.iter().enumerate() {
        let y = top + i as f64 * row_h;
        let w = (px(*v) - left).max(0.5);
        let _ = write!(
            s,
            r##"<rect class="data" x="{}" y="{}" width="{}" height="{}" fill="{}" stroke="#222222"><title>{}</title></rect>"##,
            n(left),
            n(y + 3.0),
            n(w),
            n(row_h - 6.0),
            if i == 0 { PALETTE[1] } else { PALETTE[0] },
            escape(&format!("{label}: {note}"))
        );
        let _ = write!(
            s,
            r#"<text x="{}" y="{}" text-anchor="end">{}</text><text x="{}" y="{}">{}</text>"#,
            n(left - 6.0),
            n(y + row_h / 2.0 + 4.0),
            escape(label),
            n(left + w + 4.0),
            n(y + row_h / 2.0 + 4.0),
            escape(note)
        );
    }
    s.push_str("</g></svg>");
    s
}

/// The left margin of a chart of labelled rows: the longest label fits.
fn label_margin<'a>(labels: impl Iterator<Item = &'a str>) -> f64 {
    let label_w = labels.map(|l| l.chars().count()).max().unwrap_or(4) as f64 * CHAR_W + 16.0;
    label_w.max(90.0)
}

/// The width the longest note written beside a chart's rows takes.
fn note_width<'a>(notes: impl Iterator<Item = &'a str>) -> f64 {
    notes.map(|l| l.chars().count()).max().unwrap_or(0) as f64 * CHAR_W + 14.0
}

/// The plotting area of a chart of rows (bars, strips) along one
/// horizontal axis.
struct RowFrame {
    left: f64,
    plot_w: f64,
    top: f64,
    bottom: f64,
}

impl RowFrame {
    /// The axis's grid lines and tick labels across the rows, its title
    /// below, and the opening of the plot area the rows are drawn in.
    fn axis_and_area(&self, s: &mut String, axis: &Axis, px: &dyn Fn(f64) -> f64) {
        let (top, bottom) = (self.top, self.bottom);
        for (v, label) in axis.ticks() {
            let x = px(v);
            let _ = write!(
                s,
                r##"<line x1="{x}" y1="{}" x2="{x}" y2="{}" stroke="#dddddd"/><text x="{x}" y="{}" text-anchor="middle" class="tick">{}</text>"##,
                n(top),
                n(bottom),
                n(bottom + 16.0),
                escape(&label),
                x = n(x)
            );
        }
        let _ = write!(
            s,
            r#"<text x="{}" y="{}" text-anchor="middle" class="axis">{}</text><g class="plot-area" data-x="{}" data-y="{}" data-width="{}" data-height="{}">"#,
            n(self.left + self.plot_w / 2.0),
            n(bottom + 38.0),
            escape(&axis.title()),
            n(self.left),
            n(top),
            n(self.plot_w),
            n(bottom - top)
        );
    }
}

/// One row of a strip chart: a labelled span along the axis (None: no
/// span to draw), marked as hidden (drawn hatched and outlined, so it
/// reads without colour), with a note beside the plot.
pub struct Strip {
    pub label: String,
    /// The spans drawn on the row: none, one, or a mark at each end code
    /// for a fault that gives one end or the other.
    pub spans: Vec<(f64, f64)>,
    pub hidden: bool,
    pub note: String,
}

/// A strip chart: one row per span along `axis`, over a shaded window
/// (`window`, in axis units) drawn across every row.
pub fn strips(id: &str, title: &str, axis: &Axis, window: (f64, f64), rows: &[Strip]) -> String {
    let left = label_margin(rows.iter().map(|r| r.label.as_str()));
    let note_w = note_width(rows.iter().map(|r| r.note.as_str()));
    let plot_w = (WIDTH - left - note_w.max(40.0)).max(160.0);
    let width = (left + plot_w + note_w.max(40.0)).max(WIDTH);
    let row_h = 18.0;
    let top = 58.0;
    let bottom = top + rows.len().max(1) as f64 * row_h;
    let h = bottom + 50.0;
    let px = |v: f64| left + axis.t(v).clamp(0.0, 1.0) * plot_w;
    let mut s = open(id, title, width, h);
    let hatch = format!("{id}-hatch");
    let _ = write!(
        s,
        r##"<defs><pattern id="{hatch}" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="{}" fill-opacity="0.35"/><line x1="0" y1="0" x2="0" y2="6" stroke="#222222" stroke-width="2"/></pattern></defs><text x="{}" y="20" class="title">{}</text>"##,
        PALETTE[1],
        n(left),
        escape(title)
    );
    strip_legend(&mut s, &hatch, left);
    RowFrame {
        left,
        plot_w,
        top,
        bottom,
    }
    .axis_and_area(&mut s, axis, &px);
    let _ = write!(
        s,
        r##"<rect class="data" x="{}" y="{}" width="{}" height="{}" fill="#999999" fill-opacity="0.3" stroke="#555555" stroke-dasharray="3 3"><title>valid code window</title></rect>"##,
        n(px(window.0)),
        n(top),
        n((px(window.1) - px(window.0)).max(1.0)),
        n(bottom - top)
    );
    let frame = StripFrame {
        left,
        plot_w,
        top,
        row_h,
        hatch: &hatch,
    };
    for (i, row) in rows.iter().enumerate() {
        frame.row(&mut s, i, row, &px);
    }
    s.push_str("</g></svg>");
    s
}

/// Where a strip chart's rows go.
struct StripFrame<'a> {
    left: f64,
    plot_w: f64,
    top: f64,
    row_h: f64,
    hatch: &'a str,
}

impl StripFrame<'_> {
    /// Row `i`: its span (hatched and outlined when hidden), its label
    /// left of the plot and its note right of it.
    fn row(&self, s: &mut String, i: usize, row: &Strip, px: &dyn Fn(f64) -> f64) {
        let (left, row_h) = (self.left, self.row_h);
        let y = self.top + i as f64 * row_h;
        for &(a, b) in &row.spans {
            // A single code still shows: at least 3 px, kept inside.
            let w = (px(b) - px(a)).max(3.0);
            let x = px(a).min(left + self.plot_w - w);
            let (fill, stroke) = if row.hidden {
                (
                    format!("url(#{})", self.hatch),
                    r##" stroke="#222222" stroke-dasharray="3 2""##,
                )
            } else {
                (PALETTE[0].to_string(), r##" stroke="#222222""##)
            };
            let _ = write!(
                s,
                r#"<rect class="data" x="{}" y="{}" width="{}" height="{}" fill="{fill}"{stroke}><title>{}</title></rect>"#,
                n(x),
                n(y + 3.0),
                n(w),
                n(row_h - 6.0),
                escape(&format!("{}: {}", row.label, row.note))
            );
        }
        let _ = write!(
            s,
            r#"<text x="{}" y="{}" text-anchor="end">{}</text><text x="{}" y="{}">{}</text>"#,
            n(left - 6.0),
            n(y + row_h / 2.0 + 4.0),
            escape(&row.label),
            n(left + self.plot_w + 6.0),
            n(y + row_h / 2.0 + 4.0),
            escape(&row.note)
        );
    }
}

/// The strip chart's legend: the window, a detectable and a hidden span.
fn strip_legend(s: &mut String, hatch: &str, left: f64) {
    let entries = [
        (
            r##"fill="#999999" fill-opacity="0.3" stroke="#555555" stroke-dasharray="3 3""##
                .to_string(),
            "valid code window",
        ),
        (
            format!(r##"fill="{}" stroke="#222222""##, PALETTE[0]),
            "detectable fault",
        ),
        (
            format!(r##"fill="url(#{hatch})" stroke="#222222" stroke-dasharray="3 2""##),
            "fault firmware cannot see",
        ),
    ];
    let mut x = left;
    for (style, label) in entries {
        let _ = write!(
            s,
            r#"<rect x="{}" y="31" width="24" height="10" {style}/><text x="{}" y="40" class="legend">{label}</text>"#,
            n(x),
            n(x + 30.0)
        );
        x += 30.0 + label.len() as f64 * CHAR_W + 16.0;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_step_by_one_two_five() {
        assert_eq!(tick_step(1.0), 0.2);
        assert_eq!(tick_step(45.0), 10.0);
        assert_eq!(tick_step(0.3), 0.05);
        assert_eq!(tick_step(7.0), 1.0);
    }

    #[test]
    fn an_axis_in_volts_takes_a_prefix() {
        let a = Axis::linear("signal", "V", 0.0, 0.0042);
        assert_eq!(a.title(), "signal (mV)");
        let labels: Vec<String> = a.ticks().into_iter().map(|t| t.1).collect();
        assert!(labels.contains(&"1".to_string()), "{labels:?}");
    }

    #[test]
    fn a_strip_chart_draws_each_span_and_the_window() {
        let axis = Axis::linear("code", "%", 0.0, 100.0);
        let rows = [
            Strip {
                label: "rtd open".to_string(),
                spans: vec![(100.0, 100.0)],
                hidden: false,
                note: "65535".to_string(),
            },
            Strip {
                label: "amp input open".to_string(),
                spans: Vec::new(),
                hidden: true,
                note: "undetermined".to_string(),
            },
        ];
        let svg = strips("t", "T", &axis, (4.0, 6.0), &rows);
        // The window and one span; the undetermined row has only text.
        assert_eq!(svg.matches(r#"class="data""#).count(), 2, "{svg}");
        assert!(svg.contains(">undetermined</text>"), "{svg}");
        // A single code at full scale stays inside the plotting area.
        assert!(svg.contains("65535</title>"), "{svg}");
    }

    /// Every axis a plot can ask for begins and ends on a labelled tick,
    /// with four to ten intervals on a linear one.
    #[test]
    fn every_axis_ends_on_a_tick() {
        let ends = [
            (0.0, 0.0042),
            (0.0, 110.0),
            (-30.0, 10.0),
            (0.0, 850.0),
            (-0.0809, 0.0809),
            (-160.0, 0.0),
            (0.0, 7.9),
            (0.13, 9.1),
            (0.0, 2.37e-3),
            (-200.0, 850.0),
            (1.5, 1.5),
            (0.0, 1.0e7),
        ];
        let mut spans = ends.to_vec();
        // A sweep of awkward spans: 1.00 .. 99.9 in steps of 0.37.
        spans.extend((0..270).map(|i| (0.0, 1.0 + 0.37 * f64::from(i))));
        spans.extend((0..270).map(|i| (-3.3 - 0.11 * f64::from(i), 0.7 * f64::from(i))));
        for (lo, hi) in spans {
            let a = Axis::linear("q", "V", lo, hi);
            let ticks = a.ticks();
            let (first, last) = (ticks[0].0, ticks[ticks.len() - 1].0);
            let tol = 1e-9 * (a.hi - a.lo);
            assert!((first - a.lo).abs() <= tol, "{lo}..{hi}: {a:?} {ticks:?}");
            assert!((last - a.hi).abs() <= tol, "{lo}..{hi}: {a:?} {ticks:?}");
            assert!(
                a.lo <= lo.min(hi) && a.hi >= lo.max(hi),
                "{lo}..{hi}: {a:?}"
            );
            assert!((5..=11).contains(&ticks.len()), "{lo}..{hi}: {ticks:?}");
        }
        for (lo, hi) in [(0.01, 1000.0), (0.3, 4.7e4), (1.0, 50.0), (7.0, 7.0)] {
            let a = Axis::logarithmic("f", "Hz", lo, hi);
            let ticks = a.ticks();
            assert_eq!(ticks[0].0, a.lo, "{lo}..{hi}: {ticks:?}");
            assert_eq!(ticks[ticks.len() - 1].0, a.hi, "{lo}..{hi}: {ticks:?}");
            assert!(a.lo <= lo && a.hi >= hi, "{lo}..{hi}: {a:?}");
        }
    }

    #[test]
    fn log_ticks_carry_prefixes() {
        let t: Vec<String> = log_ticks(0.01, 1000.0).into_iter().map(|t| t.1).collect();
        assert_eq!(t.first().map(String::as_str), Some("10m"));
        assert!(t.contains(&"1k".to_string()));
    }
}

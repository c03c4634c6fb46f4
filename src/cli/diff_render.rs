//! How `catena diff` reads: the report's model and its renderers, human
//! and Markdown (the JSON is the model serialised); the table helpers
//! `catena compare` shares.

use serde::Serialize;

use crate::analysis::faults::Verdict;
use crate::analysis::review::outcome::threshold_text;
use crate::analysis::review::{
    ChangeKind, Direction, FaultChange, FaultOutcome, Moved, OutcomeDiff, SpecChange,
};
use crate::units::format::significant;

#[derive(Serialize)]
pub(super) struct ChainDiff {
    pub(super) chain: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub(super) old_chain: Option<String>,
    pub(super) direction: Direction,
    pub(super) regression: bool,
    pub(super) spec: Vec<SpecChange>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub(super) outcome: Option<OutcomeDiff>,
    /// Why a side was not evaluated.
    pub(super) notes: Vec<String>,
}

#[derive(Serialize)]
pub(super) struct FileDiff {
    pub(super) old: Option<String>,
    pub(super) new: Option<String>,
    pub(super) chains: Vec<ChainDiff>,
    pub(super) added_chains: Vec<String>,
    pub(super) removed_chains: Vec<String>,
    pub(super) notes: Vec<String>,
}

#[derive(Serialize)]
pub(super) struct DiffReport {
    pub(super) schema_version: u32,
    pub(super) direction: Direction,
    pub(super) regression: bool,
    pub(super) threshold_percent: f64,
    pub(super) trials: usize,
    pub(super) seed: u64,
    pub(super) files: Vec<FileDiff>,
}

/// Four significant digits; an exponent below a thousandth.
pub(super) fn num(x: f64) -> String {
    if x != 0.0 && x.abs() < 1e-3 {
        format!("{x:.3e}")
    } else {
        significant(x, 4)
    }
}

/// A figure with its unit: [`num`], or an attenuation past use as
/// `> 200 dB`, as every table shows it.
pub(super) fn with_unit(x: f64, unit: &str) -> String {
    match unit {
        "dB" => crate::units::format::attenuation_db(x),
        "" => num(x),
        unit => format!("{} {unit}", num(x)),
    }
}

fn signed(x: f64) -> String {
    if x > 0.0 {
        format!("+{}", num(x))
    } else {
        num(x)
    }
}

/// A row for a moved figure: name, before, after, change, direction.
fn moved_row(m: &Moved, percent: bool) -> Vec<String> {
    let scale = if percent { 100.0 } else { 1.0 };
    let unit = if percent {
        " %".to_string()
    } else if m.unit.is_empty() {
        String::new()
    } else {
        format!(" {}", m.unit)
    };
    // Codes are whole numbers, shown whole.
    let codes = m.unit == "code";
    let figure = |v: f64| if codes { format!("{v:.0}") } else { num(v) };
    let show = |x: Option<f64>| x.map_or("—".into(), |v| format!("{}{unit}", figure(v * scale)));
    let crossed = percent && m.new.is_some_and(|h| h < 0.0) && m.old.is_none_or(|h| h >= 0.0);
    let change = match (m.old, m.new) {
        (Some(a), Some(b)) if crossed => {
            format!("{}{unit}, beyond the limit", signed((b - a) * scale))
        }
        (Some(a), Some(b)) if codes => format!("{:+.0}{unit}", b - a),
        (Some(a), Some(b)) => format!("{}{unit}", signed((b - a) * scale)),
        (None, Some(_)) => "new".into(),
        _ => "gone".into(),
    };
    vec![
        m.name.clone(),
        show(m.old),
        show(m.new),
        change,
        m.direction.word().into(),
    ]
}

fn requirement_rows(d: &OutcomeDiff) -> Vec<Vec<String>> {
    d.requirements
        .iter()
        .map(|r| {
            let side = |x: &Option<crate::analysis::review::RequirementOutcome>| {
                x.as_ref().map_or(("—".to_string(), "—".to_string()), |v| {
                    (
                        format!(
                            "{} ({}, {})",
                            with_unit(v.achieved, &v.unit),
                            crate::emit::report::fmt::method(&v.method),
                            if v.pass { "pass" } else { "FAIL" }
                        ),
                        with_unit(v.margin, &v.unit),
                    )
                })
            };
            let (a, ma) = side(&r.old);
            let (b, mb) = side(&r.new);
            let flag = if r.regression { ", regression" } else { "" };
            let unit = r.new.as_ref().map_or(String::new(), |v| v.unit.clone());
            let change = r
                .margin_change
                .map_or(String::new(), |m| format!(" ({} {unit}{flag})", signed(m)));
            vec![
                r.name.to_string(),
                a,
                b,
                ma,
                mb,
                format!("{}{change}", r.direction.word()),
            ]
        })
        .collect()
}

/// A fault's state on one side: its verdict with the firmware threshold
/// or the codes that overlap the window.
fn fault_state(f: &Option<FaultOutcome>) -> String {
    let Some(f) = f else { return "—".into() };
    let state = match (f.verdict, f.threshold, f.codes) {
        (Verdict::Detectable, Some(t), _) => format!("detectable, {}", threshold_text(t)),
        (Verdict::Silent, _, Some(codes)) => format!("silent, {}", codes.phrase()),
        (v, _, _) => v.name().to_string(),
    };
    match f.severity {
        Some(severity) => format!("{state} ({severity})"),
        None => state,
    }
}

fn fault_rows(faults: &[FaultChange]) -> Vec<Vec<String>> {
    faults
        .iter()
        .map(|f| {
            let change = match (&f.old, &f.new) {
                (None, Some(_)) => "new".to_string(),
                (Some(_), None) => "gone".to_string(),
                (Some(o), Some(n)) if o.detectable() && !n.detectable() => {
                    "no longer detectable, regression".to_string()
                }
                (Some(o), Some(n)) if !o.detectable() && n.detectable() => {
                    "now detectable".to_string()
                }
                (Some(o), Some(n)) if o.verdict != n.verdict => "still undetected".to_string(),
                (Some(o), Some(n)) if o.severity != n.severity => "reported otherwise".to_string(),
                _ => "threshold moved".to_string(),
            };
            let change = if f.regression && f.old.is_none() {
                "new, not detectable, regression".to_string()
            } else {
                change
            };
            vec![
                format!("`{}` {}", f.stage, f.condition),
                fault_state(&f.old),
                fault_state(&f.new),
                change,
                f.direction.word().into(),
            ]
        })
        .collect()
}

fn spec_rows(changes: &[SpecChange]) -> Vec<Vec<String>> {
    let at = |l: &Option<crate::analysis::review::spec::Located>| {
        l.as_ref().map_or("—".into(), |l| match &l.file {
            Some(f) => format!("{} ({f}:{})", l.text, l.line),
            None => format!("{} (line {})", l.text, l.line),
        })
    };
    changes
        .iter()
        .map(|c| {
            let kind = match c.kind {
                ChangeKind::Added => "added",
                ChangeKind::Removed => "removed",
                ChangeKind::Changed => "changed",
            };
            vec![
                format!("{} `{}` {kind}", c.what, c.subject),
                at(&c.old),
                at(&c.new),
            ]
        })
        .collect()
}

/// The sections of one chain's diff, each a title, a header and rows.
/// A titled table: title, header, rows.
type Section = (&'static str, Vec<&'static str>, Vec<Vec<String>>);

fn sections(c: &ChainDiff) -> Vec<Section> {
    let mut out = Vec::new();
    if !c.spec.is_empty() {
        out.push((
            "What changed in the spec",
            vec!["change", "before", "after"],
            spec_rows(&c.spec),
        ));
    }
    let Some(d) = &c.outcome else { return out };
    let five = vec!["", "before", "after", "change", "for the design"];
    if !d.requirements.is_empty() {
        out.push((
            "Requirements",
            vec![
                "requirement",
                "before",
                "after",
                "margin before",
                "margin after",
                "for the design",
            ],
            requirement_rows(d),
        ));
    }
    if !d.worst.is_empty() {
        let mut h = five.clone();
        h[0] = "worst error";
        out.push((
            "Worst point per method",
            h,
            d.worst
                .iter()
                .map(|m| {
                    let mut row = moved_row(m, false);
                    row[0] = crate::emit::report::fmt::method(&m.name);
                    row
                })
                .collect(),
        ));
    }
    if !d.contributors.is_empty() {
        let mut h = five.clone();
        h[0] = "source (largest standard uncertainty)";
        out.push((
            "Contributors that moved most",
            h,
            d.contributors.iter().map(|m| moved_row(m, false)).collect(),
        ));
    }
    if !d.headroom.is_empty() {
        let mut h = five.clone();
        h[0] = "limit (headroom, share of its span)";
        out.push((
            "Headroom",
            h,
            d.headroom.iter().map(|m| moved_row(m, true)).collect(),
        ));
    }
    if !d.other.is_empty() {
        let mut h = five.clone();
        h[0] = "figure";
        out.push((
            "Resolution, response, converter window, alarms",
            h,
            d.other.iter().map(|m| moved_row(m, false)).collect(),
        ));
    }
    if !d.faults.is_empty() {
        let mut h = five.clone();
        h[0] = "fault";
        out.push(("Fault detection", h, fault_rows(&d.faults)));
    }
    out
}

fn chain_title(c: &ChainDiff) -> String {
    match &c.old_chain {
        Some(o) => format!("chain `{o}` → `{}`", c.chain),
        None => format!("chain `{}`", c.chain),
    }
}

fn file_title(f: &FileDiff) -> String {
    match (&f.old, &f.new) {
        (Some(o), Some(n)) => format!("`{o}` → `{n}`"),
        (Some(o), None) => format!("`{o}`"),
        (None, Some(n)) => format!("`{n}`"),
        (None, None) => String::new(),
    }
}

fn unchanged(c: &ChainDiff) -> bool {
    c.spec.is_empty() && c.outcome.as_ref().is_some_and(OutcomeDiff::is_empty) && c.notes.is_empty()
}

pub(super) fn markdown(r: &DiffReport) -> String {
    let mut s = format!("## Catena diff: {}\n\n", r.direction.word());
    if r.regression {
        s.push_str(&format!(
            "**Regression**: {}.\n\n",
            regression_words(r.threshold_percent)
        ));
    }
    if r.files.is_empty() {
        s.push_str("No spec changed.\n");
    }
    for f in &r.files {
        s.push_str(&format!("### {}\n\n", file_title(f)));
        file_notes(f, &mut s);
        for c in &f.chains {
            s.push_str(&format!(
                "#### {}: {}\n\n",
                chain_title(c),
                c.direction.word()
            ));
            let mut listed = false;
            for n in &c.notes {
                s.push_str(&format!("- {n}\n"));
                listed = true;
            }
            for reason in c.outcome.iter().flat_map(|d| &d.reasons) {
                s.push_str(&format!("- regression: {reason}\n"));
                listed = true;
            }
            // A list ends at a blank line; without one, what follows
            // would continue its last item.
            if listed {
                s.push('\n');
            }
            if unchanged(c) {
                s.push_str("No change.\n\n");
                continue;
            }
            for (title, header, rows) in sections(c) {
                s.push_str(&format!("**{title}**\n\n"));
                s.push_str(&markdown_table(&header, &rows));
                s.push('\n');
            }
        }
    }
    s.push_str(&format!("<sub>Monte Carlo: {} trials a point, seed {}; a change inside the intervals' numerical widths is not reported.</sub>\n", r.trials, r.seed));
    s
}

fn regression_words(threshold_percent: f64) -> String {
    format!(
        "a requirement fails that passed, a margin shrank by more than {} % of its limit, a signal went beyond a limit, a fault became silent or undetermined, or a chain no longer evaluates",
        crate::units::format::trimmed(threshold_percent, 4)
    )
}

fn file_notes(f: &FileDiff, s: &mut String) {
    for n in &f.notes {
        s.push_str(&format!("- {n}\n"));
    }
    for c in &f.added_chains {
        s.push_str(&format!(
            "- chain `{c}` added (compare it with `catena compare`)\n"
        ));
    }
    for c in &f.removed_chains {
        s.push_str(&format!("- chain `{c}` removed\n"));
    }
    if !(f.notes.is_empty() && f.added_chains.is_empty() && f.removed_chains.is_empty()) {
        s.push('\n');
    }
}

/// A Markdown table, `|` in cells escaped.
pub(super) fn markdown_table(header: &[&str], rows: &[Vec<String>]) -> String {
    let cell = |x: &str| x.replace('|', "\\|");
    let mut s = format!(
        "| {} |\n",
        header
            .iter()
            .map(|h| cell(h))
            .collect::<Vec<_>>()
            .join(" | ")
    );
    s.push_str(&format!("|{}\n", " --- |".repeat(header.len())));
    for row in rows {
        s.push_str(&format!(
            "| {} |\n",
            row.iter().map(|x| cell(x)).collect::<Vec<_>>().join(" | ")
        ));
    }
    s
}

/// A plain table for a terminal.
pub(super) fn plain_table(header: &[&str], rows: &[Vec<String>]) -> String {
    let mut t = comfy_table::Table::new();
    t.load_style(comfy_table::presets::NOTHING);
    t.set_header(header.to_vec());
    for row in rows {
        t.add_row(row.clone());
    }
    let mut s: String = t
        .to_string()
        .lines()
        .map(|l| format!("{}\n", l.trim_end()))
        .collect();
    s.push('\n');
    s
}

pub(super) fn human(r: &DiffReport) -> String {
    let mut s = format!("catena diff: {}\n", r.direction.word());
    if r.regression {
        s.push_str(&format!(
            "regression: {}\n",
            regression_words(r.threshold_percent)
        ));
    }
    s.push('\n');
    if r.files.is_empty() {
        s.push_str("no spec changed\n");
    }
    for f in &r.files {
        s.push_str(&format!("{}\n", file_title(f).replace('`', "")));
        file_notes(f, &mut s);
        for c in &f.chains {
            s.push_str(&format!("  {}: {}\n", chain_title(c), c.direction.word()));
            for reason in c.outcome.iter().flat_map(|d| &d.reasons) {
                s.push_str(&format!("  regression: {reason}\n"));
            }
            for n in &c.notes {
                s.push_str(&format!("  {n}\n"));
            }
            if unchanged(c) {
                s.push_str("  no change\n\n");
                continue;
            }
            s.push('\n');
            for (title, header, rows) in sections(c) {
                s.push_str(&format!("{title}\n"));
                s.push_str(&plain_table(&header, &rows));
            }
        }
    }
    s
}

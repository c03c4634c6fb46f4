//! What changed in a chain's text as the model reads it: settings,
//! stages, parameters and edges, compared by meaning (SI values, stages
//! by name, edges as a set), so a comment, a reordering or a unit written
//! another way is no change.

use serde::Serialize;

use crate::diagnostics::{SourceFile, Span};
use crate::model::value::{Measure, ParamValue, Tolerance};
use crate::model::{Chain, Connection, RequirementKind, Side, Stage};
use crate::syntax::format::split_comment;

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ChangeKind {
    Added,
    Removed,
    Changed,
}

/// One change, with the text and line on each side that has it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SpecChange {
    /// `setting`, `requirement`, `alarm`, `stage`, `parameter`, `edge`,
    /// `tracking group`.
    pub what: &'static str,
    pub kind: ChangeKind,
    /// `front.gain`, `drive -> probe`, `measurand`.
    pub subject: String,
    pub old: Option<Located>,
    pub new: Option<Located>,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Located {
    pub text: String,
    /// The file, when not the spec itself (a parts file).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub file: Option<String>,
    pub line: usize,
}

fn locate(file: &SourceFile, spec: &SourceFile, span: Span) -> Located {
    let text = file
        .text()
        .get(span.start..span.end)
        .unwrap_or_default()
        .lines()
        // What the model reads: a line's comment is no part of a change.
        .map(|line| split_comment(line).0)
        .flat_map(str::split_whitespace)
        .collect::<Vec<_>>()
        .join(" ");
    Located {
        text,
        file: (file.name() != spec.name()).then(|| file.name().to_string()),
        line: file.line_column(span.start).0,
    }
}

/// Every change from `old` to `new`, in the order of the new text.
pub fn spec_changes(old: &Chain, new: &Chain) -> Vec<SpecChange> {
    let mut out = Vec::new();
    settings(old, new, &mut out);
    stages(old, new, &mut out);
    edges(old, new, &mut out);
    groups(old, new, &mut out);
    out
}

/// Tracking groups by name: their members (by stage name), ratio and
/// tracking drift.
fn groups(old: &Chain, new: &Chain, out: &mut Vec<SpecChange>) {
    let meaning = |c: &Chain, g: &crate::model::TrackGroup| {
        let mut members: Vec<String> = g
            .members
            .iter()
            .filter_map(|m| c.stages.get(m.stage).map(|s| s.name.clone()))
            .collect();
        members.sort();
        (members, g.ratio, g.tracking)
    };
    let at = |c: &Chain, g: &crate::model::TrackGroup| locate(&c.file, &c.file, g.span);
    for g in &new.groups {
        let before = old.groups.iter().find(|o| o.name == g.name);
        if before.is_none_or(|o| meaning(old, o) != meaning(new, g)) {
            out.push(change(
                "tracking group",
                g.name.clone(),
                before.map(|o| at(old, o)),
                Some(at(new, g)),
            ));
        }
    }
    for o in &old.groups {
        if !new.groups.iter().any(|g| g.name == o.name) {
            out.push(change(
                "tracking group",
                o.name.clone(),
                Some(at(old, o)),
                None,
            ));
        }
    }
}

fn change(
    what: &'static str,
    subject: String,
    old: Option<Located>,
    new: Option<Located>,
) -> SpecChange {
    let kind = match (&old, &new) {
        (None, Some(_)) => ChangeKind::Added,
        (Some(_), None) => ChangeKind::Removed,
        _ => ChangeKind::Changed,
    };
    SpecChange {
        what,
        kind,
        subject,
        old,
        new,
    }
}

fn settings(old: &Chain, new: &Chain, out: &mut Vec<SpecChange>) {
    let measurand = |c: &Chain| {
        c.measurand
            .as_ref()
            .map(|m| (m.quantity.clone(), m.low, m.high))
    };
    if measurand(old) != measurand(new) {
        let at = |c: &Chain| {
            c.measurand
                .as_ref()
                .map(|m| locate(&c.file, &c.file, m.span))
        };
        out.push(change("setting", "measurand".into(), at(old), at(new)));
    }
    let whole = |c: &Chain| locate(&c.file, &c.file, c.name_span);
    if old.ambient != new.ambient || old.reference != new.reference {
        let text = |c: &Chain| Located {
            text: format!(
                "ambient {} .. {} degC, reference {} degC",
                show(c.ambient.0 - crate::units::ZERO_CELSIUS_K),
                show(c.ambient.1 - crate::units::ZERO_CELSIUS_K),
                show(c.reference - crate::units::ZERO_CELSIUS_K)
            ),
            ..whole(c)
        };
        out.push(change(
            "setting",
            "ambient".into(),
            Some(text(old)),
            Some(text(new)),
        ));
    }
    for kind in RequirementKind::ALL {
        fn find(c: &Chain, kind: RequirementKind) -> Option<&crate::model::Requirement> {
            c.requirements.iter().find(|r| r.kind.same_kind(kind))
        }
        let key = |c: &Chain| find(c, kind).map(|r| (bare(&r.value), r.kind));
        if key(old) != key(new) {
            let at = |c: &Chain| find(c, kind).map(|r| locate(&c.file, &c.file, r.span));
            out.push(change("requirement", kind.word().into(), at(old), at(new)));
        }
    }
    let guards = |c: &Chain| c.protects.as_ref().map(|p| (p.people, p.property));
    if guards(old) != guards(new) {
        let at = |c: &Chain| {
            c.protects
                .as_ref()
                .map(|p| locate(&c.file, &c.file, p.span))
        };
        out.push(change("setting", "protects".into(), at(old), at(new)));
    }
    for side in [Side::High, Side::Low] {
        fn find(c: &Chain, side: Side) -> Option<&crate::model::Alarm> {
            c.alarms.iter().find(|a| a.side == side)
        }
        if find(old, side).map(|a| a.at) != find(new, side).map(|a| a.at) {
            let at = |c: &Chain| find(c, side).map(|a| locate(&c.file, &c.file, a.span));
            out.push(change("alarm", side.to_string(), at(old), at(new)));
        }
    }
}

fn show(x: f64) -> String {
    crate::units::format::trimmed(x, 6)
}

fn stages(old: &Chain, new: &Chain, out: &mut Vec<SpecChange>) {
    let head = |c: &Chain, s: &Stage| locate(&c.file, &c.file, s.name_span);
    for s in &new.stages {
        match old.stages.iter().find(|o| o.name == s.name) {
            None => out.push(change("stage", s.name.clone(), None, Some(head(new, s)))),
            Some(o) if o.kind != s.kind || o.model != s.model => out.push(change(
                "stage",
                s.name.clone(),
                Some(head(old, o)),
                Some(head(new, s)),
            )),
            Some(o) => parameters(old, o, new, s, out),
        }
    }
    for o in &old.stages {
        if !new.stages.iter().any(|s| s.name == o.name) {
            out.push(change("stage", o.name.clone(), Some(head(old, o)), None));
        }
    }
}

fn parameters(old: &Chain, o: &Stage, new: &Chain, s: &Stage, out: &mut Vec<SpecChange>) {
    let at = |c: &Chain, p: &crate::model::value::ResolvedParam| locate(&p.file, &c.file, p.span);
    for p in &s.params {
        let before = o.params.iter().find(|q| q.name == p.name);
        if before.is_none_or(|q| bare(&q.value) != bare(&p.value)) {
            out.push(change(
                "parameter",
                format!("{}.{}", s.name, p.name),
                before.map(|q| at(old, q)),
                Some(at(new, p)),
            ));
        }
    }
    for q in &o.params {
        if !s.params.iter().any(|p| p.name == q.name) {
            out.push(change(
                "parameter",
                format!("{}.{}", o.name, q.name),
                Some(at(old, q)),
                None,
            ));
        }
    }
}

fn edges(old: &Chain, new: &Chain, out: &mut Vec<SpecChange>) {
    let key = |c: &Chain, e: &Connection| {
        let name = |i: usize| c.stages.get(i).map(|s| s.name.clone()).unwrap_or_default();
        format!(
            "{}.{} -> {}.{}",
            name(e.from),
            e.from_port.name(),
            name(e.to),
            e.to_port.name()
        )
    };
    let at = |c: &Chain, e: &Connection| locate(&c.file, &c.file, e.span);
    for e in &new.connections {
        let k = key(new, e);
        if !old.connections.iter().any(|o| key(old, o) == k) {
            out.push(change("edge", k, None, Some(at(new, e))));
        }
    }
    for o in &old.connections {
        let k = key(old, o);
        if !new.connections.iter().any(|e| key(new, e) == k) {
            out.push(change("edge", k, Some(at(old, o)), None));
        }
    }
}

/// A value without its positions, so that only what it says is compared.
fn bare(value: &ParamValue) -> ParamValue {
    let measure = |m: &Measure| Measure {
        tolerance: m.tolerance.as_ref().map(tolerance),
        drift: m.drift.clone().map(|d| crate::model::value::Drift {
            span: Span::default(),
            ..d
        }),
        span: Span::default(),
        ..m.clone()
    };
    match value {
        ParamValue::Measure(m) => ParamValue::Measure(measure(m)),
        ParamValue::Measures(v) => ParamValue::Measures(v.iter().map(measure).collect()),
        ParamValue::At {
            value,
            value_dim,
            at,
        } => ParamValue::At {
            value: measure(value),
            value_dim: *value_dim,
            at: *at,
        },
        ParamValue::Calibrate {
            method,
            points,
            uncertainty,
        } => ParamValue::Calibrate {
            method: method.clone(),
            points: points.clone(),
            uncertainty: uncertainty.as_ref().map(tolerance),
        },
        ParamValue::Limit(t) => ParamValue::Limit(tolerance(t)),
        ParamValue::StageRef { name, .. } => ParamValue::StageRef {
            name: name.clone(),
            span: Span::default(),
        },
        ParamValue::StageRefs(names) => ParamValue::StageRefs(
            names
                .iter()
                .map(|(n, _)| (n.clone(), Span::default()))
                .collect(),
        ),
        ParamValue::Flag
        | ParamValue::Range { .. }
        | ParamValue::Word(_)
        | ParamValue::Count(_)
        | ParamValue::Numbers(_)
        | ParamValue::Method { .. } => value.clone(),
    }
}

fn tolerance(t: &Tolerance) -> Tolerance {
    Tolerance {
        span: Span::default(),
        ..t.clone()
    }
}

#[cfg(test)]
mod tests {
    use crate::syntax::format::split_comment;

    fn without_comment(line: &str) -> &str {
        split_comment(line).0
    }

    /// A change shows what the model reads: a trailing comment goes, a
    /// `#` inside a string (escaped quotes and all) stays.
    #[test]
    fn a_comment_is_not_part_of_a_change() {
        assert_eq!(
            without_comment("gain 4 ± 0.02 %  # tighter part"),
            "gain 4 ± 0.02 %  "
        );
        assert_eq!(without_comment("gain 4 ± 0.02 %"), "gain 4 ± 0.02 %");
        assert_eq!(
            without_comment(r#"title "Line #2" # a note"#),
            r#"title "Line #2" "#
        );
        let escaped = r##"title "a \"#\" b""##;
        assert_eq!(without_comment(escaped), escaped);
        assert_eq!(without_comment("# all comment"), "");
    }
}

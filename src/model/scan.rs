//! A converter's scan sequence (`scan conv, cj_in, conv`): the order in
//! which it converts its own input and its channels in one scan. A name
//! listed twice is converted twice per scan, so each channel's output
//! rate is the converter's `rate` times its reads over the scan's length.
//! Without a `scan`, every member is read once per scan.

use std::sync::Arc;

use super::chain::Stage;
use super::schema;
use super::value::ParamValue;
use crate::diagnostics::{did_you_mean, Code, Finding, Findings, SourceFile, Span};
use crate::syntax::ast::StageKind;

/// How often a converter reads each member of its scan, and how many
/// conversions one scan holds.
#[derive(Clone, Debug, PartialEq)]
pub struct Scan {
    /// Reads per scan, aligned with the members (converter first).
    pub reads: Vec<u32>,
    /// Conversions per scan.
    pub length: u32,
}

/// The names a stage's `scan` line lists, with where, and where the line is.
fn listed(stage: &Stage) -> Option<(Vec<(String, Span)>, Span)> {
    let p = stage.params.iter().find(|p| p.name == schema::SCAN)?;
    match &p.value {
        ParamValue::StageRefs(names) => Some((names.clone(), p.span)),
        _ => None,
    }
}

/// The scan of converter `conv` over `members` (the converter first, then
/// its channels): its `scan` line checked (M272 for a name that is not a
/// member, M271 for a member it never reads), else one read each.
pub fn of(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    conv: usize,
    members: &[usize],
    findings: &mut Findings,
) -> Scan {
    let Some((names, line)) = listed(&stages[conv]) else {
        return Scan {
            reads: vec![1; members.len()],
            length: members.len() as u32,
        };
    };
    let mut reads = vec![0u32; members.len()];
    let mut unknown = Vec::new();
    for (name, span) in &names {
        match members.iter().position(|&m| &stages[m].name == name) {
            Some(k) => reads[k] += 1,
            None => unknown.push((name, *span)),
        }
    }
    let missing: Vec<usize> = (0..members.len()).filter(|&k| reads[k] == 0).collect();
    for (name, span) in &unknown {
        let left = missing.first().map(|&k| stages[members[k]].name.as_str());
        findings.push(not_a_member(file, stages, conv, members, name, *span, left));
    }
    // An unknown name is the cause of a member left out: reported once.
    if unknown.is_empty() {
        for &k in &missing {
            findings.push(never_read(file, stages, conv, members[k], line));
        }
    }
    // A member left out is reported; it is still given one read so the
    // rest of the chain can be followed.
    let length = reads.iter().map(|&r| r.max(1)).sum();
    Scan {
        reads: reads.into_iter().map(|r| r.max(1)).collect(),
        length,
    }
}

/// M273 for every converter that lists a `scan` but has no channels
/// (`with_channels`: the converters some channel names).
pub fn without_channels(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    with_channels: &[usize],
    findings: &mut Findings,
) {
    for (i, stage) in stages.iter().enumerate() {
        if stage.kind != StageKind::Adc || with_channels.contains(&i) {
            continue;
        }
        let Some((_, line)) = listed(stage) else {
            continue;
        };
        findings.push(
            Finding::new(
                Code::M273,
                file,
                format!("converter `{}` lists a `scan` but has no channels", stage.name),
            )
            .label(line, "a scan of one input")
            .label(stage.name_span, "no stage names this converter in `channel_of`")
            .help(format!(
                "declare each further input as an `adc` stage with `channel_of {}` and list it in the scan, or remove `scan`: a converter with one input converts it at its full `rate`",
                stage.name
            )),
        );
    }
}

/// M272: a scan lists a name that is neither the converter nor one of its
/// channels.
fn not_a_member(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    conv: usize,
    members: &[usize],
    name: &str,
    span: Span,
    left_out: Option<&str>,
) -> Finding {
    let names = || members.iter().map(|&m| stages[m].name.as_str());
    let list = names()
        .map(|n| format!("`{n}`"))
        .collect::<Vec<_>>()
        .join(", ");
    let help = match (did_you_mean(name, names()), left_out) {
        (Some(n), _) => format!("did you mean `{n}`?"),
        (None, Some(n)) => format!("did you mean `{n}`? The scan reads it nowhere else"),
        (None, None) => format!(
            "a scan lists the converter and its channels, each as often as it is read per scan: {list}"
        ),
    };
    Finding::new(
        Code::M272,
        file,
        format!(
            "the scan of `{}` lists `{name}`, which is not this converter or one of its channels",
            stages[conv].name
        ),
    )
    .label(span, "not in this converter's scan")
    .help(help)
}

/// M271: a member of the scan the `scan` line never reads.
fn never_read(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    conv: usize,
    member: usize,
    line: Span,
) -> Finding {
    let (m, c) = (&stages[member].name, &stages[conv].name);
    let what = if member == conv {
        "its own input"
    } else {
        "a channel of it"
    };
    Finding::new(
        Code::M271,
        file,
        format!("the scan of `{c}` never reads `{m}`, {what}"),
    )
    .label(line, format!("no `{m}` in the scan"))
    .label(stages[member].name_span, "never converted")
    .help(format!(
        "list `{m}` in `scan` on `{c}` as often as it is to be read per scan, or remove the {}",
        if member == conv {
            "converter's input"
        } else {
            "channel"
        }
    ))
}

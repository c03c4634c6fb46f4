//! Several channels on one converter: an `adc` stage with `channel_of
//! conv` is another input of converter `conv`, scanned in turn with it.
//! It shares the converter's part (bits, reference, offset, gain error,
//! INL, noise, timing) and each of its error sources, and keeps its own
//! input, its own `pga` gain and its own code. Each channel's output rate
//! is the converter's `rate` over the number of channels it scans.

use std::collections::HashMap;
use std::sync::Arc;

use super::chain::{Connection, Stage};
use super::ports::{Port, SignalKind};
use super::typed::StageModel;
use super::value::ParamValue;
use crate::diagnostics::{did_you_mean, Code, Finding, Findings, SourceFile, Span};
use crate::syntax::ast::StageKind;

/// Each channel's converter checked (M260) and its typed model completed
/// from the converter's; each converter's channel count set; a reference
/// wired to a channel (M261) and a signal read by two channels of one
/// converter (M262) reported.
pub fn resolve(
    file: &Arc<SourceFile>,
    stages: &mut [Stage],
    connections: &[Connection],
    findings: &mut Findings,
) {
    let mut members: HashMap<usize, Vec<usize>> = HashMap::new();
    for i in 0..stages.len() {
        let Some((name, span)) = channel_of(&stages[i]) else {
            continue;
        };
        match converter(stages, i, &name) {
            Ok(conv) => members.entry(conv).or_insert_with(|| vec![conv]).push(i),
            Err(why) => {
                findings.push(not_a_converter(file, stages, i, &name, span, why));
                stages[i].typed = None;
                stages[i].incomplete = true;
            }
        }
    }
    let mut convs: Vec<_> = members.into_iter().collect();
    convs.sort();
    for (conv, channels) in convs {
        for &ch in &channels[1..] {
            if let Some(c) = connections
                .iter()
                .find(|c| c.to == ch && c.to_port == Port::Ref)
            {
                findings.push(reference_on_channel(file, stages, ch, conv, c.span));
            }
        }
        same_signal_twice(file, stages, connections, &channels, findings);
        complete(stages, conv, &channels);
    }
}

/// The converter a channel names, and where the `channel_of` line is.
fn channel_of(stage: &Stage) -> Option<(String, Span)> {
    match stage.param("channel_of") {
        Some(ParamValue::StageRef { name, span }) if stage.kind == StageKind::Adc => {
            Some((name.clone(), *span))
        }
        _ => None,
    }
}

/// Why a `channel_of` does not name a converter.
enum NotConverter {
    Unknown,
    Itself,
    OtherKind,
    AChannel,
}

fn converter(stages: &[Stage], channel: usize, name: &str) -> Result<usize, NotConverter> {
    let conv = stages
        .iter()
        .position(|s| s.name == name)
        .ok_or(NotConverter::Unknown)?;
    if conv == channel {
        return Err(NotConverter::Itself);
    }
    if stages[conv].kind != StageKind::Adc {
        return Err(NotConverter::OtherKind);
    }
    if channel_of(&stages[conv]).is_some() {
        return Err(NotConverter::AChannel);
    }
    Ok(conv)
}

/// M260: `channel_of` names no converter stage.
fn not_a_converter(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    channel: usize,
    name: &str,
    span: Span,
    why: NotConverter,
) -> Finding {
    let adcs = || {
        stages
            .iter()
            .filter(|s| s.kind == StageKind::Adc && channel_of(s).is_none())
            .map(|s| s.name.as_str())
    };
    let list = adcs()
        .map(|n| format!("`{n}`"))
        .collect::<Vec<_>>()
        .join(", ");
    let (message, label) = match why {
        NotConverter::Unknown => (format!("no stage is named `{name}`"), "unknown stage"),
        NotConverter::Itself => (
            format!("`{name}` names itself as its converter"),
            "its own converter",
        ),
        NotConverter::OtherKind => (format!("`{name}` is not a converter"), "not an `adc` stage"),
        NotConverter::AChannel => (
            format!("`{name}` is itself a channel of another converter"),
            "a channel, not a converter",
        ),
    };
    let help = match (did_you_mean(name, adcs()), list.is_empty()) {
        (Some(n), _) => format!("did you mean `{n}`?"),
        (None, true) => "declare the converter as an `adc` stage with its part (`bits`, `vref` or `ref`, ...) and name it here".to_string(),
        (None, false) => format!("name the converter stage whose input this is: {list}"),
    };
    Finding::new(
        Code::M260,
        file,
        format!("`{}`: {message}", stages[channel].name),
    )
    .label(span, label)
    .help(help)
}

/// M261: a reference wired to a channel, which works against its
/// converter's.
fn reference_on_channel(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    channel: usize,
    conv: usize,
    edge: Span,
) -> Finding {
    let (ch, cv) = (&stages[channel].name, &stages[conv].name);
    Finding::new(
        Code::M261,
        file,
        format!(
            "channel `{ch}` has a reference wired, but it converts against its converter `{cv}`'s"
        ),
    )
    .label(edge, format!("into `{ch}.ref`"))
    .label(
        stages[conv].name_span,
        "the converter, whose reference every channel shares",
    )
    .help(format!(
        "wire the reference into `{cv}.ref` (or state `vref` on `{cv}`) and remove this edge"
    ))
}

/// M262: one signal wired into two channels of one converter.
fn same_signal_twice(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    connections: &[Connection],
    channels: &[usize],
    findings: &mut Findings,
) {
    let input = |ch: usize| {
        connections
            .iter()
            .find(|c| c.to == ch && c.to_port == Port::In)
    };
    for (k, &a) in channels.iter().enumerate() {
        let Some(first) = input(a) else { continue };
        for &b in &channels[k + 1..] {
            let Some(second) = input(b) else { continue };
            if second.from != first.from {
                continue;
            }
            let source = &stages[first.from].name;
            findings.push(
                Finding::new(
                    Code::M262,
                    file,
                    format!(
                        "`{source}` is read by two channels of one converter, `{}` and `{}`",
                        stages[a].name, stages[b].name
                    ),
                )
                .label(second.span, "read again here")
                .label(first.span, "first read here")
                .help(format!(
                    "read `{source}` on one channel and average in the conversion (`average`); each extra channel lowers every channel's rate to the converter's over {}",
                    channels.len()
                )),
            );
        }
    }
}

/// Each channel takes its converter's part, keeping its own `pga`; every
/// member of the scan gets the channel count.
fn complete(stages: &mut [Stage], conv: usize, channels: &[usize]) {
    let count = channels.len() as u32;
    let Some(StageModel::Adc(part)) = stages[conv].typed.clone() else {
        // The converter was not accepted (already reported): its channels
        // cannot be evaluated either.
        for &ch in &channels[1..] {
            stages[ch].typed = None;
            stages[ch].incomplete = true;
        }
        return;
    };
    if let Some(StageModel::Adc(m)) = &mut stages[conv].typed {
        m.channels = count;
    }
    for &ch in &channels[1..] {
        let Some(StageModel::Adc(own)) = &stages[ch].typed else {
            continue;
        };
        let adc = super::typed::Adc {
            pga: own.pga.clone(),
            channel_of: own.channel_of.clone(),
            channels: count,
            // The reference's range is the converter's to check, once.
            ref_range: None,
            ..part.clone()
        };
        stages[ch].typed = Some(StageModel::Adc(adc));
    }
}

/// M263: a converter's reference wired to a signal that is not a voltage.
pub fn reference_not_voltage(
    file: &Arc<SourceFile>,
    source: &Stage,
    target: &Stage,
    signal: SignalKind,
    edge: Span,
) -> Finding {
    Finding::new(
        Code::M263,
        file,
        format!(
            "`{}` gives {} but the reference of converter `{}` must be a voltage",
            source.name,
            signal.noun(),
            target.name
        ),
    )
    .label(edge, format!("{} into `{}.ref`", signal.noun(), target.name))
    .label(source.name_span, format!("gives {}", signal.noun()))
    .help(format!(
        "wire a voltage into `{}.ref` (a voltage excitation such as a reference or the supply a bridge shares, a divider's output, a buffer), or state it in the block: `vref 2.5 V ± 0.05 %`",
        target.name
    ))
}

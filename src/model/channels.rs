//! Several channels on one converter: an `adc` stage with `channel_of
//! conv` is another input of converter `conv`, scanned in turn with it.
//! It shares the converter's part (bits, reference, offset, gain error,
//! INL, noise, timing) and each of its error sources, and keeps its own
//! input, its own `pga` gain, its own `burnout` current (else the
//! converter's) and its own code. Each channel's output rate
//! is the converter's `rate` over the number of channels it scans.

use std::collections::HashMap;
use std::sync::Arc;

use super::chain::{Connection, Stage};
use super::ports::{Port, SignalKind};
use super::scan::Scan;
use super::schema;
use super::typed::StageModel;
use super::value::ParamValue;
use crate::diagnostics::{did_you_mean, Code, Finding, Findings, SourceFile, Span};
use crate::syntax::ast::StageKind;
use crate::units::format::trimmed;

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
    let scanning: Vec<usize> = convs.iter().map(|(conv, _)| *conv).collect();
    super::scan::without_channels(file, stages, &scanning, findings);
    for (conv, channels) in convs {
        for &ch in &channels[1..] {
            if let Some(c) = connections
                .iter()
                .find(|c| c.to == ch && c.to_port == Port::Ref)
            {
                findings.push(reference_on_channel(file, stages, ch, conv, c.span));
            }
        }
        let scan = super::scan::of(file, stages, conv, &channels, findings);
        same_signal_twice(file, stages, connections, &channels, &scan, findings);
        complete(stages, conv, &channels, &scan);
    }
}

/// The converter a channel names, and where the `channel_of` line is.
fn channel_of(stage: &Stage) -> Option<(String, Span)> {
    match stage.param(schema::CHANNEL_OF) {
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

/// M262: one signal wired into two channels of one converter. The help
/// says what the second channel costs in the converter's scan.
fn same_signal_twice(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    connections: &[Connection],
    channels: &[usize],
    scan: &Scan,
    findings: &mut Findings,
) {
    let input = |ch: usize| {
        connections
            .iter()
            .find(|c| c.to == ch && c.to_port == Port::In)
    };
    for (k, &a) in channels.iter().enumerate() {
        let Some(first) = input(a) else { continue };
        for (j, &b) in channels.iter().enumerate().skip(k + 1) {
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
                .help(second_read_help(
                    source,
                    &stages[a].name,
                    &stages[b].name,
                    scan.reads.get(j).copied().unwrap_or(1),
                    scan.length,
                )),
            );
        }
    }
}

/// What reading one signal on a second channel costs, and the ways to
/// read it more often that cost nothing.
fn second_read_help(source: &str, first: &str, second: &str, reads: u32, length: u32) -> String {
    let share = if reads == 1 {
        format!("1 of every {length} conversions")
    } else {
        format!("{reads} of every {length} conversions")
    };
    format!(
        "read `{source}` on `{first}` alone: `{second}` takes {share} from the other channels; to read it more often, name `{first}` more than once in the converter's `scan`, or average in the conversion (`average`)"
    )
}

/// Each channel takes its converter's part, keeping its own `pga` and
/// `burnout`; every member of the scan gets the scan's length and its own
/// reads per scan.
fn complete(stages: &mut [Stage], conv: usize, channels: &[usize], scan: &Scan) {
    let count = scan.length;
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
        m.reads = scan.reads[0];
    }
    for (&ch, &reads) in channels[1..].iter().zip(&scan.reads[1..]) {
        let Some(StageModel::Adc(own)) = &stages[ch].typed else {
            continue;
        };
        // A burnout current is switched per input on a scanning
        // converter, and a pull resistor sits on each input: a channel's
        // own replaces the converter's there.
        let (burnout, pull) = match (own.burnout, own.pull) {
            (None, None) => (part.burnout, part.pull),
            own => own,
        };
        let adc = super::typed::Adc {
            pga: own.pga.clone(),
            burnout,
            pull,
            channel_of: own.channel_of.clone(),
            channels: count,
            reads,
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

/// Each conversion that combines channels (`sum`, `ratio`): every named
/// stage is another channel of the converter its input comes from (M266),
/// used once and converted nowhere else (M265), and a sum adds channels
/// that read the measurand with sensors of one quantity (M264).
pub fn check_combinations(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    connections: &[Connection],
    findings: &mut Findings,
) {
    for (ci, stage) in stages.iter().enumerate() {
        let Some(StageModel::Convert(convert)) = &stage.typed else {
            continue;
        };
        if convert.combine.is_none() {
            continue;
        }
        let Some(input) = connections
            .iter()
            .find(|c| c.to == ci && c.to_port == Port::In)
            .map(|c| c.from)
        else {
            continue;
        };
        let named = combined_names(stage);
        let mut members = vec![input];
        for (name, span) in &named {
            match member(stages, connections, input, &members, ci, name) {
                Ok(m) => members.push(m),
                Err(finding) => findings.push(finding(file, stage, name, *span)),
            }
        }
        if stage.param(schema::SUM).is_some() && members.len() == named.len() + 1 {
            let finding = mixed_quantities(file, stages, connections, stage, &members)
                .or_else(|| shares_not_whole(file, stages, connections, stage, &members));
            findings.extend(finding);
        }
    }
}

/// The stages a `sum` or `ratio` line names, with where.
pub fn combined_names(stage: &Stage) -> Vec<(String, Span)> {
    match (stage.param(schema::SUM), stage.param(schema::RATIO)) {
        (Some(ParamValue::StageRefs(names)), _) => names.clone(),
        (_, Some(ParamValue::StageRef { name, span })) => vec![(name.clone(), *span)],
        _ => Vec::new(),
    }
}

type Reject = fn(&Arc<SourceFile>, &Stage, &str, Span) -> Finding;

/// The stage a combination names, when it is another channel of the
/// input's converter that nothing else reads.
fn member(
    stages: &[Stage],
    connections: &[Connection],
    input: usize,
    so_far: &[usize],
    convert: usize,
    name: &str,
) -> Result<usize, Reject> {
    let scan = |i: usize| match channel_of(&stages[i]) {
        Some((conv, _)) => stages.iter().position(|s| s.name == conv),
        None => (stages[i].kind == StageKind::Adc).then_some(i),
    };
    let m = stages
        .iter()
        .position(|s| s.name == name)
        .ok_or(not_a_channel as Reject)?;
    if scan(m).is_none() || scan(m) != scan(input) {
        return Err(not_a_channel);
    }
    if so_far.contains(&m) || connections.iter().any(|c| c.from == m && c.to != convert) {
        return Err(used_twice);
    }
    Ok(m)
}

/// M266: a combination names a stage that is not another channel of the
/// converter the conversion reads.
fn not_a_channel(file: &Arc<SourceFile>, convert: &Stage, name: &str, span: Span) -> Finding {
    Finding::new(
        Code::M266,
        file,
        format!(
            "`{}` combines `{name}`, which is not a channel of the converter it reads",
            convert.name
        ),
    )
    .label(span, "not a channel of that converter")
    .help("name channels of the converter wired into this conversion: `adc` stages with `channel_of` it (or the converter itself), whose inputs carry the other signals")
}

/// M265: a channel combined twice, or combined and converted elsewhere.
fn used_twice(file: &Arc<SourceFile>, convert: &Stage, name: &str, span: Span) -> Finding {
    Finding::new(
        Code::M265,
        file,
        format!(
            "channel `{name}` is used twice: `{}` combines it, and it is already read",
            convert.name
        ),
    )
    .label(span, "used again here")
    .help(format!(
        "name each channel once, and neither the conversion's own input nor a channel wired to another stage; give `{name}` a channel of its own if both are meant"
    ))
}

/// What a sensor measures, as far as adding its channel to another's goes.
fn quantity(stage: &Stage) -> Option<&'static str> {
    schema::model(stage.kind, stage.model?)?.measures.words()
}

/// The sensors of the measurand upstream of `start` (a cold junction's
/// sensor, a fixed resistor and an excitation sense nothing).
fn sensors_upstream(stages: &[Stage], connections: &[Connection], start: usize) -> Vec<usize> {
    let junctions: Vec<&str> = stages
        .iter()
        .filter_map(|s| match s.param(schema::COLD_JUNCTION) {
            Some(ParamValue::StageRef { name, .. }) => Some(name.as_str()),
            _ => None,
        })
        .collect();
    let mut seen = vec![false; stages.len()];
    let mut todo = vec![start];
    let mut found = Vec::new();
    while let Some(i) = todo.pop() {
        if std::mem::replace(&mut seen[i], true) {
            continue;
        }
        if stages[i].kind == StageKind::Sensor
            && quantity(&stages[i]).is_some()
            && !junctions.contains(&stages[i].name.as_str())
        {
            found.push(i);
        }
        todo.extend(
            connections
                .iter()
                .filter(|c| c.to == i && c.to_port != Port::Ref)
                .map(|c| c.from),
        );
    }
    found.sort();
    found
}

/// M264: a sum whose channels do not all read the measurand with sensors
/// of one quantity.
fn mixed_quantities(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    connections: &[Connection],
    convert: &Stage,
    members: &[usize],
) -> Option<Finding> {
    let read: Vec<(usize, Option<&'static str>)> = members
        .iter()
        .map(|&m| {
            let sensors = sensors_upstream(stages, connections, m);
            let q = sensors.first().and_then(|&s| quantity(&stages[s]));
            let one = sensors.iter().all(|&s| quantity(&stages[s]) == q);
            (m, if one { q } else { None })
        })
        .collect();
    let first = read[0].1;
    let odd = read
        .iter()
        .find(|(_, q)| q.is_none() || *q != first)
        .copied()?;
    let what = |q: Option<&'static str>| q.unwrap_or("no sensor of the measurand");
    Some(
        Finding::new(
            Code::M264,
            file,
            format!(
                "`{}` sums channels of different quantities: `{}` reads {}, `{}` reads {}",
                convert.name,
                stages[read[0].0].name,
                what(first),
                stages[odd.0].name,
                what(odd.1)
            ),
        )
        .label(convert.name_span, "the sum")
        .label(stages[odd.0].name_span, what(odd.1).to_string())
        .help("a sum adds channels that each carry part of the measurand (load cells under one hopper); convert another quantity in a chain of its own, or feed a cold junction's reading into `reading.cj`"),
    )
}

/// How far the shares of summed cells may add up from the whole: 0.1 %
/// of it, so three cells stated at 33.333 % each make a whole (a rounding
/// allowance of our own).
pub const SHARE_TOLERANCE: f64 = 1e-3;

/// Each load cell upstream of a sum's members with its stated share;
/// None when anything upstream is not a transducer (the check is for
/// cells alone).
fn cell_shares(
    stages: &[Stage],
    connections: &[Connection],
    members: &[usize],
) -> Option<Vec<(usize, Option<f64>)>> {
    let mut cells: Vec<usize> = members
        .iter()
        .flat_map(|&m| sensors_upstream(stages, connections, m))
        .collect();
    cells.sort_unstable();
    cells.dedup();
    cells
        .iter()
        .map(|&c| match &stages[c].typed {
            Some(StageModel::Transducer(t)) => Some((c, t.share)),
            Some(
                StageModel::Excitation(_)
                | StageModel::Rtd(_)
                | StageModel::Thermocouple(_)
                | StageModel::Thermistor(_)
                | StageModel::IcVoltage(_)
                | StageModel::IcCurrent(_)
                | StageModel::StrainGauge(_)
                | StageModel::Resistor(_)
                | StageModel::Bridge(_)
                | StageModel::Amplifier(_)
                | StageModel::Filter(_)
                | StageModel::Adc(_)
                | StageModel::Convert(_),
            )
            | None => None,
        })
        .collect()
}

/// M270: the cells a sum adds carry shares of the measurand that do not
/// add up to all of it (within [`SHARE_TOLERANCE`]). A cell that states
/// no share carries all of it.
fn shares_not_whole(
    file: &Arc<SourceFile>,
    stages: &[Stage],
    connections: &[Connection],
    convert: &Stage,
    members: &[usize],
) -> Option<Finding> {
    let shares = cell_shares(stages, connections, members)?;
    let total: f64 = shares.iter().map(|(_, s)| s.unwrap_or(1.0)).sum();
    if (total - 1.0).abs() <= SHARE_TOLERANCE {
        return None;
    }
    // The share to mend: a cell that states none, else the last.
    let &(odd, own) = shares.iter().find(|(_, s)| s.is_none()).or(shares.last())?;
    let others = total - own.unwrap_or(1.0);
    let pct = |x: f64| format!("{} %", trimmed(100.0 * x, 5));
    let cell = &stages[odd].name;
    let help = if others < 1.0 - SHARE_TOLERANCE {
        format!(
            "the shares add to {}; `{cell}` with `share {}` completes them (the other cells carry {}), or state each cell's part of the load so they add to 100 %",
            pct(total),
            pct(1.0 - others),
            pct(others)
        )
    } else {
        format!(
            "the shares add to {}, and the other cells alone carry {}: state each cell's part of the load (its `share`) so they add to 100 %",
            pct(total),
            pct(others)
        )
    };
    let mut finding = Finding::new(
        Code::M270,
        file,
        format!(
            "the cells `{}` sums carry {} of the measurand, not all of it",
            convert.name,
            pct(total)
        ),
    )
    .label(convert.name_span, "the sum");
    for &(c, share) in &shares {
        let what = match share {
            Some(s) => format!("carries {}", pct(s)),
            None => "states no `share`: carries all of it".to_string(),
        };
        let span = stages[c]
            .params
            .iter()
            .find(|p| p.name == schema::SHARE && Arc::ptr_eq(&p.file, file))
            .map_or(stages[c].name_span, |p| p.span);
        finding = finding.label(span, what);
    }
    Some(finding.help(help))
}

//! Tracking groups lowered onto slots. A member's value is modelled as a
//! common component, drawn once for the whole group, plus a component of
//! its own:
//!
//!   x_i = mid_i + h_i · (c_i · C + (1 − c_i) · E_i),
//!
//! where h_i is the member's own half-width, C and E_i are independent
//! draws on [−1, 1] (rectangular, or 3σ-normal for `normal` limits) and
//! the own part's half-width (1 − c_i) h_i is half the group's ratio
//! tolerance. Any two members' ratio then stays within ± the ratio
//! tolerance, each member within its own limits, and two members
//! correlate with u(x_i, x_j) = c_i c_j h_i h_j / 3 (rectangular): the
//! covariances JCGM 100:2008 §5.2 eq. 13 takes, as independent components
//! its sum handles exactly. Drifts split the same way over the tracking
//! drift.

use super::node::{self, Node};
use super::plan::{DriftSlot, NodeId, Slot, SlotId, SourceKind, SourceName};
use crate::model::{Chain, TrackGroup};

/// One group's common component: the slots it moves and how much of each
/// slot's half-width it is.
#[derive(Clone, Debug, PartialEq)]
pub struct Group {
    /// The component's source id (`track:NAME`, `track:NAME:drift`): no
    /// parameter id has a colon, so it cannot clash with one.
    pub id: SourceName,
    pub parts: Vec<GroupPart>,
    /// Drawn as a 3σ normal rather than rectangular (every member's
    /// limit is `normal`).
    pub normal: bool,
    /// The budget's kind for it: `tracking` for a `track` line's, the
    /// members' own kind for a part their physics shares.
    pub kind: &'static str,
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct GroupPart {
    pub slot: SlotId,
    /// c_i: the common share of the slot's half-width, 0 … 1.
    pub common: f64,
}

/// A slot's half-width and middle.
pub fn half_width(slot: &Slot) -> (f64, f64) {
    (
        (slot.plus + slot.minus) / 2.0,
        slot.nominal + (slot.plus - slot.minus) / 2.0,
    )
}

/// The value slots and drift slots a stage's tracking acts on.
fn tracked_slots(node: &Node) -> Vec<(SlotId, Option<DriftSlot>)> {
    match node {
        Node::Resistor(node::Resistor { r, drift, .. }) => vec![(*r, *drift)],
        Node::Excitation(node::Excitation { value, drift, .. }) => vec![(*value, *drift)],
        Node::Bridge(node::Bridge {
            r, drift, others, ..
        }) => r
            .map(|r| (r, *drift))
            .into_iter()
            .chain(others.iter().copied())
            .collect(),
        // A gauge's thermal output is its drift: apparent strain per
        // kelvin, which the tracking drift bounds as written (as a
        // relative drift's is), not as a share of the resistance.
        Node::StrainGauge(node::StrainGauge {
            r, thermal_output, ..
        }) => vec![(
            *r,
            thermal_output.map(|slot| DriftSlot {
                slot,
                relative: true,
            }),
        )],
        Node::Rtd(_)
        | Node::Thermocouple(_)
        | Node::Thermistor(_)
        | Node::IcVoltage(_)
        | Node::IcCurrent(_)
        | Node::Transducer(_)
        | Node::Amplifier(_)
        | Node::Filter(_)
        | Node::Adc(_)
        | Node::Convert(_) => Vec::new(),
    }
}

/// The common components of `chain`'s groups over the lowered `nodes`
/// (`node_of` maps a stage index to its node).
pub fn lower_groups(
    chain: &Chain,
    nodes: &[Node],
    slots: &[Slot],
    node_of: impl Fn(usize) -> NodeId,
) -> Vec<Group> {
    let mut out = Vec::new();
    for group in &chain.groups {
        let members: Vec<(SlotId, Option<DriftSlot>)> = group
            .members
            .iter()
            .flat_map(|m| tracked_slots(&nodes[node_of(m.stage).index()]))
            .collect();
        out.extend(value_group(group, &members, slots));
        out.extend(drift_group(group, &members, slots));
    }
    out.extend(shared_gauge_factor_drift(nodes, slots));
    out
}

/// The gauge factor drifts of a chain's strain gauges as one part common
/// to all: the temperature coefficient is the grid alloy's, which gauges
/// of one type share, and it scales every gauge's strain alike, so it
/// cancels in no bridge. None with fewer than two gauges stating one.
fn shared_gauge_factor_drift(nodes: &[Node], slots: &[Slot]) -> Option<Group> {
    let parts = nodes
        .iter()
        .filter_map(|n| {
            let Node::StrainGauge(gauge) = n else {
                return None;
            };
            let d = gauge.gauge_factor_drift?;
            part(d.slot, half_width(&slots[d.slot.index()]).0, 0.0)
        })
        .collect();
    let shared = make(SourceName::shared("gauge_factor_drift"), parts, slots)?;
    Some(Group {
        kind: SourceKind::Drift.name(),
        ..shared
    })
}

fn value_group(
    group: &TrackGroup,
    members: &[(SlotId, Option<DriftSlot>)],
    slots: &[Slot],
) -> Option<Group> {
    let parts = members
        .iter()
        .filter_map(|&(s, _)| {
            let (h, _) = half_width(&slots[s.index()]);
            let own = group.ratio / 2.0 * slots[s.index()].nominal.abs();
            part(s, h, own)
        })
        .collect();
    make(SourceName::track(&group.name, false), parts, slots)
}

fn drift_group(
    group: &TrackGroup,
    members: &[(SlotId, Option<DriftSlot>)],
    slots: &[Slot],
) -> Option<Group> {
    let tracking = group.tracking?;
    let parts = members
        .iter()
        .filter_map(|&(value, drift)| {
            let d = drift?;
            let (h, _) = half_width(&slots[d.slot.index()]);
            let scale = if d.relative {
                1.0
            } else {
                slots[value.index()].nominal.abs()
            };
            part(d.slot, h, tracking / 2.0 * scale)
        })
        .collect();
    make(SourceName::track(&group.name, true), parts, slots)
}

/// A slot of half-width `h` whose own part is `own` wide; none when it
/// has no width.
fn part(slot: SlotId, h: f64, own: f64) -> Option<GroupPart> {
    (h > 0.0).then(|| GroupPart {
        slot,
        common: (1.0 - own / h).clamp(0.0, 1.0),
    })
}

fn make(id: SourceName, parts: Vec<GroupPart>, slots: &[Slot]) -> Option<Group> {
    if parts.len() < 2 {
        return None;
    }
    let normal = parts.iter().all(|p| slots[p.slot.index()].normal);
    Some(Group {
        id,
        parts,
        normal,
        kind: "tracking",
    })
}

/// The fraction of `slot`'s half-width that is its own (independent)
/// part: 1 outside any group.
pub fn own_fraction(groups: &[Group], slot: SlotId) -> f64 {
    groups
        .iter()
        .flat_map(|g| &g.parts)
        .find(|p| p.slot == slot)
        .map_or(1.0, |p| 1.0 - p.common)
}

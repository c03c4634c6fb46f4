//! Reviewing a change and choosing between variants: what a chain
//! achieves ([`outcome`]), what changed in its text ([`spec`]) and what
//! that did ([`diff_outcomes`]), telling change from numerical noise.

pub mod outcome;
pub mod spec;

use serde::Serialize;

pub use outcome::{
    outcome, BillOutcome, FaultOutcome, FaultsOutcome, Outcome, PowerBasis, RequirementOutcome,
};
pub use spec::{spec_changes, ChangeKind, SpecChange};

/// Worst-case and GUM figures closer than this share of their magnitude
/// are the same: they come from the same deterministic arithmetic, and
/// only rounding moves them when the evaluation order changes.
pub const RELATIVE_TOLERANCE: f64 = 1e-9;

/// A requirement margin that shrinks by more than this share of the
/// requirement's limit is a regression unless told otherwise.
pub const DEFAULT_THRESHOLD: f64 = 0.01;

#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    Better,
    Neutral,
    Worse,
    /// A change's or a chain's whole: something better and something
    /// worse (never a single figure's).
    Mixed,
}

impl Direction {
    pub fn word(self) -> &'static str {
        match self {
            Direction::Better => "better",
            Direction::Neutral => "neutral",
            Direction::Worse => "worse",
            Direction::Mixed => "mixed",
        }
    }

    /// Two wholes as one: a loss and a gain together are mixed, either
    /// alone wins over neutral.
    pub fn and(self, other: Direction) -> Direction {
        use Direction::{Better, Mixed, Neutral, Worse};
        match (self, other) {
            (Mixed, _) | (_, Mixed) | (Worse, Better) | (Better, Worse) => Mixed,
            (Worse, _) | (_, Worse) => Worse,
            (Better, _) | (_, Better) => Better,
            (Neutral, Neutral) => Neutral,
        }
    }
}

/// Deterministic figures: equal within [`RELATIVE_TOLERANCE`].
pub fn same(a: f64, b: f64) -> bool {
    same_above(a, b, 0.0)
}

/// [`same`], or closer than `floor`.
pub fn same_above(a: f64, b: f64, floor: f64) -> bool {
    a == b || (a - b).abs() <= (RELATIVE_TOLERANCE * a.abs().max(b.abs())).max(floor)
}

/// Monte Carlo figures: equal unless they differ by more than the two
/// values' numerical widths together (each end is only known to its width).
pub fn same_within(a: f64, b: f64, width_a: f64, width_b: f64) -> bool {
    same(a, b) || (a - b).abs() <= width_a + width_b
}

/// One figure before and after; `None` where a side lacks it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Moved {
    pub name: String,
    pub old: Option<f64>,
    pub new: Option<f64>,
    pub unit: String,
    /// Whether the move is a gain or a loss for the design.
    pub direction: Direction,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RequirementChange {
    pub name: &'static str,
    pub old: Option<RequirementOutcome>,
    pub new: Option<RequirementOutcome>,
    /// The margin's change, in the requirement's unit.
    pub margin_change: Option<f64>,
    pub direction: Direction,
    /// A verdict flipped to fail, or the margin shrank past the threshold.
    pub regression: bool,
}

/// A fault whose verdict or firmware threshold moved, or that one side
/// lacks.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FaultChange {
    pub stage: String,
    pub fault: &'static str,
    pub condition: &'static str,
    pub old: Option<FaultOutcome>,
    pub new: Option<FaultOutcome>,
    pub direction: Direction,
    /// It was detectable and is not, or it is new and not detectable.
    pub regression: bool,
}

/// What a change did to one chain.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OutcomeDiff {
    pub direction: Direction,
    pub regression: bool,
    /// What makes it a regression, in words.
    pub reasons: Vec<String>,
    pub requirements: Vec<RequirementChange>,
    /// Each method's worst error.
    pub worst: Vec<Moved>,
    /// The sources whose largest standard uncertainty moved most, largest
    /// move first (at most [`MOST_MOVED`]).
    pub contributors: Vec<Moved>,
    /// Headroom per limit, as a share of the limit's span.
    pub headroom: Vec<Moved>,
    /// Resolution, response, the converter window's ends, alarm trips.
    pub other: Vec<Moved>,
    /// Faults that became silent or detectable, and thresholds that moved.
    pub faults: Vec<FaultChange>,
}

impl OutcomeDiff {
    pub fn is_empty(&self) -> bool {
        self.requirements.is_empty()
            && self.worst.is_empty()
            && self.contributors.is_empty()
            && self.headroom.is_empty()
            && self.other.is_empty()
            && self.faults.is_empty()
    }
}

/// Contributors listed in a diff.
pub const MOST_MOVED: usize = 5;

/// Compares two outcomes. `threshold` is the share of a requirement's
/// limit its margin may shrink by before it counts as a regression.
pub fn diff_outcomes(old: &Outcome, new: &Outcome, threshold: f64) -> OutcomeDiff {
    let requirements = requirement_changes(old, new, threshold);
    let worst = worst_changes(old, new);
    let judged = |d: Direction| requirements.iter().any(|r| r.direction == d);
    let headroom = headroom_changes(old, new);
    // A signal pushed beyond a limit it kept is a regression whatever the
    // accuracy does.
    let crossed_limits: Vec<&Moved> = headroom
        .iter()
        .filter(|m| m.old.is_none_or(|h| h >= 0.0) && m.new.is_some_and(|h| h < 0.0))
        .collect();
    let crossed = !crossed_limits.is_empty();
    let faults = fault_changes(old, new);
    let faults_judged = |d: Direction| faults.iter().any(|f| f.direction == d);
    let mut reasons: Vec<String> = requirements
        .iter()
        .filter(|r| r.regression)
        .map(regression_reason)
        .collect();
    reasons.extend(
        crossed_limits
            .iter()
            .map(|m| format!("`{}` goes beyond its limit", m.name)),
    );
    reasons.extend(faults.iter().filter(|f| f.regression).map(fault_reason));
    // A reviewer must see any loss. A chain that now fails a requirement
    // or leaves a limit is worse whatever else it gained; a smaller loss
    // beside a gain is mixed. Without requirements, the GUM total speaks
    // for accuracy.
    let broke = crossed || requirements.iter().any(newly_fails);
    let lost = judged(Direction::Worse) || faults_judged(Direction::Worse);
    let gained = judged(Direction::Better) || faults_judged(Direction::Better);
    let direction = if broke || lost || gained {
        match (broke, lost, gained) {
            (false, true, true) => Direction::Mixed,
            (false, false, true) => Direction::Better,
            _ => Direction::Worse,
        }
    } else if old.requirements.is_empty() && new.requirements.is_empty() {
        worst
            .iter()
            .find(|m| m.name == "gum")
            .map_or(Direction::Neutral, |m| m.direction)
    } else {
        Direction::Neutral
    };
    OutcomeDiff {
        direction,
        regression: !reasons.is_empty(),
        reasons,
        requirements,
        worst,
        contributors: contributor_changes(old, new),
        headroom,
        other: other_changes(old, new),
        faults,
    }
}

fn fault_reason(f: &FaultChange) -> String {
    let verdict = f.new.as_ref().map_or("", |n| n.verdict.name());
    if f.old.is_some() {
        format!(
            "`{}` {} is no longer detectable ({verdict})",
            f.stage, f.condition
        )
    } else {
        format!(
            "`{}` {} is new and not detectable ({verdict})",
            f.stage, f.condition
        )
    }
}

/// Faults by stage and kind: a verdict that moved (a fault made silent,
/// undetermined or detectable), a detectable fault's threshold that moved,
/// and faults one side lacks. A silent fault's codes moving inside the
/// window is no change for the firmware.
fn fault_changes(old: &Outcome, new: &Outcome) -> Vec<FaultChange> {
    let (olds, news) = (fault_rows(old), fault_rows(new));
    let same_fault = |a: &FaultOutcome, b: &FaultOutcome| a.stage == b.stage && a.fault == b.fault;
    let mut out = Vec::new();
    for n in news {
        let o = olds.iter().find(|o| same_fault(o, n));
        if let Some(change) = fault_change(o, n) {
            out.push(change);
        }
    }
    for o in olds
        .iter()
        .filter(|o| !news.iter().any(|n| same_fault(o, n)))
    {
        out.push(FaultChange {
            stage: o.stage.clone(),
            fault: o.fault,
            condition: o.condition,
            old: Some(o.clone()),
            new: None,
            direction: Direction::Neutral,
            regression: false,
        });
    }
    out
}

fn fault_rows(o: &Outcome) -> &[FaultOutcome] {
    o.faults.as_ref().map_or(&[], |f| f.rows.as_slice())
}

fn fault_change(o: Option<&FaultOutcome>, n: &FaultOutcome) -> Option<FaultChange> {
    let (direction, regression) = match o {
        None if n.detectable() => (Direction::Neutral, false),
        None => (Direction::Worse, true),
        Some(o) if o.detectable() && !n.detectable() => (Direction::Worse, true),
        Some(o) if !o.detectable() && n.detectable() => (Direction::Better, false),
        // Silent and undetermined are both undetected: a move between
        // them is told, not judged.
        Some(o) if o.verdict != n.verdict => (Direction::Neutral, false),
        Some(o) if o.threshold != n.threshold => (Direction::Neutral, false),
        // `protects` added or removed: the same fault, another severity.
        Some(o) if o.severity != n.severity => (Direction::Neutral, false),
        Some(_) => return None,
    };
    Some(FaultChange {
        stage: n.stage.clone(),
        fault: n.fault,
        condition: n.condition,
        old: o.cloned(),
        new: Some(n.clone()),
        direction,
        regression,
    })
}

/// A requirement failed after and met (or not stated) before.
fn newly_fails(r: &RequirementChange) -> bool {
    match (&r.old, &r.new) {
        (Some(o), Some(n)) => o.pass && !n.pass,
        (None, Some(n)) => !n.pass,
        (_, None) => false,
    }
}

fn regression_reason(r: &RequirementChange) -> String {
    match (&r.old, &r.new) {
        (Some(o), Some(n)) if o.pass && !n.pass => format!("the {} requirement fails", r.name),
        (Some(o), Some(n)) => format!(
            "the {} margin shrank by {:.2} % of its limit",
            r.name,
            (o.margin - n.margin) / n.limit.abs().max(f64::MIN_POSITIVE) * 100.0
        ),
        _ => format!("the {} requirement fails", r.name),
    }
}

fn requirement_changes(old: &Outcome, new: &Outcome, threshold: f64) -> Vec<RequirementChange> {
    let mut names: Vec<&'static str> = new.requirements.iter().map(|r| r.name).collect();
    for r in &old.requirements {
        if !names.contains(&r.name) {
            names.push(r.name);
        }
    }
    let mut out = Vec::new();
    for name in names {
        let o = old.requirements.iter().find(|r| r.name == name);
        let n = new.requirements.iter().find(|r| r.name == name);
        let change = match (o, n) {
            (Some(o), Some(n)) => requirement_change(o, n, threshold, new.floor.max(old.floor)),
            _ => Some(RequirementChange {
                name,
                old: o.cloned(),
                new: n.cloned(),
                margin_change: None,
                direction: Direction::Neutral,
                regression: n.is_some_and(|n| !n.pass),
            }),
        };
        out.extend(change);
    }
    out
}

fn requirement_change(
    o: &RequirementOutcome,
    n: &RequirementOutcome,
    threshold: f64,
    floor: f64,
) -> Option<RequirementChange> {
    // Only errors carry the rounding floor; seconds and decibels do not.
    let floor = if o.is_error() { floor } else { 0.0 };
    let unchanged = o.method == n.method
        && same(o.limit, n.limit)
        && match (o.numerical, n.numerical) {
            (Some(a), Some(b)) => same_within(o.achieved, n.achieved, a, b),
            _ => same_above(o.achieved, n.achieved, floor),
        };
    if unchanged && o.pass == n.pass {
        return None;
    }
    let margin_change = n.margin - o.margin;
    let direction = if o.pass && !n.pass || unchanged {
        if o.pass && !n.pass {
            Direction::Worse
        } else {
            Direction::Neutral
        }
    } else if !o.pass && n.pass || margin_change > 0.0 {
        Direction::Better
    } else {
        Direction::Worse
    };
    let shrank = !unchanged && -margin_change > threshold * n.limit.abs();
    Some(RequirementChange {
        name: n.name,
        old: Some(o.clone()),
        new: Some(n.clone()),
        margin_change: Some(margin_change),
        direction,
        regression: o.pass && !n.pass || shrank,
    })
}

fn moved(
    name: String,
    old: Option<f64>,
    new: Option<f64>,
    unit: &str,
    lower_is_better: bool,
) -> Moved {
    let direction = match (old, new) {
        (Some(a), Some(b)) if (b < a) == lower_is_better => Direction::Better,
        (Some(_), Some(_)) => Direction::Worse,
        _ => Direction::Neutral,
    };
    Moved {
        name,
        old,
        new,
        unit: unit.to_string(),
        direction,
    }
}

fn worst_changes(old: &Outcome, new: &Outcome) -> Vec<Moved> {
    let mut out = Vec::new();
    for n in &new.worst {
        let Some(o) = old.worst.iter().find(|o| o.method == n.method) else {
            continue;
        };
        let unchanged = match (o.numerical, n.numerical) {
            (Some(a), Some(b)) => same_within(o.value, n.value, a, b),
            _ => same_above(o.value, n.value, new.floor.max(old.floor)),
        };
        if !unchanged {
            out.push(moved(
                n.method.into(),
                Some(o.value),
                Some(n.value),
                &new.unit,
                true,
            ));
        }
    }
    out
}

fn contributor_changes(old: &Outcome, new: &Outcome) -> Vec<Moved> {
    let mut out: Vec<Moved> = Vec::new();
    for n in &new.sources {
        let o = old.sources.iter().find(|o| o.id == n.id);
        let before = o.map(|o| o.standard_uncertainty);
        if before.is_none_or(|b| !same_above(b, n.standard_uncertainty, new.floor.max(old.floor))) {
            out.push(moved(
                n.id.clone(),
                before,
                Some(n.standard_uncertainty),
                &new.unit,
                true,
            ));
        }
    }
    for o in &old.sources {
        if !new.sources.iter().any(|n| n.id == o.id) {
            out.push(moved(
                o.id.clone(),
                Some(o.standard_uncertainty),
                None,
                &new.unit,
                true,
            ));
        }
    }
    let size = |m: &Moved| (m.new.unwrap_or(0.0) - m.old.unwrap_or(0.0)).abs();
    out.sort_by(|a, b| {
        size(b)
            .total_cmp(&size(a))
            .then_with(|| a.name.cmp(&b.name))
    });
    out.truncate(MOST_MOVED);
    out
}

/// Each limit by stage and name, a repeated name numbered in order.
fn limit_keys(o: &Outcome) -> Vec<(String, f64)> {
    let mut out: Vec<(String, f64)> = Vec::new();
    for l in &o.limits {
        let base = format!("{} {}", l.stage, l.limit);
        let seen = out
            .iter()
            .filter(|(k, _)| k == &base || k.starts_with(&format!("{base} #")))
            .count();
        let key = if seen == 0 {
            base
        } else {
            format!("{base} #{}", seen + 1)
        };
        out.push((key, l.headroom));
    }
    out
}

fn headroom_changes(old: &Outcome, new: &Outcome) -> Vec<Moved> {
    let (olds, news) = (limit_keys(old), limit_keys(new));
    let mut out = Vec::new();
    for (key, h) in &news {
        let o = olds.iter().find(|(k, _)| k == key).map(|(_, h)| *h);
        if o.is_none_or(|o| !same(o, *h)) {
            out.push(moved(key.clone(), o, Some(*h), "", false));
        }
    }
    for (key, h) in &olds {
        if !news.iter().any(|(k, _)| k == key) {
            out.push(moved(key.clone(), Some(*h), None, "", false));
        }
    }
    out
}

fn other_changes(old: &Outcome, new: &Outcome) -> Vec<Moved> {
    let mut out = Vec::new();
    let mut figure =
        |name: &str, o: Option<f64>, n: Option<f64>, unit: &str, lower: Option<bool>| {
            let equal = match (o, n) {
                (Some(a), Some(b)) => same(a, b),
                (None, None) => true,
                _ => false,
            };
            if !equal {
                let mut m = moved(name.into(), o, n, unit, lower.unwrap_or(true));
                if lower.is_none() {
                    m.direction = Direction::Neutral;
                }
                out.push(m);
            }
        };
    figure(
        "resolution",
        Some(old.resolution),
        Some(new.resolution),
        &new.unit,
        Some(true),
    );
    figure("response", old.response_s, new.response_s, "s", Some(true));
    let end = |o: &Outcome, i: usize| o.window.map(|w| w[i] as f64);
    figure("code at range low", end(old, 0), end(new, 0), "code", None);
    figure("code at range high", end(old, 1), end(new, 1), "code", None);
    figure("unit cost", old.bill.cost, new.bill.cost, "", Some(true));
    figure("power", old.bill.power_w, new.bill.power_w, "W", Some(true));
    let valid = |o: &Outcome, i: usize| o.faults.as_ref().map(|f| f.window[i] as f64);
    figure(
        "valid window low",
        valid(old, 0),
        valid(new, 0),
        "code",
        None,
    );
    figure(
        "valid window high",
        valid(old, 1),
        valid(new, 1),
        "code",
        None,
    );
    for n in &new.alarms {
        let o = old.alarms.iter().find(|o| o.side == n.side);
        let name = format!("{} alarm trip", n.side);
        figure(
            &name,
            o.map(|o| o.trip_at),
            Some(n.trip_at),
            &new.measurand_unit,
            None,
        );
        let name = format!("{} alarm trip code", n.side);
        figure(
            &name,
            o.map(|o| o.trip_code as f64),
            Some(n.trip_code as f64),
            "code",
            None,
        );
    }
    out
}

#[cfg(test)]
mod tests {
    use super::outcome::LimitOutcome;
    use super::*;
    use crate::analysis::faults::{Threshold, Verdict};

    fn accuracy(achieved: f64, numerical: Option<f64>) -> RequirementOutcome {
        RequirementOutcome {
            name: "accuracy",
            kind: crate::model::RequirementKind::Accuracy(None),
            method: if numerical.is_some() {
                "monte_carlo"
            } else {
                "gum"
            }
            .into(),
            limit: 0.3,
            achieved,
            margin: 0.3 - achieved,
            unit: "K".into(),
            pass: achieved <= 0.3,
            numerical,
        }
    }

    fn with(requirements: Vec<RequirementOutcome>, headroom: f64) -> Outcome {
        Outcome {
            chain: "c".into(),
            unit: "K".into(),
            measurand_unit: "degC".into(),
            requirements,
            worst: Vec::new(),
            sources: Vec::new(),
            limits: vec![LimitOutcome {
                stage: "conv".into(),
                limit: "input",
                headroom,
                keeps_margin: true,
            }],
            resolution: 0.01,
            response_s: None,
            window: None,
            alarms: Vec::new(),
            faults: None,
            bill: outcome::BillOutcome {
                cost: None,
                unpriced: Vec::new(),
                power_w: None,
                power: Vec::new(),
                unpowered: Vec::new(),
            },
            largest: None,
            trials: 0,
            floor: 3e-10,
        }
    }

    #[test]
    fn rounding_is_no_change() {
        assert!(same(0.1, 0.1 * (1.0 + 1e-12)));
        assert!(!same(0.1, 0.1 * (1.0 + 1e-6)));
        assert!(same_above(1e-5, 1e-5 + 1e-14, 3e-10));
    }

    #[test]
    fn monte_carlo_moves_only_beyond_both_widths() {
        assert!(same_within(0.100, 0.103, 0.002, 0.002));
        assert!(!same_within(0.100, 0.105, 0.002, 0.002));
        let old = with(vec![accuracy(0.100, Some(0.002))], 0.2);
        let new = with(vec![accuracy(0.103, Some(0.002))], 0.2);
        let d = diff_outcomes(&old, &new, DEFAULT_THRESHOLD);
        assert!(d.is_empty(), "{d:?}");
        assert_eq!(d.direction, Direction::Neutral);
    }

    #[test]
    fn a_margin_shrinking_past_the_threshold_is_a_regression() {
        let old = with(vec![accuracy(0.10, None)], 0.2);
        // 0.002 K of a 0.3 K limit: under 1 %, worse but no regression.
        let small = diff_outcomes(
            &old,
            &with(vec![accuracy(0.102, None)], 0.2),
            DEFAULT_THRESHOLD,
        );
        assert_eq!(small.direction, Direction::Worse);
        assert!(!small.regression);
        // 0.004 K: over 1 % of the limit.
        let large = diff_outcomes(
            &old,
            &with(vec![accuracy(0.104, None)], 0.2),
            DEFAULT_THRESHOLD,
        );
        assert!(large.regression);
        let better = diff_outcomes(
            &old,
            &with(vec![accuracy(0.09, None)], 0.2),
            DEFAULT_THRESHOLD,
        );
        assert_eq!(better.direction, Direction::Better);
        assert!(!better.regression);
    }

    #[test]
    fn a_verdict_flipped_or_a_limit_crossed_is_a_regression() {
        let old = with(vec![accuracy(0.299, None)], 0.2);
        let failed = diff_outcomes(&old, &with(vec![accuracy(0.301, None)], 0.2), 0.5);
        assert!(failed.regression);
        assert_eq!(failed.direction, Direction::Worse);
        let crossed = diff_outcomes(
            &old,
            &with(vec![accuracy(0.2, None)], -0.01),
            DEFAULT_THRESHOLD,
        );
        assert!(crossed.regression);
        assert_eq!(crossed.direction, Direction::Worse);
    }

    fn open_tc(verdict: Verdict, threshold: Option<Threshold>) -> FaultOutcome {
        FaultOutcome {
            stage: "tc".into(),
            fault: "open",
            condition: "open circuit",
            verdict,
            codes: None,
            threshold,
            severity: None,
        }
    }

    fn with_faults(rows: Vec<FaultOutcome>) -> Outcome {
        let mut o = with(Vec::new(), 0.2);
        o.faults = Some(FaultsOutcome {
            window: [100, 900],
            rows,
        });
        o
    }

    #[test]
    fn a_fault_made_silent_is_a_regression_and_made_detectable_is_better() {
        let detectable = with_faults(vec![open_tc(
            Verdict::Detectable,
            Some(Threshold::Above(950)),
        )]);
        let silent = with_faults(vec![open_tc(Verdict::Silent, None)]);
        let worse = diff_outcomes(&detectable, &silent, DEFAULT_THRESHOLD);
        assert_eq!(worse.direction, Direction::Worse);
        assert!(worse.regression);
        assert_eq!(
            worse.reasons,
            ["`tc` open circuit is no longer detectable (silent)"]
        );
        let better = diff_outcomes(&silent, &detectable, DEFAULT_THRESHOLD);
        assert_eq!(better.direction, Direction::Better);
        assert!(!better.regression);
        // Silent to undetermined: told, neither better nor a regression.
        let undetermined = with_faults(vec![open_tc(Verdict::Undetermined, None)]);
        let told = diff_outcomes(&silent, &undetermined, DEFAULT_THRESHOLD);
        assert_eq!((told.faults.len(), told.regression), (1, false));
        assert_eq!(told.direction, Direction::Neutral);
    }

    /// A fault made detectable while a margin shrank: mixed, not worse,
    /// and the margin's regression is still one.
    #[test]
    fn a_gain_beside_a_loss_is_mixed() {
        let mut old = with_faults(vec![open_tc(Verdict::Silent, None)]);
        old.requirements = vec![accuracy(0.10, None)];
        let mut new = with_faults(vec![open_tc(
            Verdict::Detectable,
            Some(Threshold::Above(950)),
        )]);
        new.requirements = vec![accuracy(0.104, None)];
        let d = diff_outcomes(&old, &new, DEFAULT_THRESHOLD);
        assert_eq!(d.direction, Direction::Mixed);
        assert!(d.regression);
    }

    /// Chains' directions as the file's and the change's: a loss and a
    /// gain make mixed, either alone wins over neutral.
    #[test]
    fn directions_combine() {
        use Direction::{Better, Mixed, Neutral, Worse};
        let all = [Better, Neutral, Worse, Mixed];
        for a in all {
            assert_eq!(a.and(Neutral), a);
            assert_eq!(Mixed.and(a), Mixed);
            for b in all {
                assert_eq!(a.and(b), b.and(a));
            }
        }
        assert_eq!(Worse.and(Better), Mixed);
        assert_eq!(Worse.and(Worse), Worse);
        assert_eq!(Better.and(Better), Better);
    }

    #[test]
    fn a_threshold_that_moved_is_told_and_a_new_silent_fault_is_a_regression() {
        let at = |n| {
            with_faults(vec![open_tc(
                Verdict::Detectable,
                Some(Threshold::Above(n)),
            )])
        };
        let moved = diff_outcomes(&at(950), &at(960), DEFAULT_THRESHOLD);
        assert_eq!(moved.faults.len(), 1);
        assert!(!moved.regression);
        assert!(diff_outcomes(&at(950), &at(950), DEFAULT_THRESHOLD).is_empty());
        let new = diff_outcomes(
            &with_faults(Vec::new()),
            &with_faults(vec![open_tc(Verdict::Silent, None)]),
            DEFAULT_THRESHOLD,
        );
        assert!(new.regression, "{new:?}");
    }
}

//! The budget for people: totals per point, the largest sources at the
//! worst point, noise, dynamics and verdicts.

use comfy_table::{presets::NOTHING, Table};

use crate::analysis::budget::Point;
use crate::analysis::ranges::LimitUnit;
use crate::analysis::report::Analysis;
use crate::analysis::validation::GumCheck;
use crate::emit::report::fmt::{cancel_note, method, trip_code};
use crate::eval::NodeId;
use crate::model::{Chain, RequirementKind};
use crate::units::format::{attenuation_db, codes, from_si, significant, trimmed};

/// JCGM 101:2008 §7.2.2 asks for M of at least 10⁴/(1 − p) trials for a
/// coverage interval of probability p: 200 000 at 95 % (recalled from
/// memory of the guide).
const SIGN_OFF_TRIALS: usize = 200_000;
/// Rows of the source table shown; the JSON has them all.
const TOP_SOURCES: usize = 12;

fn table() -> Table {
    let mut t = Table::new();
    t.load_style(NOTHING);
    t
}

fn lines(t: &Table) -> String {
    t.to_string()
        .lines()
        .map(str::trim_end)
        .collect::<Vec<_>>()
        .join("\n")
}

/// The report for people; `per_point` lists the totals at every point
/// instead of the worst point at each ambient.
pub fn human(chain: &Chain, a: &Analysis, per_point: bool) -> String {
    let (unit, f) = chain.difference_unit();
    let m_unit = chain.measurand_unit();
    let v = |x: f64| significant(x * f, 3);
    let mut out = match &chain.label {
        Some(l) => format!("chain {} \"{l}\": error budget in {unit}\n\n", chain.name),
        None => format!("chain {}: error budget in {unit}\n\n", chain.name),
    };
    out.push_str(&totals(a, &m_unit, &v, per_point));
    out.push_str("\n\n");
    if !a.verdicts.is_empty() {
        out.push_str(&lines(&verdict_table(a, &unit, &v)));
        out.push_str("\n\n");
    }
    out.push_str(&monte_carlo_lines(a, &unit, &v));
    out.push_str(&largest_sources(a, &m_unit, &v));
    out.push_str(&calibration_line(a, &unit, &v));
    out.push_str(&signal_path(a, &unit, f, &v));
    out.push_str(&limits(a));
    out.push_str(&noise_line(a, &unit, &v));
    out.push_str(&dynamics_line(a));
    out.push_str(&alarms(a, &unit, &m_unit, &v));
    out.push('\n');
    out
}

/// The totals: every point, or the largest at each ambient.
fn totals(a: &Analysis, m_unit: &str, v: &dyn Fn(f64) -> String, per_point: bool) -> String {
    if per_point {
        return lines(&per_point_table(a, m_unit, v));
    }
    let ambients = a
        .budget
        .points
        .windows(2)
        .filter(|w| w[0].ambient != w[1].ambient)
        .count()
        + 1;
    format!(
        "{}\n\nthe largest of {} points across the measurand at each ambient; --per-point lists them all",
        lines(&summary_table(a, m_unit, v)),
        a.budget.points.len() / ambients
    )
}

/// How many trials, what the interval's ends are good to, and GUM
/// against it; nothing when Monte Carlo did not run.
fn monte_carlo_lines(a: &Analysis, unit: &str, v: &dyn Fn(f64) -> String) -> String {
    let Some(m) = &a.monte_carlo else {
        return String::new();
    };
    let numerical = m.iter().map(|i| i.numerical).fold(0.0, f64::max);
    let mut out = format!(
        "Monte Carlo: {} trials a point, seed {}; its interval ends are good to ± {} {unit} (95 %)\n",
        a.trials,
        a.seed,
        v(numerical)
    );
    if a.trials < SIGN_OFF_TRIALS {
        out.push_str(&format!(
            "  for a budget you sign, run --trials {SIGN_OFF_TRIALS} or more (JCGM 101 §7.2.2: 10^4 / (1 - p))\n"
        ));
    }
    if let Some(checks) = &a.gum_checks {
        out.push_str(&gum_validation_line(checks, unit, v));
    }
    out.push('\n');
    out
}

/// The largest sources at the point with the largest GUM total.
fn largest_sources(a: &Analysis, m_unit: &str, v: &dyn Fn(f64) -> String) -> String {
    let Some(worst) = a
        .budget
        .points
        .iter()
        .max_by(|x, y| x.gum_expanded.total_cmp(&y.gum_expanded))
    else {
        return String::new();
    };
    format!(
        "largest sources at {} {m_unit}, ambient {} degC\n\n{}",
        trimmed(from_si(worst.measurand, m_unit), 6),
        trimmed(from_si(worst.ambient, "degC"), 4),
        sources_table(a, worst, v)
    )
}

/// What the declared calibration buys at the worst point.
fn calibration_line(a: &Analysis, unit: &str, v: &dyn Fn(f64) -> String) -> String {
    let Some(u) = &a.uncalibrated else {
        return String::new();
    };
    let worst = |v: &mut dyn Iterator<Item = f64>| v.fold(0.0, f64::max);
    format!(
        "calibration: ± {} {unit} (GUM) before it, ± {} {unit} after, at the worst point\n\n",
        v(worst(&mut u.iter().copied())),
        v(worst(&mut a.budget.points.iter().map(|p| p.gum_expanded)))
    )
}

/// Each stage's value, gain and error along the signal path.
fn signal_path(a: &Analysis, unit: &str, f: f64, v: &dyn Fn(f64) -> String) -> String {
    if a.accumulation.is_empty() {
        return String::new();
    }
    let mut t = table();
    t.set_header([
        "stage".to_string(),
        "value".into(),
        format!("gain per {unit}"),
        format!("error ({unit}, 1 σ)"),
    ]);
    for n in &a.accumulation {
        let name = a.names.get(n.node.index()).cloned().unwrap_or_default();
        let value = if n.unit == "code" {
            format!("{} (code)", significant(n.value, 7))
        } else {
            crate::units::format::with_prefix(n.value, n.unit, 5)
        };
        let gain = if n.unit == "code" {
            codes(significant(n.gain / f, 4))
        } else {
            crate::units::format::with_prefix(n.gain / f, n.unit, 4)
        };
        t.add_row([name, value, gain, v(n.error)]);
    }
    // The stages carry the raw error: a calibration acts in the firmware,
    // after the converter, so the table would otherwise read as
    // contradicting the calibrated totals above it.
    let when = if a.uncalibrated.is_some() {
        ", before the firmware's calibration"
    } else {
        ""
    };
    let name = |n: NodeId| a.names.get(n.index()).cloned().unwrap_or_default();
    let notes: String = a
        .accumulation
        .windows(2)
        .filter_map(|pair| {
            let x = pair[1].cancels.as_ref()?;
            let stages = [name(pair[0].node), name(pair[1].node)];
            let (before, after) = (
                format!("{} {unit}", v(x.before)),
                format!("{} {unit}", v(x.after)),
            );
            let note = cancel_note([&stages[0], &stages[1]], &x.source, &before, &after);
            Some(format!("{note}\n"))
        })
        .collect();
    format!(
        "along the signal path, at the worst point{when}\n\n{}\n{notes}\n",
        lines(&t)
    )
}

/// Every limited signal's reach against what it is allowed.
fn limits(a: &Analysis) -> String {
    if a.envelopes.is_empty() {
        return String::new();
    }
    let mut t = table();
    t.set_header(["stage", "signal", "reaches", "allowed", "headroom"]);
    for e in &a.envelopes {
        let name = a.names.get(e.node.index()).cloned().unwrap_or_default();
        let show = |x: f64| {
            if !x.is_finite() {
                "—".to_string()
            } else if e.unit == LimitUnit::FullScale {
                format!("{} %", trimmed(x * 100.0, 4))
            } else {
                crate::units::format::with_prefix(x, e.unit.symbol(), 4)
            }
        };
        t.add_row([
            name,
            e.limit.describe().to_string(),
            format!("{} .. {}", show(e.reach.0), show(e.reach.1)),
            format!("{} .. {}", show(e.allowed.0), show(e.allowed.1)),
            format!("{} %", trimmed(e.headroom() * 100.0, 3)),
        ]);
    }
    format!("limits over the ranges and tolerances\n\n{}\n\n", lines(&t))
}

fn noise_line(a: &Analysis, unit: &str, v: &dyn Fn(f64) -> String) -> String {
    let n = &a.budget.noise;
    if n.terms.is_empty() && n.referred.is_empty() {
        return "noise: no noise stated\n".to_string();
    }
    let averaged = if n.average > 1 {
        format!(
            "; averaged over {}: {} {unit} noise-free",
            n.average,
            v(n.noise_free_averaged)
        )
    } else {
        String::new()
    };
    format!(
        "noise: {} rms at the converter over {}; {} {unit} rms, {} {unit} noise-free (6.6 σ){averaged}\n",
        crate::units::format::with_prefix(n.total_v, "V", 3),
        n.enbw_hz
            .map(|b| format!("{} Hz", significant(b, 3)))
            .unwrap_or_else(|| "an unbounded bandwidth".into()),
        v(n.sigma),
        v(n.noise_free),
    )
}

fn dynamics_line(a: &Analysis) -> String {
    let d = &a.dynamics;
    if !d.stated() {
        return "dynamics: no time constant, filter or rate stated\n".to_string();
    }
    let mains = d
        .mains
        .iter()
        .map(|(hz, x)| {
            format!(
                "{} at {} Hz",
                attenuation_db(20.0 * x.log10()),
                trimmed(*hz, 4)
            )
        })
        .collect::<Vec<_>>()
        .join(", ");
    let response = d
        .response_90
        .map(|t| format!("{} s", significant(t, 3)))
        .unwrap_or_else(|| "an unknown time".into());
    let settle = d
        .filter_settling_half_lsb
        .map(|t| format!(" (the filter settles to ½ LSB in {} s)", significant(t, 3)))
        .unwrap_or_default();
    format!("dynamics: 90 % of a step in {response}{settle}; {mains}\n")
}

/// Where to trip each alarm, with the caution a protective function needs.
fn alarms(a: &Analysis, unit: &str, m_unit: &str, v: &dyn Fn(f64) -> String) -> String {
    if a.alarms.is_empty() {
        return String::new();
    }
    let mut t = table();
    t.set_header([
        "alarm",
        "limit",
        "code",
        "guard band",
        "trip at",
        "trip code",
    ]);
    for x in &a.alarms {
        t.add_row([
            x.side.to_string(),
            format!("{} {m_unit}", trimmed(from_si(x.at, m_unit), 6)),
            x.code.to_string(),
            format!("± {} {unit}", v(x.guard_band)),
            format!("{} {m_unit}", trimmed(from_si(x.trip_at, m_unit), 6)),
            trip_code(x.trip_code, x.trip_beyond()),
        ]);
    }
    format!(
        "\nalarms: where to trip so the true value cannot pass the limit unseen\n\n{}{}",
        lines(&t),
        "\n\ncaution: Catena is a design aid, not a safety assessment. Where an alarm or trip protects people\n\
         or property, its design and verification follow the applicable functional-safety standard, local\n\
         codes and licensed practice.\n"
    )
}

/// The largest sources at the budget's worst point, each with its GUM
/// share and, when Monte Carlo ran, its share of the Monte Carlo variance.
fn sources_table(a: &Analysis, worst: &Point, v: &dyn Fn(f64) -> String) -> String {
    let index = a
        .budget
        .points
        .iter()
        .position(|p| std::ptr::eq(p, worst))
        .unwrap_or(0);
    let with_mc = a.shares.is_some();
    let mut sources = table();
    let mut header = vec!["source", "kind", "limit effect", "standard", "GUM share"];
    if with_mc {
        header.push("Monte Carlo share");
    }
    sources.set_header(header);
    let percent = |x: f64| format!("{:.1} %", x * 100.0);
    let floor = a.monte_carlo_share_floor();
    let mc_percent = |x: f64| match floor {
        Some(f) if x < f => format!("< {}", percent(crate::analysis::shares::floor_shown(f))),
        _ => percent(x),
    };
    for c in worst.contributions.iter().take(TOP_SOURCES) {
        let mut row = vec![
            c.id.to_string(),
            c.kind.to_string(),
            format!("± {}", v(c.worst)),
            v(c.standard),
            percent(worst.gum_share(c)),
        ];
        if with_mc {
            row.push(
                a.monte_carlo_share(index, c.id.as_str())
                    .map_or("—".into(), mc_percent),
            );
        }
        sources.add_row(row);
    }
    let mut out = lines(&sources);
    if let Some(shares) = a.shares.as_ref().and_then(|s| s.get(index)) {
        let sum: f64 = shares.iter().map(|s| s.share).sum();
        // Interaction between sources only takes the sum under 100 %;
        // over it, the estimates' scatter is all there is to say.
        let why = if sum > 1.0 {
            "over 100 % by estimation scatter,\nwhich shrinks as 1/√N (interaction between sources takes it under)"
        } else {
            "short of 100 % by the interaction between sources, off it either way\nby estimation scatter, which shrinks as 1/√N"
        };
        out.push_str(&format!(
            "\n\nMonte Carlo shares: first-order indices from the same trials (correlation ratio),\n\
             summing to {}: {why}",
            percent(sum)
        ));
    }
    if let Some(f) = floor {
        out.push_str(&format!(
            ";\na share under {} (twice the scatter of a source with no effect at {} trials)\n\
             cannot be told from none",
            percent(crate::analysis::shares::floor_shown(f)),
            a.trials
        ));
    }
    out.push_str("\n\n");
    out
}

/// Whether Monte Carlo validates GUM's interval (JCGM 101 §8), over all
/// points.
fn gum_validation_line(checks: &[GumCheck], unit: &str, v: &dyn Fn(f64) -> String) -> String {
    let failed: Vec<&GumCheck> = checks.iter().filter(|c| !c.validated).collect();
    if failed.is_empty() {
        return format!(
            "  GUM validated at all {} points: its 95 % interval ± 1.96 u matches Monte Carlo's ends\n  \
             within their numerical width (at 99.9 %) and δ of u (JCGM 101 §8)\n",
            checks.len()
        );
    }
    let off = failed
        .iter()
        .map(|c| c.d_low.max(c.d_high))
        .fold(0.0, f64::max);
    format!(
        "  use Monte Carlo at {} of {} points: GUM's 95 % interval ± 1.96 u is off Monte Carlo's ends\n  \
         by up to {} {unit}, beyond their numerical width (at 99.9 %) and δ of u (JCGM 101 §8)\n",
        failed.len(),
        checks.len(),
        v(off)
    )
}

/// The words for one point's, or one ambient's, GUM validation.
fn gum_verdict(validated: bool) -> String {
    if validated {
        "GUM validated".into()
    } else {
        "use Monte Carlo".into()
    }
}

/// The totals at every point of the budget.
fn per_point_table(a: &Analysis, m_unit: &str, v: &dyn Fn(f64) -> String) -> Table {
    let mut totals = table();
    let mut header = vec![
        "measurand".to_string(),
        "ambient".into(),
        "worst case".into(),
        format!("GUM (k = {})", trimmed(a.budget.k, 3)),
    ];
    if a.monte_carlo.is_some() {
        header.push("Monte Carlo 95 %".into());
    }
    if a.gum_checks.is_some() {
        header.push("GUM check".into());
    }
    totals.set_header(header);
    for (i, p) in a.budget.points.iter().enumerate() {
        let mut row = vec![
            format!("{} {m_unit}", trimmed(from_si(p.measurand, m_unit), 6)),
            format!("{} degC", trimmed(from_si(p.ambient, "degC"), 4)),
            format!("± {}", v(p.worst_case)),
            format!("± {}", v(p.gum_expanded)),
        ];
        if let Some(m) = &a.monte_carlo {
            row.push(format!("{} .. {}", v(m[i].low), v(m[i].high)));
        }
        if let Some(g) = &a.gum_checks {
            row.push(gum_verdict(g[i].validated));
        }
        totals.add_row(row);
    }
    totals
}

/// Per ambient, each method's worst point over the measurand range and
/// where it lies.
fn summary_table(a: &Analysis, m_unit: &str, v: &dyn Fn(f64) -> String) -> Table {
    let mut t = table();
    let mut header = vec![
        "ambient".to_string(),
        "worst case, largest".into(),
        format!("GUM (k = {}), largest", trimmed(a.budget.k, 3)),
    ];
    if a.monte_carlo.is_some() {
        header.push("Monte Carlo 95 %, widest".into());
    }
    if a.gum_checks.is_some() {
        header.push("GUM check".into());
    }
    t.set_header(header);
    let at = |i: usize| {
        let m = a.budget.points[i].measurand;
        format!("at {} {m_unit}", trimmed(from_si(m, m_unit), 6))
    };
    let mut ambients: Vec<f64> = a.budget.points.iter().map(|p| p.ambient).collect();
    ambients.dedup();
    for ambient in ambients {
        let here: Vec<usize> = (0..a.budget.points.len())
            .filter(|&i| a.budget.points[i].ambient == ambient)
            .collect();
        let largest = |key: &dyn Fn(usize) -> f64| {
            here.iter()
                .copied()
                .max_by(|&x, &y| key(x).total_cmp(&key(y)).then(y.cmp(&x)))
                .unwrap_or(0)
        };
        let worst = largest(&|i| a.budget.points[i].worst_case);
        let gum = largest(&|i| a.budget.points[i].gum_expanded);
        let mut row = vec![
            format!("{} degC", trimmed(from_si(ambient, "degC"), 4)),
            format!("± {} {}", v(a.budget.points[worst].worst_case), at(worst)),
            format!("± {} {}", v(a.budget.points[gum].gum_expanded), at(gum)),
        ];
        if let Some(m) = &a.monte_carlo {
            let widest = largest(&|i| m[i].low.abs().max(m[i].high.abs()));
            row.push(format!(
                "{} .. {} {}",
                v(m[widest].low),
                v(m[widest].high),
                at(widest)
            ));
        }
        if let Some(g) = &a.gum_checks {
            row.push(gum_verdict(here.iter().all(|&i| g[i].validated)));
        }
        t.add_row(row);
    }
    t
}

/// Each requirement against what the chain achieves.
fn verdict_table(a: &Analysis, unit: &str, v: &dyn Fn(f64) -> String) -> Table {
    let mut verdicts = table();
    verdicts.set_header(["requirement", "required", "achieved", "method", "verdict"]);
    for r in &a.verdicts {
        let (req, got) = match r.kind {
            RequirementKind::Accuracy(_) => (
                format!("± {} {unit}", v(r.limit)),
                format!("± {} {unit}", v(r.achieved)),
            ),
            RequirementKind::Resolution => (
                format!("{} {unit}", v(r.limit)),
                format!("{} {unit}", v(r.achieved)),
            ),
            RequirementKind::Response => (
                format!("{} s", significant(r.limit, 3)),
                format!("{} s", significant(r.achieved, 3)),
            ),
            RequirementKind::Rejection => (
                format!("{} dB", significant(20.0 * r.limit.log10(), 3)),
                attenuation_db(20.0 * r.achieved.log10()),
            ),
        };
        verdicts.add_row([
            r.kind.word().to_string(),
            req,
            got,
            method(&r.method.word()),
            if r.pass { "pass".into() } else { "FAIL".into() },
        ]);
    }
    verdicts
}

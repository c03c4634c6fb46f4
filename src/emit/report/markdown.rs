//! The report as Markdown for pull-request comments and the repository:
//! tables only (a comment's limit is 65,536 characters), with the plots
//! linked as SVG files when they are written beside it.

use std::fmt::Write;

use super::fmt::{method, plain, position, share, share_or_floor, si, trip_code, value};
use super::model::{BudgetSection, ChainReport, Checklist, Contributor, Report, Verdict};
use crate::analysis::checklist::PROTECTS;
use crate::analysis::checklist::{LimitStatus, ReviewKind};
use crate::units::format::{attenuation_db, codes};

/// A plot file beside the Markdown: its id (`error`, `contributors`,
/// `headroom`, `path`, `step`, `frequency`, `diagram`, `codes`), title and
/// file name.
pub struct PlotLink {
    pub id: &'static str,
    pub title: String,
    pub file: String,
}

/// `links[i]` are chain `i`'s plot files (empty: none written).
pub fn render(report: &Report, links: &[Vec<PlotLink>]) -> String {
    let mut out = String::new();
    let p = &report.provenance;
    let _ = writeln!(out, "# Review report: `{}`\n", p.spec);
    if report.chains.len() > 1 {
        summary_table(&mut out, report);
    }
    for (i, c) in report.chains.iter().enumerate() {
        chain(&mut out, c, links.get(i).map_or(&[][..], Vec::as_slice));
    }
    provenance(&mut out, report);
    out
}

fn summary_table(out: &mut String, report: &Report) {
    out.push_str(
        "| chain | verdict | requirements met | limits flagged | faults firmware cannot see | largest GUM expanded |\n",
    );
    out.push_str("| --- | --- | --- | --- | --- | --- |\n");
    for r in &report.summary {
        let _ = writeln!(
            out,
            "| `{}` | {} | {} of {} | {} | {} | {} |",
            r.chain,
            if r.error.is_some() {
                "not analysed"
            } else if r.pass {
                "pass"
            } else {
                "**fail**"
            },
            r.requirements_met,
            r.requirements,
            r.limits_flagged,
            r.hidden_faults,
            value(r.gum_expanded, &r.unit)
        );
    }
    out.push('\n');
}

fn links_for<'a>(links: &'a [PlotLink], id: &str) -> impl Iterator<Item = &'a PlotLink> + 'a {
    let id = id.to_string();
    links.iter().filter(move |l| l.id == id)
}

fn plot_links(out: &mut String, links: &[PlotLink], id: &str) {
    for l in links_for(links, id) {
        let _ = writeln!(out, "![{}]({})\n", l.title, l.file);
    }
}

fn chain(out: &mut String, c: &ChainReport, links: &[PlotLink]) {
    match &c.title {
        Some(t) => {
            let _ = writeln!(out, "## Chain `{}`: {}\n", c.name, t);
        }
        None => {
            let _ = writeln!(out, "## Chain `{}`\n", c.name);
        }
    }
    if let Some(e) = &c.error {
        let _ = writeln!(out, "Not analysed: {e}.\n");
    }
    verdict(out, c);
    summary(out, c);
    out.push_str("### Block diagram\n\n");
    plot_links(out, links, "diagram");
    out.push_str("| from | to | input | signal |\n| --- | --- | --- | --- |\n");
    for e in &c.diagram.edges {
        let _ = writeln!(
            out,
            "| `{}` | `{}` | {} | {} |",
            e.from, e.to, e.port, e.signal
        );
    }
    out.push('\n');
    if c.error.is_some() {
        cautions(out, c);
        return;
    }
    stages(out, c);
    budget(out, c, links);
    noise(out, c);
    dynamics(out, c, links);
    calibration(out, c);
    faults_and_limits(out, c, links);
    alarms(out, c);
    cautions(out, c);
}

fn verdict(out: &mut String, c: &ChainReport) {
    let v = &c.verdict;
    out.push_str("### Verdict\n\n");
    let _ = writeln!(
        out,
        "**{}**: {} of {} requirements met; limits beyond an end or under the margin: {}; faults firmware cannot see: {}.\n",
        if c.error.is_some() {
            "NOT ANALYSED"
        } else if v.pass {
            "PASS"
        } else {
            "FAIL"
        },
        v.requirements.iter().filter(|r| r.pass).count(),
        v.requirements.len(),
        v.limits.len(),
        v.faults.len()
    );
    leading_caution(out, c);
    masked_trips(out, v);
    if !v.requirements.is_empty() {
        out.push_str("| requirement | method | required | achieved | margin | where | verdict |\n");
        out.push_str("| --- | --- | --- | --- | --- | --- | --- |\n");
        for r in &v.requirements {
            let at = r.at.map_or(String::new(), |[m, t]| {
                format!(
                    "{}, ambient {}",
                    position(m, &c.measurand_unit),
                    position(t, "degC")
                )
            });
            let _ = writeln!(
                out,
                "| {} | {} | {} | {} | {} | {} | {} |",
                r.name,
                method(&r.method),
                value(r.limit, &r.unit),
                value(r.achieved, &r.unit),
                value(r.margin, &r.unit),
                at,
                if r.pass { "pass" } else { "**fail**" }
            );
        }
        out.push('\n');
    }
    if !v.limits.is_empty() {
        out.push_str("| stage | limit | headroom | |\n| --- | --- | --- | --- |\n");
        for l in &v.limits {
            let _ = writeln!(
                out,
                "| `{}` | {} | {} | {} |",
                l.stage,
                l.limit,
                share(l.headroom),
                if l.beyond {
                    "**beyond its limit**"
                } else {
                    "under margin"
                }
            );
        }
        out.push('\n');
    }
    if !v.faults.is_empty() {
        out.push_str("| stage | fault | firmware sees it |\n| --- | --- | --- |\n");
        for f in &v.faults {
            let _ = writeln!(
                out,
                "| `{}` | {} | **{}** |",
                f.stage,
                cell(&f.condition),
                f.verdict
            );
        }
        out.push('\n');
    }
}

/// The trips a hidden fault can mask, first after the verdict line: each
/// is why a chain whose requirements all pass still fails.
/// A chain that trips is read for its safety first: its caution leads
/// the verdict as well as closing the chain.
fn leading_caution(out: &mut String, c: &ChainReport) {
    if c.cautions.iter().any(|x| x == PROTECTS) {
        let _ = writeln!(out, "**Caution.** {PROTECTS}\n");
    }
}

fn masked_trips(out: &mut String, v: &Verdict) {
    if v.masked_trips.is_empty() {
        return;
    }
    out.push_str("A fault firmware cannot see can keep a trip from ever firing (R672):\n\n");
    out.push_str("| alarm | masked by |\n| --- | --- |\n");
    for t in &v.masked_trips {
        let by: Vec<String> = t
            .masked_by
            .iter()
            .map(|f| format!("`{}` {}", f.stage, cell(&f.condition)))
            .collect();
        let _ = writeln!(
            out,
            "| `alarm {} {}` | {} |",
            t.side,
            position(t.at, &t.measurand_unit),
            by.join("; ")
        );
    }
    out.push('\n');
}

fn summary(out: &mut String, c: &ChainReport) {
    let s = &c.summary;
    out.push_str("### Summary\n\n| | |\n| --- | --- |\n");
    let _ = writeln!(
        out,
        "| measurand | {} {} .. {} |",
        s.quantity,
        position(s.range[0], &c.measurand_unit),
        position(s.range[1], &c.measurand_unit)
    );
    let _ = writeln!(
        out,
        "| ambient | {} .. {}, reference {} |",
        position(s.ambient[0], "degC"),
        position(s.ambient[1], "degC"),
        position(s.reference, "degC")
    );
    let _ = writeln!(out, "| stages | {} |", s.stages);
    if !s.signal_path.is_empty() {
        let path: Vec<String> = s.signal_path.iter().map(|n| format!("`{n}`")).collect();
        let _ = writeln!(out, "| signal path | {} |", path.join(" → "));
    }
    out.push('\n');
}

fn stages(out: &mut String, c: &ChainReport) {
    out.push_str("### Stages\n\n");
    out.push_str("| stage | kind | parameters | output over the ranges | gain per ");
    let _ = writeln!(out, "{} | headroom |", c.measurand_unit);
    out.push_str("| --- | --- | --- | --- | --- | --- |\n");
    for s in &c.stages {
        let range = s.signal.map_or(String::new(), |[lo, hi]| {
            format!("{} .. {}", si(lo, &s.signal_unit), si(hi, &s.signal_unit))
        });
        let gain = s.gain.map_or(String::new(), |g| si(g, &s.signal_unit));
        let headroom: Vec<String> = s
            .headroom
            .iter()
            .map(|h| format!("{} {}", h.limit, share(h.headroom)))
            .collect();
        let params: Vec<String> = s
            .parameters
            .iter()
            .map(|p| format!("`{}`", cell(p)))
            .collect();
        let _ = writeln!(
            out,
            "| `{}` | {} | {} | {} | {} | {} |",
            s.stage,
            s.kind,
            params.join("<br>"),
            range,
            gain,
            headroom.join("<br>")
        );
    }
    out.push('\n');
}

/// Text safe inside a table cell.
fn cell(s: &str) -> String {
    s.replace('|', "\\|").replace('`', "'")
}

/// Our own sentences in a cell: their code spans are kept.
fn prose(s: &str) -> String {
    s.replace('|', "\\|")
}

/// What a "< floor" share means, where one is shown.
fn share_floor_note(out: &mut String, b: &BudgetSection) {
    let Some(floor) = b.monte_carlo_share_floor else {
        return;
    };
    let under = |x: &Contributor| x.monte_carlo_share.is_some_and(|s| s < floor);
    if b.contributors.iter().any(under) {
        let _ = writeln!(
            out,
            "\nA Monte Carlo share shown as {} cannot be told from none at these trials: under twice the scatter of a source with no effect.",
            share_or_floor(0.0, Some(floor))
        );
    }
}

fn budget(out: &mut String, c: &ChainReport, links: &[PlotLink]) {
    let b = &c.budget;
    let u = &c.unit;
    out.push_str("### Error budget\n\n");
    plot_links(out, links, "error");
    out.push_str("| method | largest error | at | ambient |\n| --- | --- | --- | --- |\n");
    for t in &b.totals {
        let _ = writeln!(
            out,
            "| {} | ± {} | {} | {} |",
            method(&t.method),
            value(t.value, u),
            position(t.measurand, &c.measurand_unit),
            position(t.ambient, "degC")
        );
    }
    let _ = writeln!(
        out,
        "\nLargest contributors at {}, ambient {}:\n",
        position(b.worst_at[0], &c.measurand_unit),
        position(b.worst_at[1], "degC")
    );
    plot_links(out, links, "contributors");
    out.push_str(
        "| source | kind | worst case | standard uncertainty | GUM share | Monte Carlo share |\n",
    );
    out.push_str("| --- | --- | --- | --- | --- | --- |\n");
    for x in &b.contributors {
        let _ = writeln!(
            out,
            "| `{}` | {} | ± {} | {} | {} | {} |",
            x.id,
            x.kind,
            value(x.contribution, u),
            value(x.standard_uncertainty, u),
            share(x.gum_share),
            x.monte_carlo_share
                .map_or(String::new(), |x| share_or_floor(
                    x,
                    b.monte_carlo_share_floor
                ))
        );
    }
    share_floor_note(out, b);
    let _ = writeln!(out, "\n{}:\n", super::fmt::path_title(c));
    plot_links(out, links, "path");
    out.push_str("| stage | value | gain | error |\n| --- | --- | --- | --- |\n");
    for p in &b.path {
        let _ = writeln!(
            out,
            "| `{}` | {} | {} per {} | {} |",
            p.stage,
            si(p.value, &p.signal_unit),
            si(p.gain, &p.signal_unit),
            c.measurand_unit,
            value(p.error, u)
        );
    }
    for pair in b.path.windows(2) {
        if let Some(x) = &pair[1].cancels {
            let stages = [pair[0].stage.as_str(), pair[1].stage.as_str()];
            let note =
                super::fmt::cancel_note(stages, &x.source, &value(x.before, u), &value(x.after, u));
            let _ = writeln!(out, "\n{note}.");
        }
    }
    points(out, c);
}

fn points(out: &mut String, c: &ChainReport) {
    let b = &c.budget;
    let u = &c.unit;
    // A column no point fills (no Monte Carlo, no calibration) is left
    // out rather than shown empty.
    let monte_carlo = b.points.iter().any(|p| p.monte_carlo_95.is_some());
    let validated = b.points.iter().any(|p| p.gum_validated.is_some());
    let calibrated = b
        .points
        .iter()
        .any(|p| p.gum_expanded_uncalibrated.is_some());
    let mut heads = vec![c.summary.quantity.to_string(), "ambient".into()];
    heads.extend(["worst case".to_string(), "GUM expanded".into()]);
    for (shown, head) in [
        (monte_carlo, "Monte Carlo 95 %"),
        (validated, "GUM validated"),
        (calibrated, "without calibration"),
    ] {
        if shown {
            heads.push(head.into());
        }
    }
    out.push_str("\n<details><summary>Every point</summary>\n\n");
    let _ = writeln!(out, "| {} |", heads.join(" | "));
    let _ = writeln!(out, "|{}", " --- |".repeat(heads.len()));
    for p in &b.points {
        let mut cells = vec![
            position(p.measurand, &c.measurand_unit),
            position(p.ambient, "degC"),
            format!("± {}", value(p.worst_case, u)),
            format!("± {}", value(p.gum_expanded, u)),
        ];
        if monte_carlo {
            cells.push(p.monte_carlo_95.map_or(String::new(), |[lo, hi]| {
                format!("{} .. {}", value(lo, ""), value(hi, u))
            }));
        }
        if validated {
            let word = p.gum_validated.map_or("", |v| if v { "yes" } else { "no" });
            cells.push(word.to_string());
        }
        if calibrated {
            cells.push(
                p.gum_expanded_uncalibrated
                    .map_or(String::new(), |x| format!("± {}", value(x, u))),
            );
        }
        let _ = writeln!(out, "| {} |", cells.join(" | "));
    }
    out.push_str("\n</details>\n\n");
}

fn noise(out: &mut String, c: &ChainReport) {
    let n = &c.noise;
    let u = &c.unit;
    out.push_str("### Noise and resolution\n\n");
    if n.terms.is_empty() {
        // Zeros would read as a noiseless chain; the spec said nothing.
        let _ = writeln!(
            out,
            "No stage states its noise, so none is counted; one code is {}.\n",
            value(n.lsb, u)
        );
        return;
    }
    out.push_str("| | |\n| --- | --- |\n");
    let _ = writeln!(
        out,
        "| noise bandwidth | {} |",
        n.enbw_hz.map_or("unbounded".to_string(), |b| si(b, "Hz"))
    );
    let _ = writeln!(
        out,
        "| total at the converter input | {} rms |",
        si(n.total_v_rms, "V")
    );
    let _ = writeln!(
        out,
        "| referred to the measurand | {} rms, {} averaged over {} |",
        value(n.sigma, u),
        value(n.sigma_averaged, u),
        n.average
    );
    let _ = writeln!(
        out,
        "| noise-free resolution | {}, {} averaged |",
        value(n.noise_free, u),
        value(n.noise_free_averaged, u)
    );
    let _ = writeln!(out, "| one code | {} |", value(n.lsb, u));
    out.push_str("\n| noise term | at the converter input | referred |\n| --- | --- | --- |\n");
    for t in &n.terms {
        let _ = writeln!(
            out,
            "| `{}` | {} | {} |",
            t.id,
            t.v_rms
                .map_or("acts on the measurand".to_string(), |v| format!(
                    "{} rms",
                    si(v, "V")
                )),
            value(t.referred, u)
        );
    }
    out.push('\n');
}

fn dynamics(out: &mut String, c: &ChainReport, links: &[PlotLink]) {
    let d = &c.dynamics;
    out.push_str("### Dynamics and mains rejection\n\n");
    plot_links(out, links, "step");
    plot_links(out, links, "frequency");
    out.push_str("| | |\n| --- | --- |\n");
    // Nothing that takes time is stated: the model answers at once,
    // which says nothing of the real chain.
    let timeless = d.sensor_time_constant_s <= 0.0 && d.rate_hz.is_none();
    let _ = writeln!(
        out,
        "| step response to 90 % | {}{} |",
        match d.response_90_s {
            None => "unbounded".to_string(),
            Some(t) if t <= 0.0 && timeless => {
                "not modelled: no stage states a time constant or a conversion rate".to_string()
            }
            Some(t) => value(t, "s"),
        },
        d.requirement_s
            .map_or(String::new(), |r| format!(" (required {})", value(r, "s")))
    );
    let _ = writeln!(
        out,
        "| sensor time constant | {} |",
        if d.sensor_time_constant_s > 0.0 {
            value(d.sensor_time_constant_s, "s")
        } else {
            "not stated".to_string()
        }
    );
    if let Some(r) = d.rate_hz {
        let _ = writeln!(out, "| conversion rate | {} |", si(r, "Hz"));
    }
    if let Some(n) = d.notch_hz {
        let _ = writeln!(out, "| converter notch | {} |", si(n, "Hz"));
    }
    let _ = writeln!(out, "| conversions averaged | {} |", d.average);
    for [hz, db] in &d.mains {
        let _ = writeln!(
            out,
            "| attenuation at {} Hz | {} |",
            plain(*hz),
            attenuation_db(*db)
        );
    }
    if let Some(db) = d.at_rate_db {
        let _ = writeln!(
            out,
            "| analog filter at the conversion rate | {} |",
            attenuation_db(db)
        );
    }
    out.push('\n');
}

fn calibration(out: &mut String, c: &ChainReport) {
    let Some(cal) = &c.calibration else {
        return;
    };
    let u = &c.unit;
    let at: Vec<String> = cal
        .at
        .iter()
        .map(|x| position(*x, &c.measurand_unit))
        .collect();
    let _ = writeln!(
        out,
        "### Calibration\n\n{} calibration at {}: the largest GUM expanded uncertainty at each ambient.\n",
        if cal.kind == "offset" { "Offset" } else { "Two-point" },
        at.join(" and ")
    );
    out.push_str("| ambient | before | after |\n| --- | --- | --- |\n");
    for r in &cal.by_ambient {
        let _ = writeln!(
            out,
            "| {} | ± {} | ± {} |",
            position(r.ambient, "degC"),
            value(r.before, u),
            value(r.after, u)
        );
    }
    out.push('\n');
}

/// The checklist's rows: the valid code window and every fault's codes
/// against it, every limit's reach and headroom, the review items.
fn faults_and_limits(out: &mut String, c: &ChainReport, links: &[PlotLink]) {
    out.push_str("### Faults and limits\n\n");
    if let Some(list) = &c.faults {
        faults(out, list, links);
    }
    limits(out, c, links);
    if let Some(list) = c.faults.as_ref().filter(|l| !l.review.is_empty()) {
        out.push_str(
            "#### To verify at review and bring-up\n\n| item | what to check |\n| --- | --- |\n",
        );
        for r in &list.review {
            let kind = match r.kind {
                ReviewKind::Leads => "leads",
                ReviewKind::SelfHeating => "self-heating",
                ReviewKind::Calibration => "calibration",
                ReviewKind::Warning => "warning",
            };
            let _ = writeln!(out, "| {kind} | {} |", prose(&r.text));
        }
        out.push('\n');
    }
}

fn faults(out: &mut String, list: &Checklist, links: &[PlotLink]) {
    let w = &list.window;
    let _ = writeln!(
        out,
        "The healthy chain's codes lie in {} .. {} ({}, noise {}σ = {} included); a fault is detectable when all its codes lie outside that window.\n",
        w.low,
        w.high,
        w.code_kind(),
        plain(w.k),
        codes(plain(w.k * w.noise_sigma_codes))
    );
    if let Some(each) = w.channel_windows() {
        let _ = writeln!(out, "{each}\n");
    }
    plot_links(out, links, "codes");
    if list.faults.is_empty() {
        out.push_str("No stage of this chain declares a fault.\n\n");
        return;
    }
    out.push_str("| stage | fault | codes | firmware sees it | threshold | action |\n| --- | --- | --- | --- | --- | --- |\n");
    for f in &list.faults {
        let codes = match (f.codes, &f.reason) {
            (Some(codes), _) => codes.words(),
            (None, Some(why)) => format!("none ({why})"),
            (None, None) => "none".to_string(),
        };
        let verdict = if f.hidden() {
            format!("**{}**", f.verdict)
        } else {
            f.verdict.to_string()
        };
        let _ = writeln!(
            out,
            "| `{}` | {} | {} | {verdict} | {} | {} |",
            f.stage,
            cell(f.condition),
            cell(&codes),
            f.threshold
                .as_deref()
                .map_or(String::new(), |t| format!("`{t}`")),
            prose(&f.action)
        );
    }
    out.push('\n');
}

fn limits(out: &mut String, c: &ChainReport, links: &[PlotLink]) {
    if c.limits.is_empty() {
        out.push_str("No stage of this chain states a limit.\n\n");
        return;
    }
    plot_links(out, links, "headroom");
    out.push_str(
        "| stage | limit | allowed | reach | headroom | |\n| --- | --- | --- | --- | --- | --- |\n",
    );
    let margin = c.faults.as_ref().map(|l| &l.limits);
    for (i, l) in c.limits.iter().enumerate() {
        let end = |x: Option<f64>| x.map_or("—".to_string(), |v| si(v, &l.unit));
        let status = match margin.and_then(|m| m.get(i)).map(|r| r.status) {
            Some(LimitStatus::Beyond) => "**beyond its limit**",
            Some(LimitStatus::UnderMargin) => "under margin",
            Some(LimitStatus::Inside) | None => "",
        };
        let _ = writeln!(
            out,
            "| `{}` | {} | {} .. {} | {} .. {} | {} | {status} |",
            l.stage,
            l.limit,
            end(l.allowed[0]),
            end(l.allowed[1]),
            si(l.reach[0], &l.unit),
            si(l.reach[1], &l.unit),
            share(l.headroom)
        );
    }
    out.push('\n');
}

fn alarms(out: &mut String, c: &ChainReport) {
    if c.alarms.is_empty() {
        return;
    }
    let m = &c.measurand_unit;
    out.push_str("### Alarms and trips\n\n");
    out.push_str("| side | limit | code there | guard band | trip at | trip code | undetected faults that mask it |\n");
    out.push_str("| --- | --- | --- | --- | --- | --- | --- |\n");
    let masks = c.faults.as_ref().map(|l| &l.alarms);
    for (i, a) in c.alarms.iter().enumerate() {
        let masked = match masks.and_then(|m| m.get(i)) {
            Some(row) if row.masked_by.is_empty() => "none".to_string(),
            Some(row) => format!("**{}**", row.masked_by.join(", ")),
            None => "not evaluated".to_string(),
        };
        let _ = writeln!(
            out,
            "| {} | {} | {} | ± {} | {} | {} | {} |",
            a.side,
            position(a.at, m),
            a.code,
            value(a.guard_band, &c.unit),
            position(a.trip_at, m),
            trip_code(a.trip_code, a.trip_code_beyond),
            cell(&masked)
        );
    }
    out.push('\n');
}

fn cautions(out: &mut String, c: &ChainReport) {
    out.push_str("### Cautions\n\n");
    for x in &c.cautions {
        let _ = writeln!(out, "- {x}");
    }
    out.push('\n');
}

fn provenance(out: &mut String, report: &Report) {
    let p = &report.provenance;
    out.push_str("## Provenance\n\n| | |\n| --- | --- |\n");
    let _ = writeln!(out, "| spec | `{}` |", p.spec);
    let _ = writeln!(out, "| tool | {} {} |", p.tool, p.tool_version);
    match (&p.revision, p.modified) {
        (Some(r), Some(m)) => {
            let _ = writeln!(
                out,
                "| spec revision | `{r}`{} |",
                if m { ", working copy differs" } else { "" }
            );
        }
        _ => out.push_str("| spec revision | not in a git repository |\n"),
    }
    let _ = writeln!(
        out,
        "| Monte Carlo | {} trials a point, seed {} |",
        p.trials, p.seed
    );
    let _ = writeln!(
        out,
        "| budget points | {} across the measurand range |",
        p.points
    );
    let _ = writeln!(out, "| headroom margin | {} |", share(p.margin));
    if let Some(t) = &p.timestamp {
        let _ = writeln!(out, "| made | {t} |");
    }
}

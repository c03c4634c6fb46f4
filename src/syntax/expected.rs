//! pest errors in the user's words. Every grammar rule has a readable
//! description here (the match is exhaustive, so a new rule must get one);
//! nobody reading a diagnostic ever sees a rule name.

use std::sync::Arc;

use pest::error::{Error, ErrorVariant, InputLocation};

use super::ast::{SettingKind, StageKind};
use super::grammar::Rule;
use crate::diagnostics::{Code, Finding, SourceFile, Span};

fn describe(rule: Rule) -> Option<&'static str> {
    Some(match rule {
        Rule::EOI => "the end of the line",
        Rule::file | Rule::top_line => "a `use` line or a `chain` block",
        Rule::use_decl | Rule::kw_use => "`use \"parts.yaml\"`",
        Rule::chain | Rule::kw_chain | Rule::chain_head => "a `chain` block",
        Rule::setting | Rule::setting_kw => "a setting such as `measurand`",
        Rule::stage | Rule::stage_kind | Rule::stage_head => "a stage such as `sensor probe {`",
        Rule::part_ref => "`: part_name`",
        Rule::track | Rule::kw_track => {
            "a tracking group such as `track pair: r1, r2 ratio ± 0.01 %`"
        }
        Rule::track_members => "the stages of a tracking group, separated by `,`",
        Rule::param | Rule::param_line => "a parameter line",
        Rule::chain_line => "a statement",
        Rule::edge | Rule::endpoint => "an edge such as `a -> b`",
        Rule::arrow | Rule::wrong_arrow => "`->`",
        Rule::tolerance | Rule::sym_tol | Rule::asym_tol => "a tolerance such as `± 0.1 %`",
        Rule::plus_minus | Rule::wrong_plus_minus => "`±`",
        Rule::kw_normal => "`normal`",
        Rule::range => "a range `lo .. hi`",
        Rule::quantity | Rule::unsigned_quantity | Rule::number | Rule::unsigned_number => {
            "a number"
        }
        Rule::unit | Rule::unit_factor | Rule::unit_symbol | Rule::unit_reserved => {
            "a unit such as `mV`"
        }
        Rule::word | Rule::ident => "a name",
        Rule::comma => "`,`",
        Rule::string | Rule::string_inner => "a string in quotes",
        // Never expected by name: layout, recovery and grouping rules.
        Rule::WHITESPACE
        | Rule::COMMENT
        | Rule::line_end
        | Rule::terminator
        | Rule::top_item
        | Rule::chain_item
        | Rule::stage_item
        | Rule::edge_arrow
        | Rule::value
        | Rule::ident_start
        | Rule::ident_char
        | Rule::bad_text
        | Rule::bad_block
        | Rule::bad_top_line
        | Rule::bad_chain_line
        | Rule::bad_param_line => return None,
    })
}

const VALUE_RULES: &[Rule] = &[
    Rule::tolerance,
    Rule::range,
    Rule::quantity,
    Rule::word,
    Rule::string,
    Rule::comma,
];

/// Converts a pest error on `input` (which starts at `base` in `file`).
pub fn explain_parse_error(
    file: &Arc<SourceFile>,
    base: usize,
    input: &str,
    error: &Error<Rule>,
) -> Finding {
    let pos = match error.location {
        InputLocation::Pos(p) => p,
        InputLocation::Span((s, _)) => s,
    };
    let pos = pos.min(input.len());
    let rest = &input[pos..];
    let found: String = rest
        .chars()
        .take_while(|c| !c.is_whitespace())
        .take(20)
        .collect();
    let found_len = found.len().max(usize::from(!rest.is_empty()));
    let what = if rest.trim().is_empty() {
        "the line ends".to_string()
    } else {
        format!("unexpected `{found}`")
    };
    let expected = match &error.variant {
        ErrorVariant::ParsingError { positives, .. } => expected_list(positives),
        ErrorVariant::CustomError { message } => message.clone(),
    };
    let message = if expected.is_empty() {
        what
    } else {
        format!("{what}; expected {expected}")
    };
    let after = input[..pos].split_whitespace().last().map(str::to_string);
    let label = match &after {
        Some(prev) if rest.trim().is_empty() => format!("something is missing after `{prev}`"),
        _ => "not expected here".to_string(),
    };
    let at = base + pos;
    let finding =
        Finding::new(Code::S001, file, message).label(Span::new(at, at + found_len), label);
    match unit_split_by_space(&input[..pos], &found) {
        Some(whole) => finding.help(format!("a unit is written without spaces: `{whole}`")),
        None => finding,
    }
}

/// The unit `before` and `found` spell together, where a space split it
/// before a `/` (`% /K`, `uV /K`): the value then ends at the space.
fn unit_split_by_space(before: &str, found: &str) -> Option<String> {
    if !found.starts_with('/') || !before.ends_with(char::is_whitespace) {
        return None;
    }
    let unit = before.split_whitespace().last()?;
    let is_unit = unit
        .chars()
        .all(|c| c.is_alphabetic() || c == '%' || c == '°');
    is_unit.then(|| format!("{unit}{found}"))
}

fn expected_list(positives: &[Rule]) -> String {
    let values = positives.iter().filter(|r| VALUE_RULES.contains(r)).count();
    let mut items: Vec<&str> = Vec::new();
    if values >= 3 {
        items.push("a value (a number with its unit, a word, `± x` or `lo .. hi`)");
    }
    for rule in positives {
        let part_of_value = matches!(
            rule,
            Rule::number
                | Rule::unsigned_number
                | Rule::unit
                | Rule::unit_factor
                | Rule::unit_symbol
        );
        if values >= 3 && (VALUE_RULES.contains(rule) || part_of_value) {
            continue;
        }
        if let Some(d) = describe(*rule) {
            if !items.contains(&d) {
                items.push(d);
            }
        }
    }
    match items.len() {
        0 => String::new(),
        1 => items[0].to_string(),
        n => format!("{} or {}", items[..n - 1].join(", "), items[n - 1]),
    }
}

/// Sharper messages for the mistakes people make most, judged from the
/// swallowed line itself.
pub fn refine(finding: Finding, anchored: Rule, head: &str, base: usize) -> Finding {
    let first = head.split_whitespace().next().unwrap_or("");
    let first_span = {
        let start = base + (head.len() - head.trim_start().len());
        Span::new(start, start + first.len())
    };
    let is_stage = StageKind::from_keyword(first).is_some();
    let is_setting = SettingKind::from_keyword(first).is_some() || first == "track";
    match anchored {
        // A malformed `track` line also fails as an edge from a stage
        // called `track`; say what the line was meant to be.
        Rule::chain_line if first == "track" && !head.contains("->") => Finding {
            message: "a `track` line names its group, then its stages after a `:`".into(),
            ..finding
        }
        .help("write `track name: a, b ratio ± 0.02 %`, optionally followed by `tracking 2 ppm/K`"),
        Rule::top_line if is_stage || is_setting || head.contains("->") => {
            let mut f = Finding::new(
                Code::S011,
                &finding.file,
                format!("`{first}` must be inside a `chain` block"),
            )
            .label(first_span, "outside any chain")
            .help("wrap stages, settings and edges in `chain name { ... }`");
            f.labels.truncate(1);
            f
        }
        // A line that starts with its right keyword (`chain a °{`) is
        // wrong further on, where the parser's own finding points.
        Rule::top_line if matches!(first, "chain" | "use") => finding,
        Rule::top_line | Rule::chain_line if !is_stage && !is_setting && !head.contains("->") => {
            let mut candidates: Vec<&str> = StageKind::ALL.iter().map(|k| k.keyword()).collect();
            candidates.extend(SettingKind::ALL.iter().map(|k| k.keyword()));
            candidates.push("track");
            if anchored == Rule::top_line {
                candidates = vec!["chain", "use"];
            }
            let help = crate::diagnostics::did_you_mean_or(
                first,
                candidates.iter().copied(),
                || {
                    if anchored == Rule::chain_line {
                        "a chain holds settings (`measurand`, `require`, ...), stages (`sensor name { ... }`) and edges (`a -> b`); parameter lines go inside a stage".to_string()
                    } else {
                        "a file holds `use \"parts.yaml\"` lines and `chain name { ... }` blocks"
                            .to_string()
                    }
                },
            );
            Finding::new(
                Code::S001,
                &finding.file,
                format!("`{first}` does not start a statement"),
            )
            .label(first_span, "not a statement keyword")
            .help(help)
        }
        _ => finding,
    }
}

//! Reading `catena.yaml`: every key is known or reported, every value is
//! checked and turned into SI, and each mistake points at its place.

use std::path::Path;
use std::sync::Arc;

use serde_yaml::Value;

use super::place::locate;
use super::{relaxable, Config, Level, Set};
use crate::analysis::report::MAX_TRIALS;
use crate::diagnostics::{backticked, did_you_mean, did_you_mean_or};
use crate::diagnostics::{Code, Finding, SourceFile, Span};
use crate::units::format::to_si;
use crate::units::{parse_unit, Dim};

const KEYS: &[&str] = &[
    "rules",
    "ambient",
    "reference",
    "margin",
    "monte_carlo",
    "parts",
];
const MONTE_CARLO_KEYS: &[&str] = &["trials", "seed"];
const LEVELS: &[&str] = &["allow", "warn", "deny"];

struct Reader<'a> {
    file: &'a Arc<SourceFile>,
    folder: &'a Path,
    config: Config,
}

/// Reads a configuration file's text; `folder` is where its relative paths
/// start.
pub fn read(file: &Arc<SourceFile>, folder: &Path) -> Config {
    let mut r = Reader {
        file,
        folder,
        config: Config {
            file: Some(Arc::clone(file)),
            ..Config::default()
        },
    };
    match serde_yaml::from_str::<Value>(file.text()) {
        Ok(Value::Mapping(map)) => {
            for (key, value) in &map {
                r.top_level(key, value);
            }
        }
        // An empty file sets nothing.
        Ok(Value::Null) => {}
        Ok(_) => r.malformed(Span::new(0, 0), "the top level is not a mapping of keys"),
        Err(e) => {
            let at = e.location().map(|l| offset(file, l.line(), l.column()));
            let message = e.to_string();
            let why = message.split(" at line ").next().unwrap_or(&message);
            r.malformed(
                Span::new(at.unwrap_or(0), at.unwrap_or(0)),
                &format!("not valid YAML: {why}"),
            );
        }
    }
    r.config
}

/// The byte offset of a 1-based line and character column.
fn offset(file: &SourceFile, line: usize, column: usize) -> usize {
    let text = file.text();
    let start: usize = text
        .split_inclusive('\n')
        .take(line.saturating_sub(1))
        .map(str::len)
        .sum();
    let rest = &text[start.min(text.len())..];
    start
        + rest
            .char_indices()
            .nth(column.saturating_sub(1))
            .map(|(b, _)| b)
            .unwrap_or(rest.len())
}

impl Reader<'_> {
    fn top_level(&mut self, key: &Value, value: &Value) {
        let Some(name) = key.as_str() else {
            let span = Span::new(0, 0);
            return self.malformed(span, "a key is not a word");
        };
        match name {
            "rules" => self.rules(value),
            "ambient" => self.ambient(value),
            "reference" => {
                let span = locate(self.file, &["reference"], false);
                if let Some(t) = self.temperature(value, &["reference"]) {
                    self.config.reference = Some(Set { value: t, span });
                }
            }
            "margin" => self.margin(value),
            "monte_carlo" => self.monte_carlo(value),
            "parts" => self.parts(value),
            other => self.unknown(&[other], KEYS),
        }
    }

    fn malformed(&mut self, span: Span, why: &str) {
        let f = Finding::new(
            Code::C801,
            self.file,
            format!(
                "`{}` is not a usable configuration: {why}",
                self.file.name()
            ),
        )
        .label(span, "here")
        .help("a configuration file is a YAML mapping of the keys `catena explain C801` lists");
        self.config.findings.push(f);
    }

    fn unknown(&mut self, path: &[&str], known: &[&str]) {
        let name = path.last().copied().unwrap_or_default();
        let span = locate(self.file, path, true);
        let help = did_you_mean_or(name, known.iter().copied(), || {
            format!("the keys here are {}", backticked(known.iter().copied()))
        });
        let f = Finding::new(
            Code::C802,
            self.file,
            format!("`{name}` is not a configuration key"),
        )
        .label(span, "unknown key")
        .help(help);
        self.config.findings.push(f);
    }

    fn bad(&mut self, path: &[&str], message: String, help: String) {
        let span = locate(self.file, path, false);
        let f = Finding::new(Code::C803, self.file, message)
            .label(span, "this value")
            .help(help);
        self.config.findings.push(f);
    }

    fn rules(&mut self, value: &Value) {
        let Some(map) = value.as_mapping() else {
            return self.bad(
                &["rules"],
                "`rules` is not a mapping of codes".into(),
                "write one code per line: `R602: deny`".into(),
            );
        };
        for (key, level) in map {
            let name = scalar_text(key);
            let Some(code) = crate::diagnostics::Code::parse(&name) else {
                let span = locate(self.file, &["rules", &name], true);
                let near = did_you_mean(&name, Code::ALL.iter().map(|c| c.as_str()));
                let help = match near {
                    Some(n) => format!("did you mean `{n}`? `catena explain` lists the codes"),
                    None => "`catena explain` lists the codes".into(),
                };
                let f = Finding::new(
                    Code::C804,
                    self.file,
                    format!("`{name}` is not a finding code"),
                )
                .label(span, "unknown code")
                .help(help);
                self.config.findings.push(f);
                continue;
            };
            let path = ["rules", name.as_str()];
            let Some(level) = parse_level(level) else {
                let help = format!("a rule is one of {}", backticked(LEVELS.iter().copied()));
                self.bad(
                    &path,
                    format!("`{}` is not a rule for `{name}`", scalar_text(level)),
                    help,
                );
                continue;
            };
            let span = locate(self.file, &path, false);
            if level != Level::Deny && !relaxable(code) {
                let f = Finding::new(Code::C805, self.file, format!("`{}` cannot be relaxed to `{}`", code.as_str(), level.as_str()))
                    .label(span, "relaxed here")
                    .help(format!("{} means the spec is wrong or cannot be evaluated, so nothing after it holds; fix the spec instead (only warnings and `R` verdicts can be relaxed)", code.as_str()));
                self.config.findings.push(f);
                continue;
            }
            self.config.rules.push((code, Set { value: level, span }));
        }
    }

    fn ambient(&mut self, value: &Value) {
        let span = locate(self.file, &["ambient"], false);
        let text = scalar_text(value);
        let ends: Vec<&str> = text.split("..").collect();
        let parsed: Vec<Option<f64>> = ends.iter().map(|e| temperature_of(e.trim())).collect();
        let range = match parsed.as_slice() {
            [Some(t)] => Some((*t, *t)),
            [Some(lo), Some(hi)] if lo <= hi => Some((*lo, *hi)),
            _ => None,
        };
        match range {
            Some(value) => self.config.ambient = Some(Set { value, span }),
            None => self.bad(
                &["ambient"],
                format!("`{text}` is not an ambient range"),
                "write a range of temperatures, low first: `0 degC .. 45 degC`".into(),
            ),
        }
    }

    fn temperature(&mut self, value: &Value, path: &[&str]) -> Option<f64> {
        let text = scalar_text(value);
        let t = temperature_of(&text);
        if t.is_none() {
            self.bad(
                path,
                format!("`{text}` is not a temperature"),
                "write a number and its unit: `25 degC`".into(),
            );
        }
        t
    }

    fn margin(&mut self, value: &Value) {
        let span = locate(self.file, &["margin"], false);
        let text = scalar_text(value);
        let number = text.trim().trim_end_matches('%').trim().parse::<f64>().ok();
        match number.filter(|m| (0.0..50.0).contains(m)) {
            Some(m) => {
                self.config.margin = Some(Set {
                    value: m / 100.0,
                    span,
                })
            }
            None => self.bad(
                &["margin"],
                format!("`{text}` is not a margin"),
                "the margin is a percentage of a limit's span from 0 to 50: `5 %`".into(),
            ),
        }
    }

    fn monte_carlo(&mut self, value: &Value) {
        let Some(map) = value.as_mapping() else {
            return self.bad(
                &["monte_carlo"],
                "`monte_carlo` is not a mapping".into(),
                "write `trials:` and `seed:` under it".into(),
            );
        };
        for (key, v) in map {
            let name = scalar_text(key);
            let path = ["monte_carlo", name.as_str()];
            let span = locate(self.file, &path, false);
            match name.as_str() {
                "trials" => match v.as_u64().filter(|&n| (1..=MAX_TRIALS as u64).contains(&n)) {
                    Some(n) => {
                        self.config.trials = Some(Set {
                            value: n as usize,
                            span,
                        })
                    }
                    None => self.bad(
                        &path,
                        format!("`{}` is not a number of trials", scalar_text(v)),
                        format!("trials are a whole number from 1 to {MAX_TRIALS}"),
                    ),
                },
                "seed" => match v.as_u64() {
                    Some(n) => self.config.seed = Some(Set { value: n, span }),
                    None => self.bad(
                        &path,
                        format!("`{}` is not a seed", scalar_text(v)),
                        "a seed is a whole number from 0 to 2^64 − 1".into(),
                    ),
                },
                other => self.unknown(&["monte_carlo", other], MONTE_CARLO_KEYS),
            }
        }
    }

    fn parts(&mut self, value: &Value) {
        let Some(items) = value.as_sequence() else {
            return self.bad(
                &["parts"],
                "`parts` is not a list of files".into(),
                "write one file per line: `- parts/approved.yaml`".into(),
            );
        };
        let root = crate::model::confinement_root(self.folder);
        for (i, item) in items.iter().enumerate() {
            let index = i.to_string();
            let path = ["parts", index.as_str()];
            let written = scalar_text(item);
            let on_disk = self.folder.join(&written);
            if !on_disk.is_file() {
                self.bad(
                    &path,
                    format!("parts file `{written}` is not there"),
                    "a path is relative to the folder of `catena.yaml`".into(),
                );
            } else if !crate::model::confined(&on_disk, &root) {
                self.bad(
                    &path,
                    format!("parts file `{written}` is outside the repository"),
                    "keep parts files inside the repository that holds `catena.yaml`".into(),
                );
            } else {
                let shown = shown_beside(self.file.name(), &written);
                let span = locate(self.file, &path, false);
                self.config.parts.push(Set {
                    value: (on_disk, shown),
                    span,
                });
            }
        }
    }
}

fn parse_level(v: &Value) -> Option<Level> {
    match v.as_str()? {
        "allow" => Some(Level::Allow),
        "warn" => Some(Level::Warn),
        "deny" => Some(Level::Deny),
        _ => None,
    }
}

/// A temperature as `25 degC` or `298.15 K`, in kelvin.
fn temperature_of(text: &str) -> Option<f64> {
    let (number, unit) = text.trim().split_once(char::is_whitespace)?;
    let number: f64 = number.parse().ok()?;
    let unit = unit.trim();
    let parsed = parse_unit(unit).ok()?;
    (parsed.dim == Dim::TEMPERATURE && number.is_finite()).then(|| to_si(number, unit))
}

/// A scalar as written (numbers and words alike); other shapes in brief.
fn scalar_text(v: &Value) -> String {
    match v {
        Value::String(s) => s.clone(),
        Value::Number(n) => n.to_string(),
        Value::Bool(b) => b.to_string(),
        Value::Null => "(nothing)".into(),
        Value::Sequence(_) => "(a list)".into(),
        Value::Mapping(_) => "(a mapping)".into(),
        Value::Tagged(t) => scalar_text(&t.value),
    }
}

/// A parts file's name as findings show it: beside the configuration's.
fn shown_beside(config: &str, written: &str) -> String {
    match Path::new(config).parent() {
        Some(dir) if !dir.as_os_str().is_empty() => {
            dir.join(written).to_string_lossy().into_owned()
        }
        _ => written.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn config(text: &str) -> Config {
        read(&SourceFile::new("catena.yaml", text), Path::new("."))
    }

    fn codes(c: &Config) -> Vec<&'static str> {
        c.findings.iter().map(|f| f.code.as_str()).collect()
    }

    #[test]
    fn values_are_read_into_si() {
        let c = config("rules:\n  R602: deny\n  r611: warn\nambient: 0 degC .. 45 degC\nreference: 20 degC\nmargin: 10 %\nmonte_carlo:\n  trials: 50000\n  seed: 7\n");
        assert!(c.findings.is_empty(), "{:?}", codes(&c));
        assert_eq!(c.level(Code::R602), Some(Level::Deny));
        assert_eq!(c.level(Code::R611), Some(Level::Warn));
        let (lo, hi) = c.ambient.unwrap().value;
        assert!((lo - 273.15).abs() < 1e-9 && (hi - 318.15).abs() < 1e-9);
        assert!((c.reference.unwrap().value - 293.15).abs() < 1e-9);
        assert!((c.margin.unwrap().value - 0.1).abs() < 1e-12);
        assert_eq!(c.trials.unwrap().value, 50_000);
        assert_eq!(c.seed.unwrap().value, 7);
    }

    #[test]
    fn mistakes_are_findings_at_their_place() {
        let c = config("rulse:\n  R602: deny\nrules:\n  R999: deny\n  P301: allow\n  M208: sometimes\nambient: warm\nmonte_carlo:\n  trails: 5\n");
        assert_eq!(codes(&c), ["C802", "C804", "C805", "C803", "C803", "C802"]);
        let first = c.findings.iter().next().unwrap();
        assert_eq!(first.help.as_deref(), Some("did you mean `rules`?"));
        assert_eq!(
            c.file.as_ref().unwrap().line_column(first.primary_offset()),
            (1, 1)
        );
        let last = c.findings.iter().last().unwrap();
        assert_eq!(
            c.file.as_ref().unwrap().line_column(last.primary_offset()),
            (9, 3)
        );
    }

    #[test]
    fn broken_yaml_is_one_finding() {
        let c = config("rules:\n  R602: deny\n bad: [\n");
        assert_eq!(codes(&c), ["C801"]);
    }
}

//! `catena.yaml`: a repository's settings for its specs, found from a
//! spec's folder upwards to the repository's root. It sets rule severities
//! by code, the ambient and reference of chains that state none, the
//! headroom margin, the Monte Carlo trials and seed, and parts files every
//! spec uses. Flags override it. Every key and value is checked; a mistake
//! is a finding that points into the file.

mod lookup;
mod place;
mod values;

use std::path::PathBuf;
use std::sync::Arc;

use crate::diagnostics::{Category, Code, Finding, Findings, Severity, SourceFile, Span};
use crate::model::Defaults;

pub use lookup::find;

/// The configuration file's name.
pub const FILE_NAME: &str = "catena.yaml";

/// What a rule does to a code's findings.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Level {
    /// Not reported.
    Allow,
    /// Reported as a warning: fails only with `--deny warnings`.
    Warn,
    /// Reported as an error.
    Deny,
}

impl Level {
    pub fn as_str(self) -> &'static str {
        match self {
            Level::Allow => "allow",
            Level::Warn => "warn",
            Level::Deny => "deny",
        }
    }
}

/// A value and the place in the configuration file that set it.
#[derive(Clone, Debug, PartialEq)]
pub struct Set<T> {
    pub value: T,
    pub span: Span,
}

/// One configuration file, read and checked. Values it does not set are
/// `None`: the flags or the built-in defaults decide.
#[derive(Clone, Debug, Default)]
pub struct Config {
    /// The file as read, for messages and `--print-config`.
    pub file: Option<Arc<SourceFile>>,
    pub rules: Vec<(Code, Set<Level>)>,
    /// Kelvin.
    pub ambient: Option<Set<(f64, f64)>>,
    /// Kelvin.
    pub reference: Option<Set<f64>>,
    /// A fraction of a limit's span.
    pub margin: Option<Set<f64>>,
    pub trials: Option<Set<usize>>,
    pub seed: Option<Set<u64>>,
    /// Each file's path (from the folder the tool runs in), as written.
    pub parts: Vec<Set<(PathBuf, String)>>,
    /// What is wrong in the file itself.
    pub findings: Findings,
}

impl Config {
    /// Reads the configuration file at `path`, shown as `shown`.
    pub fn load(path: &std::path::Path, shown: &str) -> Config {
        let text = match std::fs::read(path).map(String::from_utf8) {
            Ok(Ok(text)) => text,
            Ok(Err(_)) => return Config::broken(shown, "", "the file is not UTF-8 text"),
            Err(e) => {
                let why = format!("cannot read it: {}", e.kind().to_string().to_lowercase());
                return Config::broken(shown, "", &why);
            }
        };
        let file = SourceFile::new(shown, text);
        let folder = path.parent().map(PathBuf::from).unwrap_or_default();
        values::read(&file, &folder)
    }

    fn broken(shown: &str, text: &str, why: &str) -> Config {
        let file = SourceFile::new(shown, text);
        let mut findings = Findings::new();
        findings.push(
            Finding::new(Code::C801, &file, format!("`{shown}` is not a usable configuration: {why}"))
                .help("a configuration file is UTF-8 YAML: a mapping of the keys `catena explain C801` lists"),
        );
        Config {
            file: Some(file),
            findings,
            ..Config::default()
        }
    }

    /// What the model takes from the configuration.
    pub fn defaults(&self) -> Defaults {
        Defaults {
            ambient: self.ambient.as_ref().map(|s| s.value),
            reference: self.reference.as_ref().map(|s| s.value),
            parts: self.parts.iter().map(|s| s.value.clone()).collect(),
        }
    }

    /// The rule for `code`, if the file sets one.
    pub fn level(&self, code: Code) -> Option<Level> {
        self.rules
            .iter()
            .find(|(c, _)| *c == code)
            .map(|(_, s)| s.value)
    }

    /// Applies the rules: allowed findings go, the others take the
    /// severity their rule gives. A rule never weakens a safety finding
    /// ([`guards_safety`]): the finding stays an error, and R675 on the
    /// rule says so.
    pub fn apply(&self, findings: Vec<Finding>) -> Vec<Finding> {
        let mut kept = Vec::with_capacity(findings.len());
        // Per rule refused: the spec files whose findings it left alone.
        let mut refused: Vec<(Code, Vec<String>)> = Vec::new();
        for mut f in findings {
            let level = self.level(f.code);
            if level.is_some_and(|l| l != Level::Deny) && guards_safety(&f) {
                let name = f.file.name().to_string();
                match refused.iter_mut().find(|(c, _)| *c == f.code) {
                    Some((_, files)) if files.contains(&name) => {}
                    Some((_, files)) => files.push(name),
                    None => refused.push((f.code, vec![name])),
                }
                kept.push(f);
                continue;
            }
            match level {
                Some(Level::Allow) => continue,
                Some(Level::Warn) => f.severity_override = Some(Severity::Warning),
                Some(Level::Deny) => f.severity_override = Some(Severity::Error),
                None => {}
            }
            kept.push(f);
        }
        kept.extend(
            refused
                .iter()
                .filter_map(|(code, files)| self.refusal(*code, files)),
        );
        kept
    }

    /// R675 on the rule for `code`, which `files` kept as errors.
    fn refusal(&self, code: Code, files: &[String]) -> Option<Finding> {
        let file = self.file.as_ref()?;
        let (_, rule) = self.rules.iter().find(|(c, _)| *c == code)?;
        let specs = files
            .iter()
            .map(|f| format!("`{f}`"))
            .collect::<Vec<_>>()
            .join(", ");
        Some(
            Finding::new(
                Code::R675,
                file,
                format!(
                    "`{}: {}` does not weaken {} in a chain with an `alarm` or a `protects` line ({specs}): it stays an error",
                    code.as_str(),
                    rule.value.as_str(),
                    code.as_str()
                ),
            )
            .label(rule.span, "this rule is not applied there")
            .help(format!(
                "a chain that guards people or property is fixed in its design: follow the help of each {} (`catena checklist` lists the fault and its fix); the rule still applies to chains that guard nothing, and a rule may still `deny`",
                code.as_str()
            )),
        )
    }

    /// `path:line` of a value this file set.
    pub fn place(&self, span: Span) -> String {
        match &self.file {
            Some(f) => format!("{}:{}", f.name(), f.line_column(span.start).0),
            None => String::new(),
        }
    }
}

/// Whether a finding is a safety verdict no configuration may weaken: a
/// fault or trip finding (R670 to R674) that is an error because its
/// chain has an `alarm` or says it protects people or property. A chain
/// that says so is judged on its own spec, not on a file folders away.
pub fn guards_safety(f: &Finding) -> bool {
    matches!(
        f.code,
        Code::R670 | Code::R671 | Code::R672 | Code::R673 | Code::R674
    ) && f.severity() == Severity::Error
}

/// Whether a rule may lower `code` below its built-in severity. A verdict
/// on the design (a limit, a requirement) may be relaxed by a team that
/// accepts it; an error that means the spec is wrong or cannot be
/// evaluated may not, since nothing after it would be right.
pub fn relaxable(code: Code) -> bool {
    code.severity() == Severity::Warning || code.category() == Category::Design
}

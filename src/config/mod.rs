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
    /// severity their rule gives.
    pub fn apply(&self, findings: Vec<Finding>) -> Vec<Finding> {
        findings
            .into_iter()
            .filter_map(|mut f| {
                match self.level(f.code) {
                    Some(Level::Allow) => return None,
                    Some(Level::Warn) => f.severity_override = Some(Severity::Warning),
                    Some(Level::Deny) => f.severity_override = Some(Severity::Error),
                    None => {}
                }
                Some(f)
            })
            .collect()
    }

    /// `path:line` of a value this file set.
    pub fn place(&self, span: Span) -> String {
        match &self.file {
            Some(f) => format!("{}:{}", f.name(), f.line_column(span.start).0),
            None => String::new(),
        }
    }
}

/// Whether a rule may lower `code` below its built-in severity. A verdict
/// on the design (a limit, a requirement) may be relaxed by a team that
/// accepts it; an error that means the spec is wrong or cannot be
/// evaluated may not, since nothing after it would be right.
pub fn relaxable(code: Code) -> bool {
    code.severity() == Severity::Warning || code.category() == Category::Design
}

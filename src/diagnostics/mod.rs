//! Findings: the one diagnostic type every stage of the pipeline reports
//! through, the registry of stable codes with their `explain` pages, and the
//! renderers (miette's graphical report for people, serde JSON for tools).

mod code;
mod finding;
mod render;
mod source;

pub use code::{Code, Severity};
pub use finding::{Finding, Label};
pub use render::{render_human, render_json, JsonFinding};
pub use source::{SourceFile, Span};

/// Findings of one run, kept in the order they were found; `sorted` gives
/// the stable report order (file, offset, code).
#[derive(Debug, Default, Clone)]
pub struct Findings {
    items: Vec<Finding>,
}

impl Findings {
    pub fn new() -> Self {
        Self::default()
    }

    pub fn push(&mut self, finding: Finding) {
        self.items.push(finding);
    }

    pub fn extend(&mut self, other: Findings) {
        self.items.extend(other.items);
    }

    pub fn is_empty(&self) -> bool {
        self.items.is_empty()
    }

    pub fn len(&self) -> usize {
        self.items.len()
    }

    pub fn has_errors(&self) -> bool {
        self.items.iter().any(|f| f.severity() == Severity::Error)
    }

    pub fn iter(&self) -> impl Iterator<Item = &Finding> {
        self.items.iter()
    }

    /// Stable report order: by file, then position, then code, so output
    /// diffs cleanly whatever order the passes ran in.
    pub fn sorted(mut self) -> Vec<Finding> {
        self.items.sort_by(|a, b| {
            (a.file.name(), a.primary_offset(), a.code, &a.message).cmp(&(
                b.file.name(),
                b.primary_offset(),
                b.code,
                &b.message,
            ))
        });
        self.items.dedup_by(|a, b| {
            a.code == b.code && a.message == b.message && a.primary_offset() == b.primary_offset()
        });
        self.items
    }

    pub fn into_vec(self) -> Vec<Finding> {
        self.items
    }
}

impl IntoIterator for Findings {
    type Item = Finding;
    type IntoIter = std::vec::IntoIter<Finding>;
    fn into_iter(self) -> Self::IntoIter {
        self.items.into_iter()
    }
}

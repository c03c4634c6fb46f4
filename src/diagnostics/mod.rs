//! Findings: the one diagnostic type every stage of the pipeline reports
//! through, the registry of stable codes with their `explain` pages, and the
//! renderers (miette's graphical report for people; JSON, SARIF, workflow
//! commands and one-line `file:line:col:` for tools).

mod code;
mod finding;
mod lines;
mod render;
mod sarif;
mod source;
mod suggest;

pub use code::{Category, Code, Severity};
pub use finding::{Cause, Finding, Label};
pub use lines::{escape_data, escape_property, render_github, render_short};
pub use render::{render_human, render_json, JsonFinding, FINDINGS_SCHEMA_VERSION};
pub use sarif::render_sarif;
pub use source::{SourceFile, Span};
pub use suggest::{backticked, did_you_mean, did_you_mean_or, unknown_word};

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

    pub fn extend(&mut self, other: impl IntoIterator<Item = Finding>) {
        self.items.extend(other);
    }

    pub fn is_empty(&self) -> bool {
        self.items.is_empty()
    }

    pub fn len(&self) -> usize {
        self.items.len()
    }

    pub fn has_errors(&self) -> bool {
        self.error_count() > 0
    }

    pub fn error_count(&self) -> usize {
        self.items
            .iter()
            .filter(|f| f.severity() == Severity::Error)
            .count()
    }

    pub fn iter(&self) -> impl Iterator<Item = &Finding> {
        self.items.iter()
    }

    /// Stable report order: by file, then position, then code, so output
    /// diffs cleanly whatever order the passes ran in; a finding that
    /// follows from another comes right after its cause (root cause
    /// first), in that same order among the cause's other consequences.
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
        causes_first(self.items)
    }

    pub fn into_vec(self) -> Vec<Finding> {
        self.items
    }
}

/// Reorders sorted findings so each consequence follows its cause. A cause
/// that is not among them leaves the finding where it sorted; so does a
/// loop of causes, which has no root to start from.
fn causes_first(items: Vec<Finding>) -> Vec<Finding> {
    // Each finding by what a cause names (the first of equals, as a scan
    // finds it), and each cause's consequences in order: built once, so
    // ordering stays linear in the number of findings.
    let mut by_place: std::collections::HashMap<(code::Code, usize, &str), usize> =
        std::collections::HashMap::with_capacity(items.len());
    for (i, g) in items.iter().enumerate() {
        by_place
            .entry((g.code, g.primary_offset(), g.file.name()))
            .or_insert(i);
    }
    let parent: Vec<Option<usize>> = items
        .iter()
        .enumerate()
        .map(|(i, f)| {
            let cause = f.cause.as_ref()?;
            by_place
                .get(&(cause.code, cause.offset, cause.file.as_str()))
                .copied()
                .filter(|&p| p != i)
        })
        .collect();
    let mut children: Vec<Vec<usize>> = vec![Vec::new(); items.len()];
    for (c, p) in parent.iter().enumerate() {
        if let Some(p) = p {
            children[*p].push(c);
        }
    }
    let mut order = Vec::with_capacity(items.len());
    let mut placed = vec![false; items.len()];
    let roots = (0..items.len()).filter(|&i| parent[i].is_none());
    // Then whatever a loop of causes left unplaced, in sorted order.
    for i in roots.chain(0..items.len()) {
        place(i, &children, &mut placed, &mut order);
    }
    let mut slots: Vec<Option<Finding>> = items.into_iter().map(Some).collect();
    order.into_iter().filter_map(|i| slots[i].take()).collect()
}

/// `i`, then its consequences in sorted order, depth first.
fn place(i: usize, children: &[Vec<usize>], placed: &mut [bool], order: &mut Vec<usize>) {
    if placed[i] {
        return;
    }
    placed[i] = true;
    order.push(i);
    for &child in &children[i] {
        place(child, children, placed, order);
    }
}

impl IntoIterator for Findings {
    type Item = Finding;
    type IntoIter = std::vec::IntoIter<Finding>;
    fn into_iter(self) -> Self::IntoIter {
        self.items.into_iter()
    }
}

#[cfg(test)]
mod tests {
    use super::{Cause, Code, Finding, Findings, SourceFile, Span};

    #[test]
    fn consequences_follow_their_cause() {
        let file = SourceFile::new("a.catena", "0123456789\n0123456789\n");
        let root = Finding::new(Code::P301, &file, "root").label(Span::new(15, 16), "");
        let early = Finding::new(Code::P302, &file, "follows")
            .label(Span::new(2, 3), "")
            .caused_by(Some(Cause::of(&root)));
        let other = Finding::new(Code::M208, &file, "other").label(Span::new(5, 6), "");
        let orphan = Finding::new(Code::M206, &file, "orphan")
            .label(Span::new(1, 2), "")
            .caused_by(Some(Cause::of(
                &Finding::new(Code::M202, &file, "absent").label(Span::new(9, 9), ""),
            )));
        let mut all = Findings::new();
        for f in [early, other, root, orphan] {
            all.push(f);
        }
        let codes: Vec<Code> = all.sorted().iter().map(|f| f.code).collect();
        assert_eq!(codes, [Code::M206, Code::M208, Code::P301, Code::P302]);
    }
}

//! The indices a plan is addressed by. Each is its own type, so a slot
//! cannot be passed where a node is meant, nor the other way round.

/// Index into the parameter values ([`super::Plan::slots`] and the value
/// slices every evaluation reads).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct SlotId(usize);

/// Index into the plan's nodes (and the signals of one evaluation).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct NodeId(usize);

impl SlotId {
    pub const fn new(index: usize) -> Self {
        SlotId(index)
    }

    pub const fn index(self) -> usize {
        self.0
    }

    /// Every slot of a plan with `count` slots, in order.
    pub fn all(count: usize) -> impl DoubleEndedIterator<Item = SlotId> + ExactSizeIterator {
        (0..count).map(SlotId)
    }
}

impl NodeId {
    pub const fn new(index: usize) -> Self {
        NodeId(index)
    }

    pub const fn index(self) -> usize {
        self.0
    }

    /// Every node of a plan with `count` nodes, in evaluation order.
    pub fn all(count: usize) -> impl DoubleEndedIterator<Item = NodeId> + ExactSizeIterator {
        (0..count).map(NodeId)
    }
}

/// An error source's name: a stage's parameter, a tracking group's
/// common part, or a source of the whole chain. Its text
/// (`stage.parameter`, `track:NAME`, `track:NAME:drift`, `noise`) is what
/// people read and what keys the source's Monte Carlo draws, made once;
/// lookups compare the fields, never the text. Names order by their text,
/// as the budget lists sources of equal effect.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SourceName {
    of: Named,
    text: String,
}

/// What a [`SourceName`] names.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Named {
    /// A parameter of the stage whose error sources it is (on a channel,
    /// its converter).
    Param { stage: String, param: String },
    /// A tracking group's common part of its values, or of their drifts.
    Track { group: String, drift: bool },
    /// A source the budget computes from the whole chain rather than from
    /// a slot (its noise, quantization, the conversion's own error).
    Whole(&'static str),
    /// A part several stages' values share by their physics, with no
    /// `track` line: the gauge factor drift of a chain's strain gauges.
    Shared(&'static str),
}

impl SourceName {
    pub fn param(stage: &str, param: &str) -> Self {
        SourceName {
            text: format!("{stage}.{param}"),
            of: Named::Param {
                stage: stage.to_string(),
                param: param.to_string(),
            },
        }
    }

    /// A tracking group's common part; the colon keeps it apart from any
    /// parameter's name.
    pub fn track(group: &str, drift: bool) -> Self {
        SourceName {
            text: if drift {
                format!("track:{group}:drift")
            } else {
                format!("track:{group}")
            },
            of: Named::Track {
                group: group.to_string(),
                drift,
            },
        }
    }

    /// A part several stages share ([`Named::Shared`]); the colon keeps
    /// it apart from any parameter's name, and no group's name is written
    /// before it.
    pub fn shared(what: &'static str) -> Self {
        SourceName {
            text: format!("shared:{what}"),
            of: Named::Shared(what),
        }
    }

    pub fn whole(what: &'static str) -> Self {
        SourceName {
            text: what.to_string(),
            of: Named::Whole(what),
        }
    }

    pub fn named(&self) -> &Named {
        &self.of
    }

    /// The stage and parameter, for a stage's parameter.
    pub fn stage_param(&self) -> Option<(&str, &str)> {
        match &self.of {
            Named::Param { stage, param } => Some((stage, param)),
            Named::Track { .. } | Named::Whole(_) | Named::Shared(_) => None,
        }
    }

    /// Whether it names parameter `param` of stage `stage`.
    pub fn is(&self, stage: &str, param: &str) -> bool {
        self.stage_param() == Some((stage, param))
    }

    pub fn as_str(&self) -> &str {
        &self.text
    }
}

impl Ord for SourceName {
    fn cmp(&self, other: &Self) -> std::cmp::Ordering {
        self.text
            .cmp(&other.text)
            .then_with(|| self.of.cmp(&other.of))
    }
}

impl PartialOrd for SourceName {
    fn partial_cmp(&self, other: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(other))
    }
}

impl std::fmt::Display for SourceName {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.pad(&self.text)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ids_keep_their_index() {
        assert_eq!(SlotId::new(7).index(), 7);
        assert_eq!(NodeId::new(3).index(), 3);
        let nodes: Vec<usize> = NodeId::all(3).map(NodeId::index).collect();
        assert_eq!(nodes, [0, 1, 2]);
        assert_eq!(SlotId::all(2).next_back(), Some(SlotId::new(1)));
    }

    #[test]
    fn a_source_name_reads_as_written_and_compares_by_its_fields() {
        let r = SourceName::param("amp", "gain_error");
        assert_eq!(r.to_string(), "amp.gain_error");
        assert_eq!(r.stage_param(), Some(("amp", "gain_error")));
        assert!(r.is("amp", "gain_error") && !r.is("amp.gain", "error"));
        // The same text from other fields is another name.
        assert_ne!(SourceName::param("a.b", "c"), SourceName::param("a", "b.c"));
        assert_eq!(SourceName::track("pair", false).as_str(), "track:pair");
        assert_eq!(SourceName::track("pair", true).as_str(), "track:pair:drift");
        assert_eq!(SourceName::track("pair", true).stage_param(), None);
    }
}

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
}

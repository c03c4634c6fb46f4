//! What a `require` line asks for, as types: the kind of requirement and,
//! for accuracy, the method that judges it.

/// How an accuracy requirement is judged.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub enum AccuracyMethod {
    /// The sum of every source's largest contribution.
    WorstCase,
    /// The GUM's expanded uncertainty, k = 2 (the default).
    #[default]
    Gum,
    /// The Monte Carlo 95 % interval (JCGM 101).
    MonteCarlo,
}

impl AccuracyMethod {
    pub const ALL: [AccuracyMethod; 3] = [
        AccuracyMethod::WorstCase,
        AccuracyMethod::Gum,
        AccuracyMethod::MonteCarlo,
    ];

    /// The word a spec writes.
    pub fn word(self) -> &'static str {
        match self {
            AccuracyMethod::WorstCase => "worst_case",
            AccuracyMethod::Gum => "gum",
            AccuracyMethod::MonteCarlo => "monte_carlo",
        }
    }

    pub fn parse(word: &str) -> Option<AccuracyMethod> {
        Self::ALL.into_iter().find(|m| m.word() == word)
    }
}

/// The kind of a `require` line.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum RequirementKind {
    /// With the method the line names, if it names one.
    Accuracy(Option<AccuracyMethod>),
    Resolution,
    Response,
    Rejection,
}

impl RequirementKind {
    /// Every kind, accuracy without a method.
    pub const ALL: [RequirementKind; 4] = [
        RequirementKind::Accuracy(None),
        RequirementKind::Resolution,
        RequirementKind::Response,
        RequirementKind::Rejection,
    ];

    /// The word a spec writes.
    pub fn word(self) -> &'static str {
        match self {
            RequirementKind::Accuracy(_) => "accuracy",
            RequirementKind::Resolution => "resolution",
            RequirementKind::Response => "response",
            RequirementKind::Rejection => "rejection",
        }
    }

    pub fn parse(word: &str) -> Option<RequirementKind> {
        Self::ALL.into_iter().find(|k| k.word() == word)
    }

    /// The same kind, whatever its method.
    pub fn same_kind(self, other: RequirementKind) -> bool {
        self.word() == other.word()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn words_read_back() {
        for m in AccuracyMethod::ALL {
            assert_eq!(AccuracyMethod::parse(m.word()), Some(m));
        }
        for k in RequirementKind::ALL {
            assert_eq!(RequirementKind::parse(k.word()), Some(k));
        }
        assert_eq!(AccuracyMethod::parse("gum "), None);
        assert_eq!(AccuracyMethod::default(), AccuracyMethod::Gum);
        assert!(RequirementKind::Accuracy(Some(AccuracyMethod::WorstCase))
            .same_kind(RequirementKind::Accuracy(None)));
    }
}

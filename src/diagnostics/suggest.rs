/// The candidate closest to `word`, if close enough to be a likely typo:
/// a case-insensitive match first, then an edit distance of at most a
/// third of the length (at least one).
pub fn did_you_mean<'a>(word: &str, candidates: impl Iterator<Item = &'a str>) -> Option<&'a str> {
    let candidates: Vec<&str> = candidates.collect();
    if let Some(c) = candidates.iter().find(|c| c.eq_ignore_ascii_case(word)) {
        return Some(c);
    }
    candidates
        .into_iter()
        .map(|c| {
            (
                strsim::damerau_levenshtein(&word.to_lowercase(), &c.to_lowercase()),
                c,
            )
        })
        .filter(|(d, c)| *d <= 1.max(c.chars().count().max(word.chars().count()) / 3))
        .min()
        .map(|(_, c)| c)
}

/// The help for `word`, which is none of `candidates`: ``did you mean
/// `near`?`` where one is near, else `otherwise()`.
pub fn did_you_mean_or<'a>(
    word: &str,
    candidates: impl Iterator<Item = &'a str>,
    otherwise: impl FnOnce() -> String,
) -> String {
    match did_you_mean(word, candidates) {
        Some(near) => format!("did you mean `{near}`?"),
        None => otherwise(),
    }
}

/// Names as a help line lists them: `` `a`, `b` ``.
pub fn backticked<'a>(names: impl IntoIterator<Item = &'a str>) -> String {
    names
        .into_iter()
        .map(|n| format!("`{n}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// What to say of `word`, which names no `what` among `candidates`:
/// ``no chain `x`; did you mean `y`?`` where one is near, else
/// ``no chain `x` `` followed by `; ` and `otherwise` when given.
pub fn unknown_word<'a>(
    what: &str,
    word: &str,
    candidates: impl Iterator<Item = &'a str>,
    otherwise: Option<&str>,
) -> String {
    match (did_you_mean(word, candidates), otherwise) {
        (Some(near), _) => format!("no {what} `{word}`; did you mean `{near}`?"),
        (None, Some(more)) => format!("no {what} `{word}`; {more}"),
        (None, None) => format!("no {what} `{word}`"),
    }
}

#[cfg(test)]
mod tests {
    use super::{backticked, did_you_mean, did_you_mean_or, unknown_word};

    #[test]
    fn a_help_suggests_or_says_otherwise() {
        let sides = ["high", "low"];
        let help = |word| did_you_mean_or(word, sides.into_iter(), || format!("not {word}"));
        assert_eq!(help("hihg"), "did you mean `high`?");
        assert_eq!(help("middle"), "not middle");
        assert_eq!(backticked(sides), "`high`, `low`");
        assert_eq!(backticked([]), "");
    }

    #[test]
    fn unknown_words_said_one_way() {
        let chains = ["oven", "kiln"];
        let say = |word, otherwise| unknown_word("chain", word, chains.into_iter(), otherwise);
        assert_eq!(say("ovn", None), "no chain `ovn`; did you mean `oven`?");
        assert_eq!(
            say("ovn", Some("ignored")),
            "no chain `ovn`; did you mean `oven`?"
        );
        assert_eq!(say("dryer", None), "no chain `dryer`");
        assert_eq!(
            say("dryer", Some("the chains are `oven`, `kiln`")),
            "no chain `dryer`; the chains are `oven`, `kiln`"
        );
    }

    #[test]
    fn typos_and_case() {
        let words = ["gain", "offset", "noise"];
        assert_eq!(did_you_mean("gian", words.into_iter()), Some("gain"));
        assert_eq!(did_you_mean("OFFSET", words.into_iter()), Some("offset"));
        assert_eq!(did_you_mean("bandwidth", words.into_iter()), None);
    }
}

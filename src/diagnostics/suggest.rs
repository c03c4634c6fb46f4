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

#[cfg(test)]
mod tests {
    use super::did_you_mean;

    #[test]
    fn typos_and_case() {
        let words = ["gain", "offset", "noise"];
        assert_eq!(did_you_mean("gian", words.into_iter()), Some("gain"));
        assert_eq!(did_you_mean("OFFSET", words.into_iter()), Some("offset"));
        assert_eq!(did_you_mean("bandwidth", words.into_iter()), None);
    }
}

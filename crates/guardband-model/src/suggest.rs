//! "Did you mean" suggestions by edit distance.

pub use guardband_units::edit_distance;

/// The closest candidate to `word`, if one is close enough to be a likely typo.
pub fn did_you_mean<'a>(
    word: &str,
    candidates: impl IntoIterator<Item = &'a str>,
) -> Option<String> {
    let limit = (word.chars().count() / 3).max(1);
    candidates
        .into_iter()
        .filter(|c| *c != word)
        .map(|c| (edit_distance(&word.to_lowercase(), &c.to_lowercase()), c))
        .filter(|(d, c)| *d <= limit || (c.contains(word) && word.len() >= 3))
        .min()
        .map(|(_, c)| c.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn suggests_close_names() {
        assert_eq!(
            did_you_mean("suply", ["supply", "output"]),
            Some("supply".into())
        );
        assert_eq!(did_you_mean("xyz", ["supply", "output"]), None);
        assert_eq!(edit_distance("kitten", "sitting"), 3);
    }
}

//! Words of free-text `detail` fields.

/// Split a detail text into lower-cased word tokens (letters and digits; everything else separates).
///
/// Tokens longer than 40 characters are dropped: they are ids or noise, not words.
pub fn tokens(text: &str) -> impl Iterator<Item = String> + '_ {
    text.split(|c: char| !c.is_alphanumeric())
        .filter(|w| !w.is_empty() && w.chars().count() <= 40)
        .map(|w| w.to_lowercase())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tokens_are_lower_cased_words_split_on_punctuation() {
        let t: Vec<String> = tokens("Took the Harbour, twice! (x2)").collect();
        assert_eq!(t, ["took", "the", "harbour", "twice", "x2"]);
    }

    #[test]
    fn empty_and_punctuation_only_texts_have_no_tokens() {
        assert_eq!(tokens("").count(), 0);
        assert_eq!(tokens(" -- ,; ").count(), 0);
    }
}

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

/// Natural order of identifiers: runs of ASCII digits compare as numbers (`g2` < `g10`),
/// everything else character by character; identifiers equal in that order (`g01`, `g1`)
/// fall back to plain string order, so the order is total.
pub fn natural_cmp(a: &str, b: &str) -> std::cmp::Ordering {
    use std::cmp::Ordering;
    let (x, y) = (a.as_bytes(), b.as_bytes());
    let (mut i, mut j) = (0, 0);
    while i < x.len() && j < y.len() {
        if x[i].is_ascii_digit() && y[j].is_ascii_digit() {
            let si = i;
            while i < x.len() && x[i].is_ascii_digit() {
                i += 1;
            }
            let sj = j;
            while j < y.len() && y[j].is_ascii_digit() {
                j += 1;
            }
            // Compare the digit runs as numbers of any length: strip leading zeros, then
            // the longer run is larger, then compare digit by digit.
            let trim = |s: &[u8]| -> usize { s.iter().take_while(|&&c| c == b'0').count() };
            let (ra, rb) = (&x[si..i], &y[sj..j]);
            let (ra, rb) = (&ra[trim(ra)..], &rb[trim(rb)..]);
            let ord = ra.len().cmp(&rb.len()).then_with(|| ra.cmp(rb));
            if ord != Ordering::Equal {
                return ord;
            }
        } else {
            // Compare whole characters (UTF-8 byte order equals code point order).
            let ord = x[i].cmp(&y[j]);
            if ord != Ordering::Equal {
                return ord;
            }
            i += 1;
            j += 1;
        }
    }
    (x.len() - i).cmp(&(y.len() - j)).then_with(|| a.cmp(b))
}

#[cfg(test)]
mod natural_order_tests {
    use super::natural_cmp;
    use std::cmp::Ordering::*;

    #[test]
    fn digit_runs_compare_as_numbers_and_the_order_is_total() {
        let mut ids = vec![
            "g10", "g2", "g1", "a", "g01", "g", "h1", "g2b", "g2a", "Ω3", "Ω20",
        ];
        ids.sort_by(|a, b| natural_cmp(a, b));
        assert_eq!(
            ids,
            vec![
                "a", "g", "g01", "g1", "g2", "g2a", "g2b", "g10", "h1", "Ω3", "Ω20"
            ]
        );
        assert_eq!(
            natural_cmp("x99999999999999999999999", "x100000000000000000000000"),
            Less
        );
        assert_eq!(natural_cmp("same", "same"), Equal);
    }
}

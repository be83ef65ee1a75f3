//! Small summaries of a sample: mean, standard deviation, median and quantiles.
//!
//! Each returns `None` for an empty sample or one holding NaN, so that no NaN leaks into a
//! report.

/// Arithmetic mean; `None` when empty or any value is NaN.
pub fn mean(xs: &[f64]) -> Option<f64> {
    if xs.is_empty() || xs.iter().any(|x| x.is_nan()) {
        return None;
    }
    Some(xs.iter().sum::<f64>() / xs.len() as f64)
}

/// Sample variance with the n − 1 denominator; `None` for fewer than two values or NaN.
pub fn variance(xs: &[f64]) -> Option<f64> {
    if xs.len() < 2 {
        return None;
    }
    let m = mean(xs)?;
    // Two-pass form: far less cancellation than Σx² − n·m².
    let ss: f64 = xs.iter().map(|x| (x - m) * (x - m)).sum();
    Some(ss / (xs.len() - 1) as f64)
}

/// Sample standard deviation (n − 1 denominator); `None` for fewer than two values or NaN.
pub fn std_dev(xs: &[f64]) -> Option<f64> {
    variance(xs).map(f64::sqrt)
}

/// Median (average of the two middle values for even n); `None` when empty or NaN.
pub fn median(xs: &[f64]) -> Option<f64> {
    quantile(xs, 0.5)
}

/// Sample quantile of type 7 (Hyndman & Fan 1996; R's default): linear interpolation between
/// order statistics at position (n − 1)·prob. `None` when empty, NaN, or prob outside [0, 1].
pub fn quantile(xs: &[f64], prob: f64) -> Option<f64> {
    if xs.iter().any(|x| x.is_nan()) {
        return None;
    }
    let mut sorted = xs.to_vec();
    sorted.sort_by(f64::total_cmp);
    quantile_of_sorted(&sorted, prob)
}

/// [`quantile`] for a slice already sorted ascending (no NaN), avoiding a copy and a sort
/// when several quantiles of one sample are needed.
pub fn quantile_of_sorted(sorted: &[f64], prob: f64) -> Option<f64> {
    if sorted.is_empty() || !(0.0..=1.0).contains(&prob) {
        return None;
    }
    let h = (sorted.len() - 1) as f64 * prob;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(sorted.len() - 1);
    let frac = h - lo as f64;
    // Written as a + t(b − a) so that equal neighbours give exactly that value.
    Some(sorted[lo] + frac * (sorted[hi] - sorted[lo]))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantile_type_7_matches_hand_computed_values() {
        // Hyndman & Fan (1996) definition 7, worked by hand: for 1..=10 and p = 0.1 the
        // position is 1 + 9·0.1 = 1.9, so 1 + 0.9·(2 − 1) = 1.9; for [1, 2, 3, 4] and
        // p = 0.25 the position is 1 + 3·0.25 = 1.75, giving 1.75.
        let one_to_ten: Vec<f64> = (1..=10).map(f64::from).collect();
        assert!((quantile(&one_to_ten, 0.1).unwrap() - 1.9).abs() < 1e-12);
        assert!((quantile(&[4.0, 2.0, 3.0, 1.0], 0.25).unwrap() - 1.75).abs() < 1e-12);
        assert_eq!(quantile(&[4.0, 2.0, 3.0, 1.0], 0.0), Some(1.0));
        assert_eq!(quantile(&[4.0, 2.0, 3.0, 1.0], 1.0), Some(4.0));
    }

    #[test]
    fn median_averages_the_middle_pair_for_even_counts() {
        // Hand-checked: median of 3, 1, 2 is 2; of 4, 1, 3, 2 is (2 + 3) / 2.
        assert_eq!(median(&[3.0, 1.0, 2.0]), Some(2.0));
        assert_eq!(median(&[4.0, 1.0, 3.0, 2.0]), Some(2.5));
    }

    #[test]
    fn mean_and_std_match_hand_computed_values() {
        // Hand-checked: 2, 4, 4, 4, 5, 5, 7, 9 has mean 5 and squared deviations summing to
        // 32, so the n − 1 standard deviation is √(32/7).
        let xs = [2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0];
        assert_eq!(mean(&xs), Some(5.0));
        assert!((std_dev(&xs).unwrap() - (32.0f64 / 7.0).sqrt()).abs() < 1e-12);
    }

    #[test]
    fn empty_or_nan_samples_give_none() {
        assert_eq!(mean(&[]), None);
        assert_eq!(median(&[]), None);
        assert_eq!(std_dev(&[1.0]), None);
        assert_eq!(quantile(&[1.0, f64::NAN], 0.5), None);
        assert_eq!(quantile(&[1.0], 1.5), None);
    }
}

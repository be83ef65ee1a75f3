//! Confidence intervals for binomial proportions: the Wilson score interval for one
//! proportion and Newcombe's hybrid score interval for the difference of two.

use serde::{Deserialize, Serialize};

use super::dist::normal_quantile;
use super::error::{StatsError, check_confidence};

/// A closed interval [lo, hi] of plausible values.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Interval {
    /// Lower end.
    pub lo: f64,
    /// Upper end.
    pub hi: f64,
}

impl Interval {
    /// The interval [lo, hi].
    pub fn new(lo: f64, hi: f64) -> Self {
        Self { lo, hi }
    }
    /// hi − lo.
    pub fn width(&self) -> f64 {
        self.hi - self.lo
    }
    /// Whether `x` lies in [lo, hi].
    pub fn contains(&self, x: f64) -> bool {
        self.lo <= x && x <= self.hi
    }
}

/// Two-sided normal critical value z for a confidence level, after checking the level.
fn two_sided_z(confidence: f64) -> Result<f64, StatsError> {
    check_confidence(confidence)?;
    Ok(normal_quantile(0.5 + 0.5 * confidence))
}

/// Wilson score interval for `successes` out of `trials` at the given two-sided confidence,
/// optionally with the continuity correction (Newcombe 1998, methods 3 and 4).
///
/// With no trials nothing is known and the interval is [0, 1]. Errors if the confidence is
/// not in (0, 1) or `successes > trials`.
pub fn wilson_interval(
    successes: u64,
    trials: u64,
    confidence: f64,
    continuity_correction: bool,
) -> Result<Interval, StatsError> {
    let z = two_sided_z(confidence)?;
    if successes > trials {
        return Err(StatsError::SuccessesExceedTrials { successes, trials });
    }
    if trials == 0 {
        return Ok(Interval::new(0.0, 1.0));
    }
    Ok(wilson_with_z(successes, trials, z, continuity_correction))
}

/// Wilson interval for checked input (trials > 0, successes ≤ trials) and a given z.
fn wilson_with_z(successes: u64, trials: u64, z: f64, continuity_correction: bool) -> Interval {
    let n = trials as f64;
    let p = successes as f64 / n;
    let q = 1.0 - p;
    let z2 = z * z;
    let denom = 2.0 * (n + z2);
    let (lo, hi) = if continuity_correction {
        // Newcombe (1998) eq. for method 4; at p = 0 or 1 the corrected bound is the edge.
        let lo = if successes == 0 {
            0.0
        } else {
            let root = (z2 - 2.0 - 1.0 / n + 4.0 * p * (n * q + 1.0))
                .max(0.0)
                .sqrt();
            (2.0 * n * p + z2 - 1.0 - z * root) / denom
        };
        let hi = if successes == trials {
            1.0
        } else {
            let root = (z2 + 2.0 - 1.0 / n + 4.0 * p * (n * q - 1.0))
                .max(0.0)
                .sqrt();
            (2.0 * n * p + z2 + 1.0 + z * root) / denom
        };
        (lo, hi)
    } else {
        let centre = 2.0 * n * p + z2;
        let half = z * (z2 + 4.0 * n * p * q).sqrt();
        ((centre - half) / denom, (centre + half) / denom)
    };
    Interval::new(lo.clamp(0.0, 1.0), hi.clamp(0.0, 1.0))
}

/// Newcombe's hybrid score interval for p₁ − p₂ of two independent proportions
/// (Newcombe 1998, method 10; method 11 with `continuity_correction`).
///
/// Combines the Wilson limits (l₁, u₁), (l₂, u₂) as
/// [D − √((p₁ − l₁)² + (u₂ − p₂)²), D + √((u₁ − p₁)² + (p₂ − l₂)²)]. If either group has no
/// trials the difference is unknown and the interval is [−1, 1].
pub fn newcombe_difference_interval(
    successes_1: u64,
    trials_1: u64,
    successes_2: u64,
    trials_2: u64,
    confidence: f64,
    continuity_correction: bool,
) -> Result<Interval, StatsError> {
    let z = two_sided_z(confidence)?;
    for (successes, trials) in [(successes_1, trials_1), (successes_2, trials_2)] {
        if successes > trials {
            return Err(StatsError::SuccessesExceedTrials { successes, trials });
        }
    }
    if trials_1 == 0 || trials_2 == 0 {
        return Ok(Interval::new(-1.0, 1.0));
    }
    let p1 = successes_1 as f64 / trials_1 as f64;
    let p2 = successes_2 as f64 / trials_2 as f64;
    let w1 = wilson_with_z(successes_1, trials_1, z, continuity_correction);
    let w2 = wilson_with_z(successes_2, trials_2, z, continuity_correction);
    let d = p1 - p2;
    let below = ((p1 - w1.lo).powi(2) + (w2.hi - p2).powi(2)).sqrt();
    let above = ((w1.hi - p1).powi(2) + (p2 - w2.lo).powi(2)).sqrt();
    Ok(Interval::new(
        (d - below).clamp(-1.0, 1.0),
        (d + above).clamp(-1.0, 1.0),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Published figures are rounded to 4 decimals.
    fn close4(got: f64, want: f64) -> bool {
        (got - want).abs() <= 0.5e-4 + 1e-9
    }

    #[test]
    fn wilson_reproduces_newcombe_1998_table_i() {
        // Newcombe R.G. (1998), Statistics in Medicine 17:857-872, Table I (confirmed):
        // (r, n, Wilson lo, hi, continuity-corrected lo, hi).
        let rows = [
            (81, 263, 0.2553, 0.3662, 0.2535, 0.3682),
            (15, 148, 0.0624, 0.1605, 0.0598, 0.1644),
            (0, 20, 0.0000, 0.1611, 0.0000, 0.2005),
            (1, 29, 0.0061, 0.1718, 0.0018, 0.1963),
        ];
        for (r, n, lo, hi, cc_lo, cc_hi) in rows {
            let w = wilson_interval(r, n, 0.95, false).unwrap();
            assert!(close4(w.lo, lo) && close4(w.hi, hi), "{r}/{n}: {w:?}");
            let c = wilson_interval(r, n, 0.95, true).unwrap();
            assert!(
                close4(c.lo, cc_lo) && close4(c.hi, cc_hi),
                "{r}/{n} cc: {c:?}"
            );
        }
    }

    #[test]
    fn newcombe_hybrid_reproduces_newcombe_1998_table_ii() {
        // Newcombe R.G. (1998), Statistics in Medicine 17:873-890, Table II, method 10
        // (confirmed for all rows): (r1, n1, r2, n2, lo, hi).
        let rows = [
            (56, 70, 48, 80, 0.0524, 0.3339),
            (9, 10, 3, 10, 0.1705, 0.8090),
            (6, 7, 2, 7, 0.0582, 0.8062),
            (5, 56, 0, 29, -0.0381, 0.1926),
            (0, 10, 0, 20, -0.1611, 0.2775),
            (0, 10, 0, 10, -0.2775, 0.2775),
            (10, 10, 0, 20, 0.6791, 1.0),
            (10, 10, 0, 10, 0.6075, 1.0),
        ];
        for (r1, n1, r2, n2, lo, hi) in rows {
            let d = newcombe_difference_interval(r1, n1, r2, n2, 0.95, false).unwrap();
            assert!(
                close4(d.lo, lo) && close4(d.hi, hi),
                "{r1}/{n1} - {r2}/{n2}: {d:?}"
            );
        }
    }

    #[test]
    fn no_trials_give_the_full_range_without_nan() {
        assert_eq!(
            wilson_interval(0, 0, 0.95, false).unwrap(),
            Interval::new(0.0, 1.0)
        );
        assert_eq!(
            wilson_interval(0, 0, 0.95, true).unwrap(),
            Interval::new(0.0, 1.0)
        );
        assert_eq!(
            newcombe_difference_interval(0, 0, 3, 5, 0.95, false).unwrap(),
            Interval::new(-1.0, 1.0)
        );
    }

    #[test]
    fn bad_input_is_an_error() {
        assert_eq!(
            wilson_interval(5, 4, 0.95, false),
            Err(StatsError::SuccessesExceedTrials {
                successes: 5,
                trials: 4
            })
        );
        assert_eq!(
            wilson_interval(1, 4, 1.0, false),
            Err(StatsError::InvalidConfidence(1.0))
        );
        assert!(newcombe_difference_interval(1, 4, 9, 8, 0.95, false).is_err());
    }

    #[test]
    fn wilson_widens_with_confidence_and_stays_in_unit_range() {
        // Ordering property of any confidence interval family (common practice).
        let narrow = wilson_interval(7, 30, 0.8, true).unwrap();
        let wide = wilson_interval(7, 30, 0.99, true).unwrap();
        assert!(wide.lo < narrow.lo && narrow.hi < wide.hi);
        for r in 0..=12 {
            for cc in [false, true] {
                let w = wilson_interval(r, 12, 0.5, cc).unwrap();
                assert!(
                    0.0 <= w.lo && w.lo <= w.hi && w.hi <= 1.0,
                    "{r}/12 {cc}: {w:?}"
                );
            }
        }
    }
}

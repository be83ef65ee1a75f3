//! Power and sample size for comparing two independent proportions (for example the first
//! seat's win rate under two rule variants).
//!
//! Uses the normal-approximation formula of Fleiss, Levin & Paik (the one in R's
//! `power.prop.test`, which ignores the far rejection tail), optionally with the
//! Fleiss-Tytun-Ury (1980) continuity correction n' = n/4 · (1 + √(1 + 4/(n·|p₁ − p₂|)))².

use serde::{Deserialize, Serialize};

use super::dist::{normal_cdf, normal_quantile};
use super::error::StatsError;

/// Design settings shared by [`two_proportion_power`] and [`two_proportion_sample_size`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct PowerParams {
    /// Significance level α of the test (default 0.05).
    pub significance: f64,
    /// Two-sided test (default) rather than one-sided.
    pub two_sided: bool,
    /// Apply the Fleiss-Tytun-Ury continuity correction (default off, as in R).
    pub continuity_correction: bool,
}

impl Default for PowerParams {
    fn default() -> Self {
        Self {
            significance: 0.05,
            two_sided: true,
            continuity_correction: false,
        }
    }
}

impl PowerParams {
    /// Errors unless 0 < significance < 1.
    pub fn check(&self) -> Result<(), StatsError> {
        if self.significance > 0.0 && self.significance < 1.0 {
            Ok(())
        } else {
            Err(StatsError::InvalidSignificance(self.significance))
        }
    }

    /// The critical value z_{α/k}, k = 2 for two-sided tests.
    fn z_alpha(&self) -> f64 {
        let tails = if self.two_sided { 2.0 } else { 1.0 };
        normal_quantile(1.0 - self.significance / tails)
    }
}

/// Checks p₁, p₂ ∈ [0, 1] and differ; returns (√(2 p̄ q̄), √(p₁q₁ + p₂q₂), |p₁ − p₂|).
fn design_terms(p1: f64, p2: f64) -> Result<(f64, f64, f64), StatsError> {
    for (what, p) in [("p1", p1), ("p2", p2)] {
        if !(0.0..=1.0).contains(&p) {
            return Err(StatsError::ProbabilityOutOfRange {
                what,
                value: p,
                range: "[0, 1]",
            });
        }
    }
    if p1 == p2 {
        return Err(StatsError::NoDifference(p1));
    }
    let pbar = 0.5 * (p1 + p2);
    let null_sd = (2.0 * pbar * (1.0 - pbar)).sqrt();
    let alt_sd = (p1 * (1.0 - p1) + p2 * (1.0 - p2)).sqrt();
    Ok((null_sd, alt_sd, (p1 - p2).abs()))
}

/// Power of the two-proportion test with `n_per_group` observations in each group.
///
/// With the continuity correction the corrected n is first mapped back to the uncorrected
/// one, n_u = (n − 1/d)² / n (the inverse of the correction); at n ≤ 1/d no corrected design
/// exists and the power at n_u = 0 is returned. Errors on a bad α, p outside [0, 1],
/// p₁ = p₂ or a non-positive n.
pub fn two_proportion_power(
    p1: f64,
    p2: f64,
    n_per_group: f64,
    params: &PowerParams,
) -> Result<f64, StatsError> {
    params.check()?;
    let (null_sd, alt_sd, d) = design_terms(p1, p2)?;
    if !(n_per_group > 0.0 && n_per_group.is_finite()) {
        return Err(StatsError::TooSmall {
            what: "n per group",
            value: n_per_group,
            min: f64::MIN_POSITIVE,
        });
    }
    let n = if params.continuity_correction {
        if n_per_group > 1.0 / d {
            (n_per_group - 1.0 / d).powi(2) / n_per_group
        } else {
            0.0
        }
    } else {
        n_per_group
    };
    let numerator = n.sqrt() * d - params.z_alpha() * null_sd;
    if alt_sd == 0.0 {
        // p₁, p₂ ∈ {0, 1}: the outcome is deterministic and any sample shows the difference.
        return Ok(if numerator > 0.0 { 1.0 } else { 0.0 });
    }
    Ok(normal_cdf(numerator / alt_sd))
}

/// Sample size per group for the two-proportion test to reach `power`, as a fractional
/// number (round it up for a design: 387.3 → 388).
///
/// Closed-form solution n = (z_α √(2 p̄ q̄) + z_β √(p₁q₁ + p₂q₂))² / (p₁ − p₂)², the same root
/// that `power.prop.test` finds numerically. Errors on a bad α, p outside [0, 1], p₁ = p₂,
/// or a power outside (0, 1) or too low to need any sample.
pub fn two_proportion_sample_size(
    p1: f64,
    p2: f64,
    power: f64,
    params: &PowerParams,
) -> Result<f64, StatsError> {
    params.check()?;
    let (null_sd, alt_sd, d) = design_terms(p1, p2)?;
    if !(power > 0.0 && power < 1.0) {
        return Err(StatsError::ProbabilityOutOfRange {
            what: "power",
            value: power,
            range: "(0, 1)",
        });
    }
    let root = params.z_alpha() * null_sd + normal_quantile(power) * alt_sd;
    if root <= 0.0 {
        return Err(StatsError::ProbabilityOutOfRange {
            what: "power",
            value: power,
            range: "above the power of an empty design",
        });
    }
    let n = (root / d).powi(2);
    if params.continuity_correction {
        Ok(n / 4.0 * (1.0 + (1.0 + 4.0 / (n * d)).sqrt()).powi(2))
    } else {
        Ok(n)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn power_reproduces_r_power_prop_test_example() {
        // R power.prop.test docs: n = 50, p1 = .5, p2 = .75 → power 0.740 (confirmed, R
        // source).
        let power = two_proportion_power(0.5, 0.75, 50.0, &PowerParams::default()).unwrap();
        assert!((power - 0.740).abs() < 0.5e-3, "power {power}");
    }

    #[test]
    fn sample_size_reproduces_r_power_prop_test_examples() {
        // R power.prop.test docs: p1 = .5, p2 = .75, power .9 → n = 76.7 (confirmed, R
        // source); 0.5 vs 0.6 at power 0.8 → 387.3, i.e. 388 per group (recomputed).
        let p = PowerParams::default();
        let n = two_proportion_sample_size(0.5, 0.75, 0.9, &p).unwrap();
        assert!((n - 76.7).abs() < 0.05, "n {n}");
        let n = two_proportion_sample_size(0.5, 0.6, 0.8, &p).unwrap();
        assert!((n - 387.3).abs() < 0.05, "n {n}");
        assert_eq!(n.ceil(), 388.0);
    }

    #[test]
    fn continuity_corrected_sample_size_is_408() {
        // CHECK_VALUES: 0.5 vs 0.6, α = 0.05 two-sided, power 0.8 → 408 per group with the
        // Fleiss-Tytun-Ury correction (recomputed).
        let p = PowerParams {
            continuity_correction: true,
            ..PowerParams::default()
        };
        let n = two_proportion_sample_size(0.5, 0.6, 0.8, &p).unwrap();
        assert_eq!(n.ceil(), 408.0, "n {n}");
    }

    #[test]
    fn corrected_power_inverts_corrected_sample_size() {
        // Round trip of the correction and its algebraic inverse (a property of the two
        // formulas, not a check value).
        let p = PowerParams {
            continuity_correction: true,
            ..PowerParams::default()
        };
        let n = two_proportion_sample_size(0.3, 0.45, 0.85, &p).unwrap();
        let power = two_proportion_power(0.3, 0.45, n, &p).unwrap();
        assert!((power - 0.85).abs() < 1e-9);
    }

    #[test]
    fn one_sided_design_needs_fewer_sessions() {
        // A one-sided test at the same α has a smaller critical value (common practice).
        let two = two_proportion_sample_size(0.5, 0.6, 0.8, &PowerParams::default()).unwrap();
        let one_sided = PowerParams {
            two_sided: false,
            ..PowerParams::default()
        };
        let one = two_proportion_sample_size(0.5, 0.6, 0.8, &one_sided).unwrap();
        assert!(one < two);
    }

    #[test]
    fn bad_designs_are_errors() {
        let p = PowerParams::default();
        assert_eq!(
            two_proportion_sample_size(0.4, 0.4, 0.8, &p),
            Err(StatsError::NoDifference(0.4))
        );
        assert!(two_proportion_power(0.4, 1.2, 10.0, &p).is_err());
        assert!(two_proportion_power(0.4, 0.5, 0.0, &p).is_err());
        assert!(two_proportion_sample_size(0.4, 0.5, 1.0, &p).is_err());
        let bad = PowerParams {
            significance: 0.0,
            ..p
        };
        assert_eq!(bad.check(), Err(StatsError::InvalidSignificance(0.0)));
    }
}

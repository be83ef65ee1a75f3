//! Scores of predicted win chances against what happened: log loss, the Brier score and its
//! Murphy decomposition, calibration (ECE and a reliability table), ROC AUC with standard
//! errors, threshold classification counts, and top-pick accuracy over sessions.
//!
//! Outcomes are `bool` (the side won or not); predictions are probabilities of that outcome.
//! Every function checks its input and returns a [`MetricsError`] rather than NaN or a panic;
//! an empty input is [`MetricsError::Empty`].

use serde::{Deserialize, Serialize};

use crate::stats::dist::normal_quantile;
use crate::stats::proportion::{Interval, wilson_interval};

/// Probabilities are clipped to [EPS, 1 − EPS] in the log loss so that one confident miss
/// costs a large but finite amount (common practice, as in scikit-learn).
pub const LOG_LOSS_EPS: f64 = 1e-15;

/// Why a metric could not be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MetricsError {
    /// No observations were given.
    #[error("no observations")]
    Empty,
    /// Two inputs that must align have different lengths.
    #[error("{what} has {got} entries but there are {expected} outcomes")]
    LengthMismatch {
        /// Which input.
        what: &'static str,
        /// Number of outcomes.
        expected: usize,
        /// Entries in that input.
        got: usize,
    },
    /// A predicted probability is NaN or outside [0, 1].
    #[error("predicted probability {value} at position {index} is not in [0, 1]")]
    ProbabilityOutOfRange {
        /// Position of the bad value.
        index: usize,
        /// The value.
        value: f64,
    },
    /// A score is NaN or infinite.
    #[error("score at position {index} is not finite")]
    NonFiniteScore {
        /// Position of the bad value.
        index: usize,
    },
    /// A weight is negative, NaN or infinite.
    #[error("weight {value} at position {index} is not a finite non-negative number")]
    InvalidWeight {
        /// Position of the bad value.
        index: usize,
        /// The value.
        value: f64,
    },
    /// All weights are zero.
    #[error("weights sum to zero")]
    ZeroTotalWeight,
    /// The number of calibration bins must be at least one.
    #[error("number of bins must be at least 1")]
    NoBins,
    /// ROC analysis needs both outcomes present.
    #[error("need both outcomes: {positives} positives, {negatives} negatives")]
    SingleClass {
        /// Observations with outcome true.
        positives: usize,
        /// Observations with outcome false.
        negatives: usize,
    },
    /// A confidence level must lie strictly between 0 and 1.
    #[error("confidence level {0} is not strictly between 0 and 1")]
    InvalidConfidence(f64),
}

/// Checks that outcomes are non-empty and `other` aligns with them.
fn check_aligned(n: usize, other: usize, what: &'static str) -> Result<(), MetricsError> {
    if n == 0 {
        return Err(MetricsError::Empty);
    }
    if other != n {
        return Err(MetricsError::LengthMismatch {
            what,
            expected: n,
            got: other,
        });
    }
    Ok(())
}

/// Checks outcomes and probabilities align and every probability is in [0, 1].
fn check_probabilities(outcomes: &[bool], probs: &[f64]) -> Result<(), MetricsError> {
    check_aligned(outcomes.len(), probs.len(), "probabilities")?;
    match probs.iter().position(|p| !(0.0..=1.0).contains(p)) {
        Some(index) => Err(MetricsError::ProbabilityOutOfRange {
            index,
            value: probs[index],
        }),
        None => Ok(()),
    }
}

/// Checks optional weights; returns them or all ones, and their total.
fn checked_weights(n: usize, weights: Option<&[f64]>) -> Result<(Vec<f64>, f64), MetricsError> {
    let Some(w) = weights else {
        return Ok((vec![1.0; n], n as f64));
    };
    check_aligned(n, w.len(), "weights")?;
    if let Some(index) = w.iter().position(|v| !(v.is_finite() && *v >= 0.0)) {
        return Err(MetricsError::InvalidWeight {
            index,
            value: w[index],
        });
    }
    let total: f64 = w.iter().sum();
    if total <= 0.0 {
        return Err(MetricsError::ZeroTotalWeight);
    }
    Ok((w.to_vec(), total))
}

/// Mean negative log-likelihood of the outcomes, −mean(y ln p + (1 − y) ln(1 − p)), with p
/// clipped to [1e-15, 1 − 1e-15]; optionally weighted.
pub fn log_loss(
    outcomes: &[bool],
    probs: &[f64],
    weights: Option<&[f64]>,
) -> Result<f64, MetricsError> {
    check_probabilities(outcomes, probs)?;
    let (w, total) = checked_weights(outcomes.len(), weights)?;
    let sum: f64 = outcomes
        .iter()
        .zip(probs)
        .zip(&w)
        .map(|((&y, &p), &wi)| {
            let p = p.clamp(LOG_LOSS_EPS, 1.0 - LOG_LOSS_EPS);
            -wi * if y { p.ln() } else { (1.0 - p).ln() }
        })
        .sum();
    Ok(sum / total)
}

/// Brier score: mean of (p − y)²; optionally weighted.
pub fn brier_score(
    outcomes: &[bool],
    probs: &[f64],
    weights: Option<&[f64]>,
) -> Result<f64, MetricsError> {
    check_probabilities(outcomes, probs)?;
    let (w, total) = checked_weights(outcomes.len(), weights)?;
    let sum: f64 = outcomes
        .iter()
        .zip(probs)
        .zip(&w)
        .map(|((&y, &p), &wi)| wi * (p - f64::from(u8::from(y))).powi(2))
        .sum();
    Ok(sum / total)
}

/// Murphy's (1973) partition of the Brier score over forecast bins.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct BrierDecomposition {
    /// The Brier score itself.
    pub brier: f64,
    /// Reliability (1/N) Σ n_k (f̄_k − ō_k)²: lower is better calibrated.
    pub reliability: f64,
    /// Resolution (1/N) Σ n_k (ō_k − ō)²: higher separates outcomes better.
    pub resolution: f64,
    /// Uncertainty ō(1 − ō) of the outcomes alone.
    pub uncertainty: f64,
    /// brier − (reliability − resolution + uncertainty): zero when each bin holds a single
    /// forecast value, otherwise the within-bin variance terms binning hides.
    pub within_bin: f64,
}

/// Murphy decomposition with the equal-width calibration bins of
/// [`expected_calibration_error`]; f̄_k is the mean forecast in bin k.
pub fn brier_decomposition(
    outcomes: &[bool],
    probs: &[f64],
    bins: usize,
) -> Result<BrierDecomposition, MetricsError> {
    check_probabilities(outcomes, probs)?;
    if bins == 0 {
        return Err(MetricsError::NoBins);
    }
    let groups: Vec<usize> = probs.iter().map(|&p| calibration_bin(p, bins)).collect();
    Ok(decompose(outcomes, probs, &groups, bins))
}

/// Murphy decomposition grouping identical forecast values, which makes it exact
/// (`within_bin` is zero up to rounding): suited to forecasts from a small set of values.
pub fn brier_decomposition_by_forecast(
    outcomes: &[bool],
    probs: &[f64],
) -> Result<BrierDecomposition, MetricsError> {
    check_probabilities(outcomes, probs)?;
    let mut distinct = probs.to_vec();
    distinct.sort_by(f64::total_cmp);
    distinct.dedup();
    let groups: Vec<usize> = probs
        .iter()
        .map(|p| distinct.partition_point(|d| d < p))
        .collect();
    Ok(decompose(outcomes, probs, &groups, distinct.len()))
}

/// The decomposition for checked input and a group index per forecast.
fn decompose(
    outcomes: &[bool],
    probs: &[f64],
    groups: &[usize],
    n_groups: usize,
) -> BrierDecomposition {
    let n = outcomes.len() as f64;
    let mut count = vec![0.0; n_groups];
    let mut forecast_sum = vec![0.0; n_groups];
    let mut event_sum = vec![0.0; n_groups];
    for ((&y, &p), &g) in outcomes.iter().zip(probs).zip(groups) {
        count[g] += 1.0;
        forecast_sum[g] += p;
        event_sum[g] += f64::from(u8::from(y));
    }
    let base_rate = event_sum.iter().sum::<f64>() / n;
    let mut reliability = 0.0;
    let mut resolution = 0.0;
    for g in 0..n_groups {
        if count[g] > 0.0 {
            let f = forecast_sum[g] / count[g];
            let o = event_sum[g] / count[g];
            reliability += count[g] * (f - o).powi(2);
            resolution += count[g] * (o - base_rate).powi(2);
        }
    }
    let brier = outcomes
        .iter()
        .zip(probs)
        .map(|(&y, &p)| (p - f64::from(u8::from(y))).powi(2))
        .sum::<f64>()
        / n;
    let reliability = reliability / n;
    let resolution = resolution / n;
    let uncertainty = base_rate * (1.0 - base_rate);
    BrierDecomposition {
        brier,
        reliability,
        resolution,
        uncertainty,
        within_bin: brier - (reliability - resolution + uncertainty),
    }
}

/// Index 0..bins of the calibration bin ((m − 1)/M, m/M] holding p, bin 0 also taking p = 0
/// (Guo et al. 2017). Edges are the f64 values of m/M, so p = 0.3 with M = 10 lands in
/// (0.2, 0.3] even though 0.3·10 rounds above 3.
fn calibration_bin(p: f64, bins: usize) -> usize {
    let m = bins as f64;
    let mut upper = ((p * m).ceil() as usize).clamp(1, bins);
    while upper > 1 && p <= (upper - 1) as f64 / m {
        upper -= 1;
    }
    while upper < bins && p > upper as f64 / m {
        upper += 1;
    }
    upper - 1
}

/// Expected calibration error over `bins` equal-width bins of the predicted probability:
/// Σ (|B_m|/n)·|observed rate(B_m) − mean prediction(B_m)| (Guo et al. 2017). For win
/// chances, pass the probability of the side, not the top-class confidence.
pub fn expected_calibration_error(
    outcomes: &[bool],
    probs: &[f64],
    bins: usize,
) -> Result<f64, MetricsError> {
    Ok(reliability_table(outcomes, probs, bins, 0.95)?.ece)
}

/// One row of a reliability table.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ReliabilityBin {
    /// Lower edge (excluded, except 0 for the first bin).
    pub lo: f64,
    /// Upper edge (included).
    pub hi: f64,
    /// Forecasts in the bin.
    pub count: usize,
    /// Outcomes that happened among them.
    pub events: usize,
    /// Mean predicted probability, if the bin is not empty.
    pub mean_predicted: Option<f64>,
    /// Observed event rate, if the bin is not empty.
    pub observed_rate: Option<f64>,
    /// Wilson interval of the observed rate ([0, 1] for an empty bin).
    pub interval: Interval,
}

/// A reliability table with its expected calibration error.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReliabilityTable {
    /// One entry per bin, in order of probability.
    pub bins: Vec<ReliabilityBin>,
    /// Expected calibration error over these bins.
    pub ece: f64,
    /// Forecasts scored.
    pub n: usize,
}

/// Reliability table over `bins` equal-width bins with Wilson intervals (continuity
/// correction off) at `confidence` for each bin's observed rate.
pub fn reliability_table(
    outcomes: &[bool],
    probs: &[f64],
    bins: usize,
    confidence: f64,
) -> Result<ReliabilityTable, MetricsError> {
    check_probabilities(outcomes, probs)?;
    if bins == 0 {
        return Err(MetricsError::NoBins);
    }
    if !(confidence > 0.0 && confidence < 1.0) {
        return Err(MetricsError::InvalidConfidence(confidence));
    }
    let mut count = vec![0usize; bins];
    let mut events = vec![0usize; bins];
    let mut forecast_sum = vec![0.0; bins];
    for (&y, &p) in outcomes.iter().zip(probs) {
        let b = calibration_bin(p, bins);
        count[b] += 1;
        events[b] += usize::from(y);
        forecast_sum[b] += p;
    }
    let n = outcomes.len();
    let mut ece = 0.0;
    let mut rows = Vec::with_capacity(bins);
    for b in 0..bins {
        let (mean_predicted, observed_rate) = if count[b] > 0 {
            let mean = forecast_sum[b] / count[b] as f64;
            let rate = events[b] as f64 / count[b] as f64;
            ece += count[b] as f64 / n as f64 * (rate - mean).abs();
            (Some(mean), Some(rate))
        } else {
            (None, None)
        };
        // Confidence was checked above and events ≤ count, so this cannot fail.
        let interval = wilson_interval(events[b] as u64, count[b] as u64, confidence, false)
            .unwrap_or(Interval::new(0.0, 1.0));
        rows.push(ReliabilityBin {
            lo: b as f64 / bins as f64,
            hi: (b + 1) as f64 / bins as f64,
            count: count[b],
            events: events[b],
            mean_predicted,
            observed_rate,
            interval,
        });
    }
    Ok(ReliabilityTable { bins: rows, ece, n })
}

/// Area under the ROC curve with two standard errors.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct RocAuc {
    /// P(score of a random positive > score of a random negative), ties counting half.
    pub auc: f64,
    /// Observations with outcome true.
    pub positives: usize,
    /// Observations with outcome false.
    pub negatives: usize,
    /// Standard error by Hanley & McNeil (1982), from the AUC and the class sizes alone.
    pub se_hanley_mcneil: f64,
    /// DeLong, DeLong & Clarke-Pearson (1988) standard error from the structural
    /// components; `None` when a class has fewer than two members.
    pub se_delong: Option<f64>,
}

impl RocAuc {
    /// Normal-theory interval AUC ± z·SE(DeLong), clipped to [0, 1]; `None` when the DeLong
    /// error is undefined. Errors on a confidence outside (0, 1).
    pub fn delong_interval(&self, confidence: f64) -> Result<Option<Interval>, MetricsError> {
        if !(confidence > 0.0 && confidence < 1.0) {
            return Err(MetricsError::InvalidConfidence(confidence));
        }
        let z = normal_quantile(0.5 + 0.5 * confidence);
        Ok(self
            .se_delong
            .map(|se| Interval::new((self.auc - z * se).max(0.0), (self.auc + z * se).min(1.0))))
    }
}

/// ROC AUC of `scores` for the outcomes, in O(n log n), with the Hanley-McNeil and DeLong
/// standard errors. Any real-valued score works (probabilities, ratings). Errors on empty
/// or misaligned input, a non-finite score, or a single class.
pub fn roc_auc(outcomes: &[bool], scores: &[f64]) -> Result<RocAuc, MetricsError> {
    check_aligned(outcomes.len(), scores.len(), "scores")?;
    if let Some(index) = scores.iter().position(|s| !s.is_finite()) {
        return Err(MetricsError::NonFiniteScore { index });
    }
    let positives = outcomes.iter().filter(|&&y| y).count();
    let negatives = outcomes.len() - positives;
    if positives == 0 || negatives == 0 {
        return Err(MetricsError::SingleClass {
            positives,
            negatives,
        });
    }
    let mut order: Vec<usize> = (0..scores.len()).collect();
    order.sort_by(|&a, &b| scores[a].total_cmp(&scores[b]));

    // Tie groups of equal score: (positives, negatives) in each, ascending by score.
    let mut groups: Vec<(f64, f64)> = Vec::new();
    let mut start = 0;
    while start < order.len() {
        let mut end = start + 1;
        while end < order.len() && scores[order[end]] == scores[order[start]] {
            end += 1;
        }
        let pos = order[start..end].iter().filter(|&&i| outcomes[i]).count() as f64;
        groups.push((pos, (end - start) as f64 - pos));
        start = end;
    }

    let (n1, n0) = (positives as f64, negatives as f64);
    // Structural components (DeLong 1988): for a positive, the share of negatives it beats
    // (ties half); for a negative, the share of positives that beat it.
    let mut components: Vec<(f64, f64, f64, f64)> = Vec::with_capacity(groups.len());
    let mut neg_below = 0.0;
    let mut pos_above = n1;
    for &(pos, neg) in &groups {
        pos_above -= pos;
        let v10 = (neg_below + 0.5 * neg) / n0;
        let v01 = (pos_above + 0.5 * pos) / n1;
        components.push((pos, v10, neg, v01));
        neg_below += neg;
    }
    let auc = components.iter().map(|c| c.0 * c.1).sum::<f64>() / n1;

    let q1 = auc / (2.0 - auc);
    let q2 = 2.0 * auc * auc / (1.0 + auc);
    let hm_var =
        (auc * (1.0 - auc) + (n1 - 1.0) * (q1 - auc * auc) + (n0 - 1.0) * (q2 - auc * auc))
            / (n1 * n0);

    let se_delong = (positives >= 2 && negatives >= 2).then(|| {
        let s10 = components
            .iter()
            .map(|c| c.0 * (c.1 - auc).powi(2))
            .sum::<f64>()
            / (n1 - 1.0);
        let s01 = components
            .iter()
            .map(|c| c.2 * (c.3 - auc).powi(2))
            .sum::<f64>()
            / (n0 - 1.0);
        (s10 / n1 + s01 / n0).max(0.0).sqrt()
    });
    Ok(RocAuc {
        auc,
        positives,
        negatives,
        se_hanley_mcneil: hm_var.max(0.0).sqrt(),
        se_delong,
    })
}

/// Counts of a yes/no prediction against the outcome.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
pub struct ConfusionMatrix {
    /// Predicted true, was true.
    pub true_pos: usize,
    /// Predicted true, was false.
    pub false_pos: usize,
    /// Predicted false, was false.
    pub true_neg: usize,
    /// Predicted false, was true.
    pub false_neg: usize,
}

/// `Some(num / den)` unless den is zero.
fn ratio(num: usize, den: usize) -> Option<f64> {
    (den > 0).then(|| num as f64 / den as f64)
}

impl ConfusionMatrix {
    /// Counts from explicit predictions.
    pub fn from_predictions(outcomes: &[bool], predicted: &[bool]) -> Result<Self, MetricsError> {
        check_aligned(outcomes.len(), predicted.len(), "predictions")?;
        let mut m = Self::default();
        for (&y, &yhat) in outcomes.iter().zip(predicted) {
            match (yhat, y) {
                (true, true) => m.true_pos += 1,
                (true, false) => m.false_pos += 1,
                (false, false) => m.true_neg += 1,
                (false, true) => m.false_neg += 1,
            }
        }
        Ok(m)
    }

    /// Counts when the outcome is predicted for p > `threshold` (use 0.5 for "predicted
    /// winner"; p exactly at the threshold counts as predicting the other side).
    pub fn at_threshold(
        outcomes: &[bool],
        probs: &[f64],
        threshold: f64,
    ) -> Result<Self, MetricsError> {
        check_probabilities(outcomes, probs)?;
        let predicted: Vec<bool> = probs.iter().map(|&p| p > threshold).collect();
        Self::from_predictions(outcomes, &predicted)
    }

    /// All observations counted.
    pub fn total(&self) -> usize {
        self.true_pos + self.false_pos + self.true_neg + self.false_neg
    }

    /// Share of correct predictions; `None` when empty.
    pub fn accuracy(&self) -> Option<f64> {
        ratio(self.true_pos + self.true_neg, self.total())
    }

    /// Recall (sensitivity) tp / (tp + fn); `None` without actual positives.
    pub fn recall(&self) -> Option<f64> {
        ratio(self.true_pos, self.true_pos + self.false_neg)
    }

    /// Specificity tn / (tn + fp); `None` without actual negatives.
    pub fn specificity(&self) -> Option<f64> {
        ratio(self.true_neg, self.true_neg + self.false_pos)
    }

    /// Mean of recall and specificity; `None` unless both outcomes occur.
    pub fn balanced_accuracy(&self) -> Option<f64> {
        Some(0.5 * (self.recall()? + self.specificity()?))
    }

    /// Precision tp / (tp + fp); `None` when nothing was predicted true.
    pub fn precision(&self) -> Option<f64> {
        ratio(self.true_pos, self.true_pos + self.false_pos)
    }

    /// F1 = 2tp / (2tp + fp + fn), the harmonic mean of precision and recall; `None` when
    /// there are no actual and no predicted positives.
    pub fn f1(&self) -> Option<f64> {
        ratio(
            2 * self.true_pos,
            2 * self.true_pos + self.false_pos + self.false_neg,
        )
    }
}

/// Sessions where the model's pick (say, the seat with the highest win chance) was the actual
/// winner: returns (correct, sessions). `picks` holds (predicted, actual) per session.
pub fn top_pick_accuracy(picks: &[(usize, usize)]) -> (usize, usize) {
    let correct = picks.iter().filter(|(p, a)| p == a).count();
    (correct, picks.len())
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;
    use smartcore::metrics::Metrics;

    #[test]
    fn log_loss_matches_scikit_learn_doc_example() {
        // scikit-learn log_loss docs: labels spam, ham, ham, spam with P(spam) .9, .1, .2,
        // .65 → 0.21616 (from memory; recomputed by hand as
        // −(ln .9 + ln .9 + ln .8 + ln .65)/4 = 0.216162).
        let y = [true, false, false, true];
        let p = [0.9, 0.1, 0.2, 0.65];
        let ll = log_loss(&y, &p, None).unwrap();
        assert!((ll - 0.216_162).abs() < 1e-6);
    }

    #[test]
    fn log_loss_clips_certain_misses_and_weights_rows() {
        // A certain miss costs −ln(1e-15) = 34.5388 (the clip, common practice).
        let ll = log_loss(&[true], &[0.0], None).unwrap();
        assert!((ll - 34.538_776).abs() < 1e-5);
        // Hand-computed weighted mean: weights 1 and 3 on −ln .8 and −ln .6.
        let w = log_loss(&[true, false], &[0.8, 0.4], Some(&[1.0, 3.0])).unwrap();
        let hand = (-(0.8f64.ln()) - 3.0 * 0.6f64.ln()) / 4.0;
        assert!((w - hand).abs() < 1e-12);
    }

    #[test]
    fn brier_score_matches_scikit_learn_doc_example() {
        // scikit-learn brier_score_loss docs: y = 0, 1, 1, 0; p = .1, .9, .8, .3 → 0.0375
        // (from memory; by hand (.01 + .01 + .04 + .09)/4 = 0.0375).
        let b = brier_score(&[false, true, true, false], &[0.1, 0.9, 0.8, 0.3], None).unwrap();
        assert!((b - 0.0375).abs() < 1e-12);
    }

    #[test]
    fn murphy_decomposition_reproduces_the_hand_case() {
        // CHECK_VALUES (derived, not published): five forecasts of 0.2 with one event and
        // five of 0.8 with four events → BS 0.16, REL 0, RES 0.09, UNC 0.25 (Murphy 1973).
        let probs = [0.2, 0.2, 0.2, 0.2, 0.2, 0.8, 0.8, 0.8, 0.8, 0.8];
        let y = [
            true, false, false, false, false, true, true, true, true, false,
        ];
        for d in [
            brier_decomposition(&y, &probs, 10).unwrap(),
            brier_decomposition_by_forecast(&y, &probs).unwrap(),
        ] {
            assert!((d.brier - 0.16).abs() < 1e-12);
            assert!(d.reliability.abs() < 1e-12);
            assert!((d.resolution - 0.09).abs() < 1e-12);
            assert!((d.uncertainty - 0.25).abs() < 1e-12);
            assert!(d.within_bin.abs() < 1e-12);
        }
    }

    #[test]
    fn murphy_identity_holds_exactly_when_grouping_by_forecast_value() {
        // Murphy (1973): BS = REL − RES + UNC exactly when every group holds one forecast
        // value. Random forecasts on a grid of 7 values.
        let mut rng = ChaCha8Rng::seed_from_u64(3);
        let probs: Vec<f64> = (0..500)
            .map(|_| f64::from(rng.gen_range(0..7)) / 6.0)
            .collect();
        let y: Vec<bool> = probs.iter().map(|&p| rng.r#gen::<f64>() < p).collect();
        let d = brier_decomposition_by_forecast(&y, &probs).unwrap();
        assert!(d.within_bin.abs() < 1e-12);
        assert!((d.brier - brier_score(&y, &probs, None).unwrap()).abs() < 1e-12);
    }

    #[test]
    fn ece_matches_hand_computed_case() {
        // Hand-computed with Guo et al. (2017) bins, M = 2: [0, .5] holds 0, .2, .5 (one
        // event): mean .7/3, rate 1/3, gap 0.1, weight 1/2; (.5, 1] holds .6, .9, 1 (three
        // events): mean 2.5/3, rate 1, gap 1/6, weight 1/2. ECE = .05 + 1/12 = 2/15.
        let probs = [0.0, 0.2, 0.5, 0.6, 0.9, 1.0];
        let y = [false, true, false, true, true, true];
        let ece = expected_calibration_error(&y, &probs, 2).unwrap();
        assert!((ece - 2.0 / 15.0).abs() < 1e-12);
        let table = reliability_table(&y, &probs, 2, 0.95).unwrap();
        assert_eq!(table.bins[0].count, 3);
        assert_eq!(table.bins[0].events, 1);
        assert_eq!(table.bins[1].observed_rate, Some(1.0));
        // The bin's interval is the Wilson interval of 3/3: [3/(3 + z²), 1].
        let z2 = 1.959_963_984_540_054f64.powi(2);
        assert!((table.bins[1].interval.lo - 3.0 / (3.0 + z2)).abs() < 1e-9);
    }

    #[test]
    fn calibration_bins_are_right_closed_on_float_edges() {
        // Guo et al. (2017): bin m is ((m − 1)/M, m/M]; 0 goes to the first bin.
        assert_eq!(calibration_bin(0.0, 10), 0);
        assert_eq!(calibration_bin(0.1, 10), 0);
        assert_eq!(calibration_bin(0.3, 10), 2);
        assert_eq!(calibration_bin(0.300_000_000_000_001, 10), 3);
        assert_eq!(calibration_bin(0.7, 10), 6);
        assert_eq!(calibration_bin(1.0, 10), 9);
        let table = reliability_table(&[true, false], &[0.3, 0.31], 10, 0.9).unwrap();
        assert_eq!(table.bins[2].count, 1);
        assert_eq!(table.bins[3].count, 1);
        assert_eq!(table.bins[5].mean_predicted, None);
        assert_eq!(table.bins[5].interval, Interval::new(0.0, 1.0));
    }

    /// Hanley & McNeil (1982) CT rating data: ratings 1..5 with the given counts.
    fn ct_ratings() -> (Vec<bool>, Vec<f64>) {
        let normal = [33, 6, 6, 11, 2];
        let abnormal = [3, 2, 2, 11, 33];
        let mut y = Vec::new();
        let mut s = Vec::new();
        for (k, (&nn, &na)) in normal.iter().zip(&abnormal).enumerate() {
            for _ in 0..nn {
                y.push(false);
                s.push((k + 1) as f64);
            }
            for _ in 0..na {
                y.push(true);
                s.push((k + 1) as f64);
            }
        }
        (y, s)
    }

    #[test]
    fn auc_and_standard_errors_reproduce_hanley_mcneil_ct_example() {
        // Hanley & McNeil (1982), Radiology 143:29-36, CT ratings (confirmed): AUC 0.893171,
        // SE 0.03249 by their formula; DeLong SE 0.0307 with 95 % CI 0.8330 – 0.9534 as
        // printed in Stata's roctab manual (confirmed / recomputed).
        let (y, s) = ct_ratings();
        let r = roc_auc(&y, &s).unwrap();
        assert_eq!((r.positives, r.negatives), (51, 58));
        assert!((r.auc - 0.893_171).abs() < 1e-6);
        assert!((r.se_hanley_mcneil - 0.032_49).abs() < 0.5e-5);
        assert!((r.se_delong.unwrap() - 0.0307).abs() < 0.5e-4);
        let ci = r.delong_interval(0.95).unwrap().unwrap();
        assert!((ci.lo - 0.8330).abs() < 0.5e-4);
        assert!((ci.hi - 0.9534).abs() < 0.5e-4);
    }

    #[test]
    fn auc_matches_smartcore_on_untied_random_scores() {
        // Cross-check with smartcore 0.4 roc_auc_score (a general-purpose library); its
        // rank code mishandles ties, so the scores here are distinct.
        let mut rng = ChaCha8Rng::seed_from_u64(17);
        let y: Vec<bool> = (0..300).map(|_| rng.gen_bool(0.4)).collect();
        let s: Vec<f64> = y
            .iter()
            .map(|&t| rng.r#gen::<f64>() + if t { 0.3 } else { 0.0 })
            .collect();
        let ours = roc_auc(&y, &s).unwrap().auc;
        let y_f: Vec<f64> = y.iter().map(|&t| f64::from(u8::from(t))).collect();
        let theirs = smartcore::metrics::auc::AUC::<f64>::new().get_score(&y_f, &s);
        assert!((ours - theirs).abs() < 1e-12, "{ours} vs {theirs}");
    }

    #[test]
    fn auc_counts_ties_half_and_needs_both_classes() {
        // Hand check: one positive and one negative with equal scores → AUC 1/2; DeLong is
        // undefined with single members.
        let r = roc_auc(&[true, false], &[0.4, 0.4]).unwrap();
        assert_eq!(r.auc, 0.5);
        assert_eq!(r.se_delong, None);
        assert_eq!(r.delong_interval(0.95).unwrap(), None);
        assert_eq!(
            roc_auc(&[true, true], &[0.1, 0.2]),
            Err(MetricsError::SingleClass {
                positives: 2,
                negatives: 0
            })
        );
        assert_eq!(
            roc_auc(&[true, false], &[0.1, f64::NAN]),
            Err(MetricsError::NonFiniteScore { index: 1 })
        );
    }

    #[test]
    fn confusion_matrix_matches_hand_case() {
        // Hand check at threshold 0.5: p = .9 (won), .6 (lost), .5 (won), .2 (lost), .7 (won)
        // → predicted true for .9, .6, .7: tp 2, fp 1, fn 1 (the .5), tn 1.
        let y = [true, false, true, false, true];
        let p = [0.9, 0.6, 0.5, 0.2, 0.7];
        let m = ConfusionMatrix::at_threshold(&y, &p, 0.5).unwrap();
        assert_eq!(
            m,
            ConfusionMatrix {
                true_pos: 2,
                false_pos: 1,
                true_neg: 1,
                false_neg: 1
            }
        );
        assert_eq!(m.accuracy(), Some(0.6));
        assert_eq!(m.precision(), Some(2.0 / 3.0));
        assert_eq!(m.recall(), Some(2.0 / 3.0));
        assert_eq!(m.balanced_accuracy(), Some(0.5 * (2.0 / 3.0 + 0.5)));
        assert!((m.f1().unwrap() - 2.0 / 3.0).abs() < 1e-12);
    }

    #[test]
    fn classification_scores_match_smartcore_on_a_random_case() {
        // Cross-check with smartcore 0.4 metrics (accuracy, precision, recall, F1); balanced
        // accuracy as the mean of smartcore's recall on the labels and on the flipped labels.
        let mut rng = ChaCha8Rng::seed_from_u64(23);
        let y: Vec<bool> = (0..400).map(|_| rng.gen_bool(0.45)).collect();
        let p: Vec<f64> = y
            .iter()
            .map(|&t| (rng.r#gen::<f64>() * 0.8 + if t { 0.2 } else { 0.0 }).min(1.0))
            .collect();
        let m = ConfusionMatrix::at_threshold(&y, &p, 0.5).unwrap();
        let to_f = |v: &[bool]| -> Vec<f64> { v.iter().map(|&t| f64::from(u8::from(t))).collect() };
        let y_f = to_f(&y);
        let pred: Vec<bool> = p.iter().map(|&q| q > 0.5).collect();
        let pred_f = to_f(&pred);
        use smartcore::metrics::{
            accuracy::Accuracy, f1::F1, precision::Precision, recall::Recall,
        };
        let close = |a: Option<f64>, b: f64| (a.unwrap() - b).abs() < 1e-12;
        assert!(close(
            m.accuracy(),
            Accuracy::<f64>::new().get_score(&y_f, &pred_f)
        ));
        assert!(close(
            m.precision(),
            Precision::<f64>::new().get_score(&y_f, &pred_f)
        ));
        assert!(close(
            m.recall(),
            Recall::<f64>::new().get_score(&y_f, &pred_f)
        ));
        assert!(close(
            m.f1(),
            F1::<f64>::new_with(1.0).get_score(&y_f, &pred_f)
        ));
        let flip = |v: &[f64]| -> Vec<f64> { v.iter().map(|t| 1.0 - t).collect() };
        let specificity = Recall::<f64>::new().get_score(&flip(&y_f), &flip(&pred_f));
        let balanced = 0.5 * (Recall::<f64>::new().get_score(&y_f, &pred_f) + specificity);
        assert!(close(m.balanced_accuracy(), balanced));
    }

    #[test]
    fn empty_inputs_give_errors_or_none_not_nan() {
        assert_eq!(log_loss(&[], &[], None), Err(MetricsError::Empty));
        assert_eq!(brier_score(&[], &[], None), Err(MetricsError::Empty));
        assert_eq!(brier_decomposition(&[], &[], 10), Err(MetricsError::Empty));
        assert_eq!(
            expected_calibration_error(&[], &[], 10),
            Err(MetricsError::Empty)
        );
        assert_eq!(roc_auc(&[], &[]), Err(MetricsError::Empty));
        assert_eq!(
            ConfusionMatrix::at_threshold(&[], &[], 0.5),
            Err(MetricsError::Empty)
        );
        let none = ConfusionMatrix::default();
        assert_eq!(none.accuracy(), None);
        assert_eq!(none.f1(), None);
        assert_eq!(top_pick_accuracy(&[]), (0, 0));
    }

    #[test]
    fn bad_inputs_are_precise_errors() {
        assert_eq!(
            brier_score(&[true], &[0.5, 0.5], None),
            Err(MetricsError::LengthMismatch {
                what: "probabilities",
                expected: 1,
                got: 2
            })
        );
        assert_eq!(
            log_loss(&[true, false], &[0.5, 1.5], None),
            Err(MetricsError::ProbabilityOutOfRange {
                index: 1,
                value: 1.5
            })
        );
        assert!(matches!(
            log_loss(&[true], &[f64::NAN], None),
            Err(MetricsError::ProbabilityOutOfRange { index: 0, .. })
        ));
        assert_eq!(
            log_loss(&[true], &[0.5], Some(&[-1.0])),
            Err(MetricsError::InvalidWeight {
                index: 0,
                value: -1.0
            })
        );
        assert_eq!(
            log_loss(&[true], &[0.5], Some(&[0.0])),
            Err(MetricsError::ZeroTotalWeight)
        );
        assert_eq!(
            expected_calibration_error(&[true], &[0.5], 0),
            Err(MetricsError::NoBins)
        );
    }

    #[test]
    fn top_pick_accuracy_counts_matching_picks() {
        // Hand check: 2 of 3 sessions picked right.
        assert_eq!(top_pick_accuracy(&[(0, 0), (1, 2), (2, 2)]), (2, 3));
    }
}

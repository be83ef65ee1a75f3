//! The one error type of the statistics helpers.

use crate::progress::Cancelled;

/// Why a statistics computation could not be done.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum StatsError {
    /// A confidence level must lie strictly between 0 and 1.
    #[error("confidence level {0} is not strictly between 0 and 1")]
    InvalidConfidence(f64),
    /// A significance level (alpha) must lie strictly between 0 and 1.
    #[error("significance level {0} is not strictly between 0 and 1")]
    InvalidSignificance(f64),
    /// A probability argument was outside its allowed range.
    #[error("{what} = {value} is outside {range}")]
    ProbabilityOutOfRange {
        /// Which argument.
        what: &'static str,
        /// The value given.
        value: f64,
        /// The allowed range, in words.
        range: &'static str,
    },
    /// More successes than trials.
    #[error("{successes} successes out of only {trials} trials")]
    SuccessesExceedTrials {
        /// Successes given.
        successes: u64,
        /// Trials given.
        trials: u64,
    },
    /// A sample that must hold at least one value was empty.
    #[error("sample {0} is empty")]
    EmptySample(&'static str),
    /// A value was NaN or infinite where a finite number is needed.
    #[error("sample {sample} holds a non-finite value at position {index}")]
    NonFinite {
        /// Which sample.
        sample: &'static str,
        /// Position of the bad value.
        index: usize,
    },
    /// The exact distribution was asked for but cannot be used.
    #[error("exact p-value not available: {0}")]
    ExactUnavailable(&'static str),
    /// The rows of a contingency table have different lengths.
    #[error("contingency table row {row} has {len} columns, row 0 has {expected}")]
    RaggedTable {
        /// The offending row.
        row: usize,
        /// Its length.
        len: usize,
        /// Length of the first row.
        expected: usize,
    },
    /// After dropping all-zero rows and columns the table is smaller than 2 × 2.
    #[error(
        "contingency table has {rows} non-empty rows and {cols} non-empty columns; need at least 2 of each"
    )]
    DegenerateTable {
        /// Non-empty rows left.
        rows: usize,
        /// Non-empty columns left.
        cols: usize,
    },
    /// A count parameter must be positive.
    #[error("{what} must be at least {min}, got {value}")]
    TooSmall {
        /// Which parameter.
        what: &'static str,
        /// The value given.
        value: f64,
        /// The least value allowed.
        min: f64,
    },
    /// The two proportions are equal, so no sample size reaches the power asked for.
    #[error("proportions are equal ({0}); no sample size detects a zero difference")]
    NoDifference(f64),
    /// Fewer than two resamples gave a statistic, so no interval can be formed.
    #[error("only {valid} of {requested} bootstrap resamples gave a statistic")]
    TooFewValidResamples {
        /// Resamples whose statistic was defined and finite.
        valid: usize,
        /// Resamples drawn.
        requested: usize,
    },
    /// The work was cancelled.
    #[error(transparent)]
    Cancelled(#[from] Cancelled),
}

/// `Err(InvalidConfidence)` unless `0 < confidence < 1`.
pub(crate) fn check_confidence(confidence: f64) -> Result<(), StatsError> {
    if confidence > 0.0 && confidence < 1.0 {
        Ok(())
    } else {
        Err(StatsError::InvalidConfidence(confidence))
    }
}

//! The one error type of the analysis module.

use crate::progress::Cancelled;
use crate::stats::StatsError;

/// Why an analysis could not be done.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum AnalysisError {
    /// A trace names a session set that was not passed in.
    #[error("trace {trace} refers to session set {set}, but only {sets} set(s) were given")]
    SetOutOfRange {
        /// Position of the trace in the slice given.
        trace: usize,
        /// The set index it holds.
        set: usize,
        /// Number of sets given.
        sets: usize,
    },
    /// A trace names a session its set does not hold.
    #[error(
        "trace {trace} refers to session {session} of set `{set}`, which holds only {sessions}"
    )]
    SessionOutOfRange {
        /// Position of the trace in the slice given.
        trace: usize,
        /// The set's name.
        set: String,
        /// The session index it holds.
        session: usize,
        /// Number of sessions in the set.
        sessions: usize,
    },
    /// A trace's vectors do not fit together or do not fit its session.
    #[error("trace of session `{session}` is malformed: {what}")]
    MalformedTrace {
        /// The session id.
        session: String,
        /// What is wrong, in words.
        what: String,
    },
    /// A parameter is outside its allowed range.
    #[error("{name} = {value} is not allowed: {why}")]
    InvalidParam {
        /// Which parameter.
        name: &'static str,
        /// The value given.
        value: f64,
        /// The allowed range, in words.
        why: &'static str,
    },
    /// There is nothing to analyse.
    #[error("no finished session to analyse in {0}")]
    NoSessions(String),
    /// A statistics helper failed.
    #[error(transparent)]
    Stats(StatsError),
    /// The work was cancelled.
    #[error(transparent)]
    Cancelled(#[from] Cancelled),
}

impl From<StatsError> for AnalysisError {
    /// Keeps a cancellation a cancellation, whichever layer noticed it.
    fn from(e: StatsError) -> Self {
        match e {
            StatsError::Cancelled(c) => AnalysisError::Cancelled(c),
            other => AnalysisError::Stats(other),
        }
    }
}

/// `Err(InvalidParam)` unless `0 < threshold ≤ 1` (a win-chance threshold).
pub(crate) fn check_threshold(name: &'static str, threshold: f64) -> Result<(), AnalysisError> {
    if threshold > 0.0 && threshold <= 1.0 {
        Ok(())
    } else {
        Err(AnalysisError::InvalidParam {
            name,
            value: threshold,
            why: "expected a win chance above 0 and at most 1",
        })
    }
}

/// `Err(InvalidParam)` unless `0 < value < 1`.
pub(crate) fn check_open_unit(name: &'static str, value: f64) -> Result<(), AnalysisError> {
    if value > 0.0 && value < 1.0 {
        Ok(())
    } else {
        Err(AnalysisError::InvalidParam {
            name,
            value,
            why: "expected a value strictly between 0 and 1",
        })
    }
}

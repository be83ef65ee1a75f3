//! Errors returned when a model cannot be fitted.

use crate::progress::Cancelled;

/// A hyperparameter value outside its valid range.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("invalid parameter `{name}`: {reason}")]
pub struct ParamError {
    /// The parameter's field name.
    pub name: &'static str,
    /// Why the value is not accepted, with the value itself.
    pub reason: String,
}

impl ParamError {
    /// A new error for parameter `name`.
    pub fn new(name: &'static str, reason: impl Into<String>) -> Self {
        Self {
            name,
            reason: reason.into(),
        }
    }
}

/// Why a fit (or a computation on fitted data) failed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FitError {
    /// The matrix values do not fill `n_rows × n_cols`.
    #[error("matrix shape {n_rows}×{n_cols} needs {expected} values, got {actual}")]
    MatrixShape {
        /// Rows asked for.
        n_rows: usize,
        /// Columns asked for.
        n_cols: usize,
        /// `n_rows * n_cols`.
        expected: usize,
        /// Values given.
        actual: usize,
    },
    /// Two inputs that must have one entry per row disagree.
    #[error("{what} has {actual} entries but the matrix has {expected} rows")]
    LengthMismatch {
        /// Which input (labels, weights, validation labels ...).
        what: &'static str,
        /// Rows of the matrix.
        expected: usize,
        /// Entries given.
        actual: usize,
    },
    /// A matrix whose column count differs from the one the model was fitted on.
    #[error("{what} has {actual} columns but {expected} were expected")]
    ColumnMismatch {
        /// Which matrix.
        what: &'static str,
        /// Columns expected.
        expected: usize,
        /// Columns given.
        actual: usize,
    },
    /// No rows (or no columns) to learn from.
    #[error("no data: {0}")]
    Empty(&'static str),
    /// A label is NaN.
    #[error("label at row {row} is NaN")]
    NanLabel {
        /// Row index of the first NaN label.
        row: usize,
    },
    /// A label is outside 0..=1 (labels are win indicators or win fractions).
    #[error("label at row {row} is {value}, outside 0..=1")]
    LabelOutOfRange {
        /// Row index.
        row: usize,
        /// The value found.
        value: f32,
    },
    /// A weight is negative, NaN or infinite, or all weights are zero.
    #[error("weight at row {row} is {value}; weights must be finite, ≥ 0 and not all 0")]
    BadWeight {
        /// Row index (the row count when all weights are zero).
        row: usize,
        /// The value found.
        value: f32,
    },
    /// A feature value is ±∞ (the logistic regression needs finite values; NaN means missing).
    #[error("feature value at row {row}, column {col} is infinite")]
    InfiniteFeature {
        /// Row index.
        row: usize,
        /// Column index.
        col: usize,
    },
    /// More rows than the row indices (32-bit) can address.
    #[error("{rows} rows is more than the {max} this learner supports")]
    TooManyRows {
        /// Rows given.
        rows: usize,
        /// The limit.
        max: usize,
    },
    /// The observed information is singular, so standard errors do not exist.
    #[error("observed information matrix is singular (perfect separation or collinear columns)")]
    SingularInformation,
    /// The caller asked the fit to stop.
    #[error("cancelled")]
    Cancelled,
    /// A hyperparameter is out of range.
    #[error(transparent)]
    InvalidParams(#[from] ParamError),
}

impl From<Cancelled> for FitError {
    fn from(_: Cancelled) -> Self {
        FitError::Cancelled
    }
}

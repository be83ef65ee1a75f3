//! Validation of labels and weights shared by both learners.

use super::fit_error::FitError;

/// Checks that `y` (and `weights`, if given) have one finite entry per row, labels in 0..=1
/// and weights ≥ 0 with a positive sum.
pub fn check_labels_and_weights(
    n_rows: usize,
    y: &[f32],
    weights: Option<&[f32]>,
) -> Result<(), FitError> {
    if n_rows == 0 {
        return Err(FitError::Empty("the matrix has no rows"));
    }
    if y.len() != n_rows {
        return Err(FitError::LengthMismatch {
            what: "labels",
            expected: n_rows,
            actual: y.len(),
        });
    }
    for (row, &value) in y.iter().enumerate() {
        if value.is_nan() {
            return Err(FitError::NanLabel { row });
        }
        if !(0.0..=1.0).contains(&value) {
            return Err(FitError::LabelOutOfRange { row, value });
        }
    }
    if let Some(w) = weights {
        if w.len() != n_rows {
            return Err(FitError::LengthMismatch {
                what: "weights",
                expected: n_rows,
                actual: w.len(),
            });
        }
        let mut total = 0.0f64;
        for (row, &value) in w.iter().enumerate() {
            if !value.is_finite() || value < 0.0 {
                return Err(FitError::BadWeight { row, value });
            }
            total += f64::from(value);
        }
        if total <= 0.0 {
            return Err(FitError::BadWeight {
                row: n_rows,
                value: 0.0,
            });
        }
    }
    Ok(())
}

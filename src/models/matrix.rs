//! A dense row-major feature matrix of `f32` values.

use rayon::prelude::*;

use super::fit_error::FitError;

/// A dense matrix, one row per game turn and one column per feature, stored row-major.
#[derive(Debug, Clone, PartialEq)]
pub struct Matrix {
    n_rows: usize,
    n_cols: usize,
    values: Vec<f32>,
}

impl Matrix {
    /// A matrix from row-major `values`; fails when `values.len() != n_rows * n_cols`.
    pub fn new(n_rows: usize, n_cols: usize, values: Vec<f32>) -> Result<Self, FitError> {
        let expected = n_rows.checked_mul(n_cols);
        if expected != Some(values.len()) {
            return Err(FitError::MatrixShape {
                n_rows,
                n_cols,
                expected: expected.unwrap_or(usize::MAX),
                actual: values.len(),
            });
        }
        Ok(Self {
            n_rows,
            n_cols,
            values,
        })
    }

    /// An all-zero matrix.
    pub fn zeros(n_rows: usize, n_cols: usize) -> Self {
        Self {
            n_rows,
            n_cols,
            values: vec![0.0; n_rows * n_cols],
        }
    }

    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.n_rows
    }

    /// Number of columns.
    pub fn n_cols(&self) -> usize {
        self.n_cols
    }

    /// All values, row-major.
    pub fn values(&self) -> &[f32] {
        &self.values
    }

    /// Row `i`; panics when `i >= n_rows` (an index bug, not a data problem).
    pub fn row(&self, i: usize) -> &[f32] {
        &self.values[i * self.n_cols..(i + 1) * self.n_cols]
    }

    /// The value at row `i`, column `j`; panics when out of range.
    pub fn get(&self, i: usize, j: usize) -> f32 {
        assert!(j < self.n_cols, "column {j} out of range");
        self.values[i * self.n_cols + j]
    }

    /// Sets the value at row `i`, column `j`; panics when out of range.
    pub fn set(&mut self, i: usize, j: usize, value: f32) {
        assert!(j < self.n_cols, "column {j} out of range");
        self.values[i * self.n_cols + j] = value;
    }

    /// A new matrix holding the given rows in the given order; panics on an out-of-range index.
    pub fn select_rows(&self, rows: &[usize]) -> Matrix {
        let mut values = vec![0f32; rows.len() * self.n_cols];
        if self.n_cols > 0 {
            // Copied in parallel blocks of rows (large tables are tens of megabytes).
            const BLOCK: usize = 1024;
            values
                .par_chunks_mut(BLOCK * self.n_cols)
                .zip(rows.par_chunks(BLOCK))
                .for_each(|(out, block)| {
                    for (o, &i) in out.chunks_mut(self.n_cols).zip(block) {
                        o.copy_from_slice(self.row(i));
                    }
                });
        }
        Matrix {
            n_rows: rows.len(),
            n_cols: self.n_cols,
            values,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn new_rejects_values_that_do_not_fill_the_shape() {
        assert!(matches!(
            Matrix::new(2, 3, vec![0.0; 5]),
            Err(FitError::MatrixShape { expected: 6, .. })
        ));
    }

    #[test]
    fn select_rows_keeps_the_requested_order() {
        let m = Matrix::new(3, 2, vec![1.0, 2.0, 3.0, 4.0, 5.0, 6.0]).unwrap();
        let s = m.select_rows(&[2, 0]);
        assert_eq!(s.n_rows(), 2);
        assert_eq!(s.row(0), &[5.0, 6.0]);
        assert_eq!(s.get(1, 1), 2.0);
    }
}

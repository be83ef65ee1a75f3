//! Column means, scales and missing-value fill-ins computed once before fitting.

use rayon::prelude::*;

use super::super::matrix::Matrix;
use super::row_passes::CHUNK_ROWS;

/// Per-column statistics used to standardise and to fill in NaN values.
pub struct ColumnScaling {
    /// Means subtracted before scaling (0 when not standardising).
    pub means: Vec<f64>,
    /// Standard deviations divided by (1 when not standardising or for constant columns).
    pub scales: Vec<f64>,
    /// Fill-in for NaN: the mean of the column's other values (0 when all are NaN).
    pub impute: Vec<f64>,
    /// Whether the column's coefficient is estimated (false for constant columns).
    pub free: Vec<bool>,
    /// Whether any value is NaN.
    has_nan: bool,
}

/// Per-chunk running totals: count, sum, min, max, NaN seen.
#[derive(Clone)]
struct Totals {
    count: Vec<u64>,
    sum: Vec<f64>,
    min: Vec<f64>,
    max: Vec<f64>,
    has_nan: bool,
}

fn chunk_ranges(n_rows: usize) -> Vec<(usize, usize)> {
    (0..n_rows.div_ceil(CHUNK_ROWS))
        .map(|c| (c * CHUNK_ROWS, ((c + 1) * CHUNK_ROWS).min(n_rows)))
        .collect()
}

/// Computes the scaling of every column of `x`; with `standardize` false the means are 0
/// and the scales 1, but constant columns are still found.
pub fn column_scaling(x: &Matrix, standardize: bool) -> ColumnScaling {
    let p = x.n_cols();
    let empty = Totals {
        count: vec![0; p],
        sum: vec![0.0; p],
        min: vec![f64::INFINITY; p],
        max: vec![f64::NEG_INFINITY; p],
        has_nan: false,
    };
    let partials: Vec<Totals> = chunk_ranges(x.n_rows())
        .into_par_iter()
        .map(|(lo, hi)| {
            let mut t = empty.clone();
            for i in lo..hi {
                for (j, &v) in x.row(i).iter().enumerate() {
                    if v.is_nan() {
                        t.has_nan = true;
                        continue;
                    }
                    let v = f64::from(v);
                    t.count[j] += 1;
                    t.sum[j] += v;
                    t.min[j] = t.min[j].min(v);
                    t.max[j] = t.max[j].max(v);
                }
            }
            t
        })
        .collect();
    // Merge in chunk order so the result does not depend on scheduling.
    let mut total = empty;
    for t in &partials {
        for j in 0..p {
            total.count[j] += t.count[j];
            total.sum[j] += t.sum[j];
            total.min[j] = total.min[j].min(t.min[j]);
            total.max[j] = total.max[j].max(t.max[j]);
        }
        total.has_nan |= t.has_nan;
    }
    let mean: Vec<f64> = (0..p)
        .map(|j| {
            if total.count[j] == 0 {
                0.0
            } else {
                total.sum[j] / total.count[j] as f64
            }
        })
        .collect();
    // Constant means every present value is equal (or none is present).
    let free: Vec<bool> = (0..p)
        .map(|j| total.count[j] > 0 && total.max[j] > total.min[j])
        .collect();
    let (means, scales) = if standardize {
        let squares: Vec<Vec<f64>> = chunk_ranges(x.n_rows())
            .into_par_iter()
            .map(|(lo, hi)| {
                let mut s = vec![0.0; p];
                for i in lo..hi {
                    for (j, &v) in x.row(i).iter().enumerate() {
                        if !v.is_nan() {
                            let d = f64::from(v) - mean[j];
                            s[j] += d * d;
                        }
                    }
                }
                s
            })
            .collect();
        let mut ss = vec![0.0; p];
        for s in &squares {
            for j in 0..p {
                ss[j] += s[j];
            }
        }
        let scales = (0..p)
            .map(|j| {
                let sd = (ss[j] / total.count[j].max(1) as f64).sqrt();
                if free[j] && sd > 0.0 { sd } else { 1.0 }
            })
            .collect();
        (mean.clone(), scales)
    } else {
        (vec![0.0; p], vec![1.0; p])
    };
    ColumnScaling {
        means,
        scales,
        impute: mean,
        free,
        has_nan: total.has_nan,
    }
}

impl ColumnScaling {
    /// A copy of `x` with NaN replaced by the column fill-in, or `None` when `x` has no NaN.
    pub fn impute_copy(&self, x: &Matrix) -> Option<Matrix> {
        if self.has_nan {
            impute_with(x, &self.impute)
        } else {
            None
        }
    }
}

/// A copy of `x` with NaN in column `j` replaced by `fill[j]`, or `None` when there is no NaN.
pub fn impute_with(x: &Matrix, fill: &[f64]) -> Option<Matrix> {
    if !x.values().iter().any(|v| v.is_nan()) {
        return None;
    }
    let p = x.n_cols();
    let values = x
        .values()
        .iter()
        .enumerate()
        .map(|(k, &v)| if v.is_nan() { fill[k % p] as f32 } else { v })
        .collect();
    Matrix::new(x.n_rows(), p, values).ok()
}

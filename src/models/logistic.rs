//! L2-penalised logistic regression fitted by a trust-region Newton method with conjugate
//! gradients (Steihaug), using Hessian-vector products so no `p × p` matrix is ever formed.
//!
//! Rows are processed in parallel in fixed-size chunks whose partial sums are added in chunk
//! order, so the fit is bit-identical at any thread count.

use serde::{Deserialize, Serialize};

use super::fit_error::{FitError, ParamError};
use super::matrix::Matrix;
use super::weighted_rows::check_labels_and_weights;
use crate::progress::{Cancel, Progress};

mod row_passes;
mod scaling;
mod trust_region;

use row_passes::{Design, information_matrix};
use scaling::{ColumnScaling, column_scaling};

/// What every fit on one matrix needs to know about its columns, computed once: checked for
/// infinite values, column means and scales, and a copy with missing values filled in when
/// there are any. A penalty path fits the same rows several times; each fit would otherwise
/// repeat these passes over the whole matrix.
pub struct PreparedRows {
    scaling: ColumnScaling,
    imputed: Option<Matrix>,
    standardize: bool,
    shape: (usize, usize),
}

/// Hyperparameters of the logistic regression.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LogisticParams {
    /// Penalty λ on the standardised coefficients: the objective is the mean weighted log loss
    /// plus λ/2·‖β‖²; the intercept is not penalised; λ = 0 is plain maximum likelihood.
    pub l2: f64,
    /// Most Newton (outer) iterations.
    pub max_iter: usize,
    /// Converged when the largest gradient entry of the objective is below this.
    pub tol: f64,
    /// Centre and scale each column to unit standard deviation before fitting (the penalty
    /// then treats all features alike); coefficients are reported on both scales.
    pub standardize: bool,
}

impl Default for LogisticParams {
    fn default() -> Self {
        Self {
            l2: 1e-4,
            max_iter: 100,
            tol: 1e-7,
            standardize: true,
        }
    }
}

impl LogisticParams {
    /// Checks every field is in range.
    pub fn check(&self) -> Result<(), ParamError> {
        if !(self.l2.is_finite() && self.l2 >= 0.0) {
            return Err(ParamError::new(
                "l2",
                format!("{} is not a finite value ≥ 0", self.l2),
            ));
        }
        if self.max_iter == 0 {
            return Err(ParamError::new("max_iter", "must be at least 1"));
        }
        if !(self.tol.is_finite() && self.tol > 0.0) {
            return Err(ParamError::new(
                "tol",
                format!("{} is not a finite value > 0", self.tol),
            ));
        }
        Ok(())
    }

    /// Fits the model to rows `x`, labels `y` in 0..=1 and optional non-negative row weights.
    ///
    /// NaN feature values are replaced by the column mean (see the module docs of `models`).
    pub fn fit(
        &self,
        x: &Matrix,
        y: &[f32],
        weights: Option<&[f32]>,
        progress: &dyn Progress,
        cancel: &Cancel,
    ) -> Result<Logistic, FitError> {
        self.fit_from(x, y, weights, None, progress, cancel)
    }

    /// [`Self::fit`] started from an earlier fit on the same rows (`start`, usually with a
    /// neighbouring penalty) or on a subset of them: the same minimum, reached in fewer
    /// iterations. A start fitted on other rows is carried over to this fit's column scale
    /// (the same linear predictor); one with another column count is ignored.
    pub fn fit_from(
        &self,
        x: &Matrix,
        y: &[f32],
        weights: Option<&[f32]>,
        start: Option<&Logistic>,
        progress: &dyn Progress,
        cancel: &Cancel,
    ) -> Result<Logistic, FitError> {
        let prepared = self.prepare(x)?;
        self.fit_prepared(x, &prepared, y, weights, start, progress, cancel)
    }

    /// Checks `x` and computes what every fit on it shares (for [`Self::fit_prepared`]).
    pub fn prepare(&self, x: &Matrix) -> Result<PreparedRows, FitError> {
        check_finite_features(x)?;
        let scaling = column_scaling(x, self.standardize);
        let imputed = scaling.impute_copy(x);
        Ok(PreparedRows {
            scaling,
            imputed,
            standardize: self.standardize,
            shape: (x.n_rows(), x.n_cols()),
        })
    }

    /// [`Self::fit_from`] on rows `x` prepared beforehand by [`Self::prepare`] (with any
    /// penalty; rows prepared for another `standardize` setting, or of another shape, are
    /// prepared again). The result is identical to `fit_from`.
    #[allow(clippy::too_many_arguments)]
    pub fn fit_prepared(
        &self,
        x: &Matrix,
        prepared: &PreparedRows,
        y: &[f32],
        weights: Option<&[f32]>,
        start: Option<&Logistic>,
        progress: &dyn Progress,
        cancel: &Cancel,
    ) -> Result<Logistic, FitError> {
        self.check()?;
        check_labels_and_weights(x.n_rows(), y, weights)?;
        if prepared.standardize != self.standardize || prepared.shape != (x.n_rows(), x.n_cols()) {
            let again = self.prepare(x)?;
            return self.fit_prepared(x, &again, y, weights, start, progress, cancel);
        }
        let scaling = &prepared.scaling;
        let x_used = prepared.imputed.as_ref().unwrap_or(x);
        let design = Design::new(
            x_used,
            y,
            weights,
            &scaling.means,
            &scaling.scales,
            &scaling.free,
        );
        let start_theta: Option<Vec<f64>> = start
            .filter(|s| s.coefficients.len() == x.n_cols())
            .map(|s| start_on_scale(s, &scaling.means, &scaling.scales, &scaling.free));
        let outcome =
            trust_region::minimise(&design, self, start_theta.as_deref(), progress, cancel)?;
        let p = x.n_cols();
        let mut coefficients = outcome.beta;
        for (j, c) in coefficients.iter_mut().enumerate().take(p) {
            if !scaling.free[j] {
                *c = 0.0;
            }
        }
        Ok(Logistic {
            means: scaling.means.clone(),
            scales: scaling.scales.clone(),
            impute: scaling.impute.clone(),
            estimated: scaling.free.clone(),
            coefficients,
            intercept: outcome.intercept,
            l2: self.l2,
            iterations: outcome.iterations,
            converged: outcome.converged,
        })
    }
}

/// `start`'s coefficients (and intercept, last) on the standardised scale given by `means`,
/// `scales` and `free`: the same linear predictor on every row, so a fit on other rows (with
/// other column means and scales) starts where that fit ended.
fn start_on_scale(start: &Logistic, means: &[f64], scales: &[f64], free: &[bool]) -> Vec<f64> {
    if start.means == means && start.scales == scales && start.estimated == free {
        let mut t = start.coefficients.clone();
        t.push(start.intercept);
        return t;
    }
    let raw = start.raw_coefficients();
    let mut intercept = start.raw_intercept();
    let mut t: Vec<f64> = raw
        .iter()
        .zip(scales)
        .zip(free)
        .zip(means)
        .map(|(((&u, &s), &f), &m)| {
            // A column not estimated here is constant (its mean): its part joins the intercept.
            intercept += u * m;
            if f { u * s } else { 0.0 }
        })
        .collect();
    t.push(intercept);
    t
}

/// A fitted logistic regression.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Logistic {
    /// Column means subtracted before scaling (0 when not standardised).
    pub means: Vec<f64>,
    /// Column scales divided by (1 when not standardised, and for constant columns).
    pub scales: Vec<f64>,
    /// Value used for a missing (NaN) feature: the column mean at fit time.
    pub impute: Vec<f64>,
    /// Whether each column's coefficient was estimated (false for constant columns).
    pub estimated: Vec<bool>,
    /// Coefficients on the standardised scale (0 for constant columns).
    pub coefficients: Vec<f64>,
    /// Intercept on the standardised scale.
    pub intercept: f64,
    /// The penalty the model was fitted with.
    pub l2: f64,
    /// Newton iterations used.
    pub iterations: usize,
    /// Whether the gradient tolerance was met within `max_iter`.
    pub converged: bool,
}

impl Logistic {
    /// Coefficients for the original feature scale.
    pub fn raw_coefficients(&self) -> Vec<f64> {
        self.coefficients
            .iter()
            .zip(&self.scales)
            .map(|(c, s)| c / s)
            .collect()
    }

    /// Intercept for the original feature scale.
    pub fn raw_intercept(&self) -> f64 {
        self.intercept
            - self
                .raw_coefficients()
                .iter()
                .zip(&self.means)
                .map(|(u, m)| u * m)
                .sum::<f64>()
    }

    /// The log-odds for each row; a matrix with the wrong column count gives NaN margins.
    pub fn predict_margin(&self, x: &Matrix) -> Vec<f64> {
        if x.n_cols() != self.coefficients.len() {
            return vec![f64::NAN; x.n_rows()];
        }
        let u = self.raw_coefficients();
        let c = self.raw_intercept();
        (0..x.n_rows())
            .map(|i| {
                let row = x.row(i);
                let mut z = c;
                for j in 0..row.len() {
                    let v = row[j];
                    let v = if v.is_nan() {
                        self.impute[j]
                    } else {
                        f64::from(v)
                    };
                    z += u[j] * v;
                }
                z
            })
            .collect()
    }

    /// The win probability for each row.
    pub fn predict_proba(&self, x: &Matrix) -> Vec<f64> {
        self.predict_margin(x).into_iter().map(sigmoid).collect()
    }

    /// Weighted log-likelihood Σ wᵢ [yᵢ ln pᵢ + (1 − yᵢ) ln(1 − pᵢ)] of data under the model.
    pub fn log_likelihood(
        &self,
        x: &Matrix,
        y: &[f32],
        weights: Option<&[f32]>,
    ) -> Result<f64, FitError> {
        self.check_data(x, y, weights)?;
        let margins = self.predict_margin(x);
        Ok(margins
            .iter()
            .enumerate()
            .map(|(i, &z)| {
                let w = weights.map_or(1.0, |w| f64::from(w[i]));
                -w * (softplus(z) - f64::from(y[i]) * z)
            })
            .sum())
    }

    /// Standard errors from the inverse observed information of the (penalised) objective at
    /// the fitted coefficients, on the original feature scale and with the weights taken as
    /// frequency weights. Element 0 is the intercept, element `j + 1` feature `j`; constant
    /// columns (whose coefficient is fixed at 0) get NaN.
    pub fn standard_errors(
        &self,
        x: &Matrix,
        y: &[f32],
        weights: Option<&[f32]>,
    ) -> Result<Vec<f64>, FitError> {
        self.check_data(x, y, weights)?;
        check_finite_features(x)?;
        let p = self.coefficients.len();
        let free: Vec<usize> = (0..p).filter(|&j| self.estimated[j]).collect();
        let imputed = scaling::impute_with(x, &self.impute);
        let x_used = imputed.as_ref().unwrap_or(x);
        let u = self.raw_coefficients();
        let c = self.raw_intercept();
        let mut info = information_matrix(x_used, weights, &u, c, &free);
        let total_weight =
            weights.map_or(x.n_rows() as f64, |w| w.iter().map(|&v| f64::from(v)).sum());
        // The penalty λ/2·Σ (s_j u_j)² on the mean loss becomes W·λ·s_j² on the summed scale.
        let k = free.len() + 1;
        for (a, &j) in free.iter().enumerate() {
            info[(a + 1) * k + a + 1] += total_weight * self.l2 * self.scales[j] * self.scales[j];
        }
        let inverse_diag = inverse_diagonal(&mut info, k).ok_or(FitError::SingularInformation)?;
        let mut se = vec![f64::NAN; p + 1];
        se[0] = inverse_diag[0].sqrt();
        for (a, &j) in free.iter().enumerate() {
            se[j + 1] = inverse_diag[a + 1].sqrt();
        }
        Ok(se)
    }

    fn check_data(&self, x: &Matrix, y: &[f32], weights: Option<&[f32]>) -> Result<(), FitError> {
        if x.n_cols() != self.coefficients.len() {
            return Err(FitError::ColumnMismatch {
                what: "feature matrix",
                expected: self.coefficients.len(),
                actual: x.n_cols(),
            });
        }
        check_labels_and_weights(x.n_rows(), y, weights)
    }
}

/// Fails on the first ±∞ feature value (NaN is allowed: it means missing).
fn check_finite_features(x: &Matrix) -> Result<(), FitError> {
    match x.values().iter().position(|v| v.is_infinite()) {
        Some(k) => Err(FitError::InfiniteFeature {
            row: k / x.n_cols(),
            col: k % x.n_cols(),
        }),
        None => Ok(()),
    }
}

/// The logistic function, computed without overflow.
pub fn sigmoid(z: f64) -> f64 {
    if z >= 0.0 {
        1.0 / (1.0 + (-z).exp())
    } else {
        let e = z.exp();
        e / (1.0 + e)
    }
}

/// ln(1 + eᶻ), computed without overflow.
pub fn softplus(z: f64) -> f64 {
    z.max(0.0) + (-z.abs()).exp().ln_1p()
}

/// Diagonal of the inverse of a symmetric positive-definite `k × k` matrix (row-major), by
/// Cholesky factorisation; `None` when the matrix is not positive definite.
fn inverse_diagonal(a: &mut [f64], k: usize) -> Option<Vec<f64>> {
    // In-place Cholesky: lower triangle holds L with A = L·Lᵀ.
    for j in 0..k {
        let mut d = a[j * k + j];
        for m in 0..j {
            d -= a[j * k + m] * a[j * k + m];
        }
        if d.is_nan() || d <= 1e-300 || d.is_infinite() {
            return None;
        }
        let d = d.sqrt();
        a[j * k + j] = d;
        for i in j + 1..k {
            let mut s = a[i * k + j];
            for m in 0..j {
                s -= a[i * k + m] * a[j * k + m];
            }
            a[i * k + j] = s / d;
        }
    }
    // A⁻¹ = L⁻ᵀL⁻¹, so (A⁻¹)_ii is the squared norm of column i of L⁻¹.
    let mut diag = vec![0.0; k];
    let mut col = vec![0.0; k];
    for i in 0..k {
        // Forward substitution L·z = e_i; z is zero above row i.
        col.iter_mut().for_each(|v| *v = 0.0);
        col[i] = 1.0 / a[i * k + i];
        for r in i + 1..k {
            let mut s = 0.0;
            for m in i..r {
                s -= a[r * k + m] * col[m];
            }
            col[r] = s / a[r * k + r];
        }
        diag[i] = col[i..].iter().map(|v| v * v).sum();
    }
    Some(diag)
}

#[cfg(test)]
mod tests;

//! Trust-region Newton method with a Steihaug conjugate-gradient inner solver, following the
//! step and radius rules of Lin, Weng & Keerthi (2008), "Trust region Newton method for
//! large-scale logistic regression", JMLR 9:627-650.

use super::super::fit_error::FitError;
use super::LogisticParams;
use super::row_passes::Design;
use crate::progress::{Cancel, Progress};

/// Where the solver stopped.
pub struct Outcome {
    /// Standardised-scale coefficients.
    pub beta: Vec<f64>,
    /// Standardised-scale intercept.
    pub intercept: f64,
    /// Outer iterations used.
    pub iterations: usize,
    /// Whether the gradient tolerance was met.
    pub converged: bool,
}

const ETA0: f64 = 1e-4;
const ETA1: f64 = 0.25;
const ETA2: f64 = 0.75;
const SIGMA1: f64 = 0.25;
const SIGMA2: f64 = 0.5;
const SIGMA3: f64 = 4.0;
/// Inner solve accuracy relative to the gradient norm.
const CG_RELATIVE_TOL: f64 = 0.1;

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

fn norm(a: &[f64]) -> f64 {
    dot(a, a).sqrt()
}

/// Penalised objective, gradient and per-row curvature at `theta` (intercept last).
fn evaluate(design: &Design, l2: f64, theta: &[f64], curvature: &mut [f64]) -> (f64, Vec<f64>) {
    let p = design.n_cols();
    let (loss, mut grad) = design.loss_and_gradient(theta, curvature);
    let penalty: f64 = theta[..p].iter().map(|b| b * b).sum::<f64>() * 0.5 * l2;
    for j in 0..p {
        if grad[j] != 0.0 || theta[j] != 0.0 {
            grad[j] += l2 * theta[j];
        }
    }
    (loss + penalty, grad)
}

fn hessian_times(design: &Design, l2: f64, curvature: &[f64], v: &[f64]) -> Vec<f64> {
    let p = design.n_cols();
    let mut hv = design.hessian_times(curvature, v);
    for j in 0..p {
        hv[j] += l2 * v[j];
    }
    hv
}

/// Minimises the penalised mean log loss.
///
/// `start` (coefficients then intercept, on the standardised scale) starts the search from an
/// earlier solution, such as the fit with a neighbouring penalty on the same rows; the
/// minimum found is the same, only fewer iterations are needed.
pub fn minimise(
    design: &Design,
    params: &LogisticParams,
    start: Option<&[f64]>,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<Outcome, FitError> {
    let p = design.n_cols();
    let l2 = params.l2;
    let mut theta = match start {
        Some(s) if s.len() == p + 1 && s.iter().all(|v| v.is_finite()) => s.to_vec(),
        _ => {
            // The intercept-only fit, which is optimal for the intercept at β = 0.
            let mean = design.mean_label().clamp(1e-12, 1.0 - 1e-12);
            let mut t = vec![0.0; p + 1];
            t[p] = (mean / (1.0 - mean)).ln();
            t
        }
    };
    let mut curvature = vec![0.0; design.n_rows()];
    let mut trial_curvature = vec![0.0; design.n_rows()];
    let (mut f, mut g) = evaluate(design, l2, &theta, &mut curvature);
    // A cold start takes ‖g‖ as its first radius; a warm start's gradient is already small,
    // so its first step is the full Newton step (the radius then follows that step's size).
    let mut delta = if start.is_some() {
        f64::INFINITY
    } else {
        norm(&g)
    };
    let mut converged = false;
    let mut iterations = 0;
    while iterations < params.max_iter {
        if g.iter().fold(0.0f64, |m, v| m.max(v.abs())) <= params.tol {
            converged = true;
            break;
        }
        cancel.check()?;
        progress.report(
            "logistic regression",
            iterations as f64 / params.max_iter as f64,
        );
        iterations += 1;
        let (step, residual) = steihaug_cg(design, l2, &curvature, &g, delta, cancel)?;
        let trial: Vec<f64> = theta.iter().zip(&step).map(|(t, s)| t + s).collect();
        let gs = dot(&g, &step);
        let predicted = -0.5 * (gs - dot(&step, &residual));
        let (f_new, g_new) = evaluate(design, l2, &trial, &mut trial_curvature);
        let actual = f - f_new;
        let step_norm = norm(&step);
        if iterations == 1 {
            delta = delta.min(step_norm);
        }
        let alpha = if f_new - f - gs <= 0.0 {
            SIGMA3
        } else {
            SIGMA1.max(-0.5 * (gs / (f_new - f - gs)))
        };
        delta = if actual < ETA0 * predicted {
            (alpha.max(SIGMA1) * step_norm).min(SIGMA2 * delta)
        } else if actual < ETA1 * predicted {
            (SIGMA1 * delta).max((alpha * step_norm).min(SIGMA2 * delta))
        } else if actual < ETA2 * predicted {
            (SIGMA1 * delta).max((alpha * step_norm).min(SIGMA3 * delta))
        } else {
            delta.max((alpha * step_norm).min(SIGMA3 * delta))
        };
        if actual > ETA0 * predicted {
            theta = trial;
            f = f_new;
            g = g_new;
            std::mem::swap(&mut curvature, &mut trial_curvature);
        }
        // No further decrease is representable: stop (converged if the gradient is tiny).
        if predicted <= 0.0 || (actual.abs() <= 1e-15 * f.abs() && predicted <= 1e-15 * f.abs()) {
            converged = g.iter().fold(0.0f64, |m, v| m.max(v.abs())) <= params.tol;
            break;
        }
    }
    if !converged && iterations == params.max_iter {
        converged = g.iter().fold(0.0f64, |m, v| m.max(v.abs())) <= params.tol;
    }
    progress.report("logistic regression", 1.0);
    let intercept = theta[p];
    theta.truncate(p);
    Ok(Outcome {
        beta: theta,
        intercept,
        iterations,
        converged,
    })
}

/// Approximately solves H·s = −g within ‖s‖ ≤ delta; returns the step and the residual
/// r = −g − H·s.
fn steihaug_cg(
    design: &Design,
    l2: f64,
    curvature: &[f64],
    g: &[f64],
    delta: f64,
    cancel: &Cancel,
) -> Result<(Vec<f64>, Vec<f64>), FitError> {
    let n = g.len();
    let mut s = vec![0.0; n];
    let mut r: Vec<f64> = g.iter().map(|v| -v).collect();
    let mut d = r.clone();
    let mut rr = dot(&r, &r);
    let tol = CG_RELATIVE_TOL * norm(g);
    for _ in 0..n.max(1) * 2 {
        if rr.sqrt() <= tol {
            break;
        }
        cancel.check()?;
        let hd = hessian_times(design, l2, curvature, &d);
        let dhd = dot(&d, &hd);
        if dhd <= 0.0 {
            // Flat or negative curvature: go to the trust-region boundary along d.
            let tau = boundary_step(&s, &d, delta);
            for k in 0..n {
                s[k] += tau * d[k];
                r[k] -= tau * hd[k];
            }
            break;
        }
        let alpha = rr / dhd;
        let next: Vec<f64> = s.iter().zip(&d).map(|(a, b)| a + alpha * b).collect();
        if norm(&next) > delta {
            let tau = boundary_step(&s, &d, delta);
            for k in 0..n {
                s[k] += tau * d[k];
                r[k] -= tau * hd[k];
            }
            break;
        }
        s = next;
        for k in 0..n {
            r[k] -= alpha * hd[k];
        }
        let rr_new = dot(&r, &r);
        let beta = rr_new / rr;
        for k in 0..n {
            d[k] = r[k] + beta * d[k];
        }
        rr = rr_new;
    }
    Ok((s, r))
}

/// The τ ≥ 0 with ‖s + τ·d‖ = delta.
fn boundary_step(s: &[f64], d: &[f64], delta: f64) -> f64 {
    let sd = dot(s, d);
    let dd = dot(d, d);
    if dd == 0.0 {
        return 0.0;
    }
    let ss = dot(s, s);
    let rad = (sd * sd + dd * (delta * delta - ss)).max(0.0).sqrt();
    if sd >= 0.0 {
        (delta * delta - ss) / (sd + rad)
    } else {
        (rad - sd) / dd
    }
}

//! Hyperparameters of the boosted trees.

use serde::{Deserialize, Serialize};

use super::super::fit_error::ParamError;

/// Hyperparameters of histogram gradient boosting with log loss.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BoostedParams {
    /// Most trees to grow.
    pub max_rounds: usize,
    /// Shrinkage applied to every leaf value.
    pub learning_rate: f64,
    /// Most leaves per tree (trees grow best-leaf-first).
    pub max_leaves: usize,
    /// Deepest a leaf may sit (root = depth 0); `None` for no limit beyond `max_leaves`.
    pub max_depth: Option<usize>,
    /// Fewest training rows in a leaf.
    pub min_rows_per_leaf: usize,
    /// Smallest sum of hessians (weighted p(1−p)) in a leaf.
    pub min_hessian_per_leaf: f64,
    /// L2 penalty on leaf values (added to the hessian sum).
    pub l2_leaf: f64,
    /// Fraction of rows drawn (without replacement, per round) to grow each tree.
    pub row_subsample: f64,
    /// Fraction of features a tree may split on, drawn per round.
    pub feature_subsample: f64,
    /// Most bins per feature (at most 255 so a bin fits in a byte).
    pub max_bins: usize,
    /// Evaluate the losses every this many trees.
    pub eval_every: usize,
    /// Stop after this many evaluations without a better validation loss.
    pub patience: usize,
    /// Seed for the bin sample, row and feature subsampling.
    pub seed: u64,
}

impl Default for BoostedParams {
    fn default() -> Self {
        Self {
            max_rounds: 1000,
            learning_rate: 0.1,
            max_leaves: 31,
            max_depth: None,
            min_rows_per_leaf: 20,
            min_hessian_per_leaf: 1e-3,
            l2_leaf: 1.0,
            row_subsample: 1.0,
            feature_subsample: 1.0,
            max_bins: 255,
            eval_every: 10,
            patience: 3,
            seed: 0,
        }
    }
}

fn fraction(name: &'static str, v: f64) -> Result<(), ParamError> {
    if v.is_finite() && v > 0.0 && v <= 1.0 {
        Ok(())
    } else {
        Err(ParamError::new(name, format!("{v} is not in (0, 1]")))
    }
}

fn non_negative(name: &'static str, v: f64) -> Result<(), ParamError> {
    if v.is_finite() && v >= 0.0 {
        Ok(())
    } else {
        Err(ParamError::new(
            name,
            format!("{v} is not a finite value ≥ 0"),
        ))
    }
}

impl BoostedParams {
    /// Checks every field is in range.
    pub fn check(&self) -> Result<(), ParamError> {
        if self.max_rounds == 0 {
            return Err(ParamError::new("max_rounds", "must be at least 1"));
        }
        if !(self.learning_rate.is_finite() && self.learning_rate > 0.0) {
            return Err(ParamError::new(
                "learning_rate",
                format!("{} is not a finite value > 0", self.learning_rate),
            ));
        }
        if !(2..=65_536).contains(&self.max_leaves) {
            return Err(ParamError::new(
                "max_leaves",
                format!("{} is not in 2..=65536", self.max_leaves),
            ));
        }
        if self.max_depth == Some(0) {
            return Err(ParamError::new(
                "max_depth",
                "must be at least 1 when given",
            ));
        }
        if self.min_rows_per_leaf == 0 {
            return Err(ParamError::new("min_rows_per_leaf", "must be at least 1"));
        }
        non_negative("min_hessian_per_leaf", self.min_hessian_per_leaf)?;
        non_negative("l2_leaf", self.l2_leaf)?;
        fraction("row_subsample", self.row_subsample)?;
        fraction("feature_subsample", self.feature_subsample)?;
        if !(2..=255).contains(&self.max_bins) {
            return Err(ParamError::new(
                "max_bins",
                format!("{} is not in 2..=255", self.max_bins),
            ));
        }
        if self.eval_every == 0 {
            return Err(ParamError::new("eval_every", "must be at least 1"));
        }
        if self.patience == 0 {
            return Err(ParamError::new("patience", "must be at least 1"));
        }
        Ok(())
    }
}

//! Win-chance models: a dense feature matrix, L2-penalised logistic regression and
//! histogram gradient-boosted trees with log loss.
//!
//! Missing values: a NaN feature value means "missing". The boosted trees put it in the zero
//! bin (bin 0, which also holds zero and the smallest values), so it always goes left at a
//! split. The logistic regression replaces it by the column mean seen at fit time, so a
//! missing value adds nothing to the standardised margin. Labels and weights must not be NaN.

pub mod boosted;
pub mod fit_error;
pub mod logistic;
pub mod matrix;
pub mod weighted_rows;

pub use boosted::{Boosted, BoostedParams, EvalRecord};
pub use fit_error::{FitError, ParamError};
pub use logistic::{Logistic, LogisticParams};
pub use matrix::Matrix;
pub mod file;
pub mod win_model;

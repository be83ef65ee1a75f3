//! Validation, the golden rule automated: session-grouped splits, an untouched test share,
//! tuning inside the rest, cross-fitted traces, and the scores of win chances.

pub mod folds;
pub mod metrics;
pub mod quality;
pub mod train;

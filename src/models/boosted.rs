//! Histogram gradient-boosted trees with log loss, laid out by responsibility: parameters,
//! bin edges and binned data, gradient histograms, split search, the row partition, one tree,
//! and the boosting rounds.

pub mod bins;
pub mod booster;
pub mod histogram;
pub mod params;
pub mod partition;
pub mod split;
pub mod tree;

pub use booster::{Boosted, EvalRecord, Validation, ValueRows};
pub use params::BoostedParams;
pub use tree::Tree;

#[cfg(test)]
mod tests;

//! What the win chances say: traces, and (built on them) when games were decided, what swung
//! them, balance between seats, and variant comparisons.

pub mod balance;
pub mod compare;
pub mod decision;
pub mod error;
pub mod findings;
pub mod flow;
pub mod joined;
pub mod swings;
#[cfg(test)]
mod testkit;
pub mod traces;
mod wording;

pub use error::AnalysisError;

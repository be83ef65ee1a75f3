//! tellturn: learns per-turn win chances from recorded sessions of a game or a training exercise,
//! and turns them into answers: when each game was decided, what swung it, whether it is fair
//! between seats, and whether a rule variant changed that.
//!
//! The flow runs one way: files → [`sessions`] → [`features`] → models → traces → [`analysis`] →
//! faces (CLI, dashboard, report). Everything here is the engine: it returns values and errors
//! and never prints. Results describe recorded sessions; they are not forecasts of real-world
//! events and must not drive operational decisions.

pub mod analysis;
pub mod atomic;
pub mod demo;
pub mod evaluate;
pub mod features;
pub mod models;
pub mod progress;
pub mod report;
pub mod sessions;
pub mod stats;
pub mod study;

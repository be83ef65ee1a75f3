//! Turn features: what each actor had done, and what the others had, after every turn.

mod spec;
mod table;

pub use spec::{FeatureParams, FeatureSpec};
pub use table::{
    RowKey, TurnSample, TurnTable, build_table, build_training_table, rows_kept, session_table,
    stable_hash, start_table,
};

#[cfg(test)]
mod tests;

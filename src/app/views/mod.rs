//! The dashboard's views: one file and one struct each, drawing what they are given.

pub mod decided;
pub mod fairness;
pub mod model_check;
pub mod replay;
pub mod roster;
pub mod side_by_side;
pub mod swing_makers;
pub mod table;

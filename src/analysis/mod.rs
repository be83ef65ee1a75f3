//! What the win chances say: traces, and (built on them) when games were decided, what swung
//! them, balance between seats, and variant comparisons.

pub mod traces;

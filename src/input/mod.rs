//! Input grammars (pure functions over byte slices) and the byte sources that feed them.

pub mod edgeline;
pub mod mtx;
pub mod source;

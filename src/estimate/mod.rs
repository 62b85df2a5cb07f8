//! Estimators with honest confidence intervals, for figures too costly to compute exactly.
//! Every estimator takes a seed and gives the same result on any thread count.

pub mod distance;
pub mod hyperball;
pub mod interval;
pub mod sample;
pub mod wedges;

//! Estimators with intervals: wedge and node sampling for clustering, sampled-source BFS and
//! HyperBall for distances, HyperLogLog id sketches for churn, and the interval arithmetic they
//! share. Uses `exact` (each estimator has an exact twin) and `build`.

pub mod distance;
pub(crate) mod hll;
pub mod hyperball;
pub(crate) mod interval;
pub(crate) mod sample;
pub mod sketch;
pub mod wedges;

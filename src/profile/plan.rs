//! The planner's vocabulary: how a figure group's method is chosen ([`Choice`]), which estimator
//! measures distances, and the [`Decision`] the report carries for each group. The costs it
//! weighs live in [`crate::exact::cost`].

use serde::{Deserialize, Serialize};

/// What the planner decided for one figure group, and why.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Decision {
    /// The figure group: "clustering", "distances", "diameter".
    pub group: String,
    /// The method that ran.
    pub method: String,
    /// Predicted seconds of the exact method on this machine.
    pub exact_seconds: f64,
    /// The time allowed for exact methods (`None` when the user chose the method).
    pub budget_seconds: Option<f64>,
    /// One sentence for the report.
    pub reason: String,
}

/// How a figure group's method is chosen.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum Choice {
    /// Exact when it fits the time budget, else the estimator.
    #[default]
    Auto,
    Exact,
    Estimate,
}

/// How the distance figures are estimated when they are.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum DistanceEstimator {
    /// The cheaper of the two for the requested precision.
    #[default]
    Cheaper,
    /// Breadth-first search from sampled sources.
    Sources,
    /// HyperBall over the whole graph.
    Ball,
}

//! The planner's vocabulary: how a figure group's method is chosen ([`Choice`]), which estimator
//! measures distances, and the [`Decision`] the report carries for each group. The costs it
//! weighs live in [`crate::exact::cost`].

use serde::{Deserialize, Serialize};

/// The figure groups the planner decides a method for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(rename_all = "lowercase")]
pub enum Group {
    /// Triangles, transitivity and local clustering.
    Clustering,
    /// Mean distance, distribution, effective diameter.
    Distances,
    /// The reference graphs of the small-world comparison.
    References,
}

impl Group {
    /// The group's name in reports.
    pub fn label(self) -> &'static str {
        match self {
            Group::Clustering => "clustering",
            Group::Distances => "distances",
            Group::References => "references",
        }
    }
}

impl std::fmt::Display for Group {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.label())
    }
}

/// What the planner decided for one figure group, and why.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Decision {
    /// The figure group.
    pub group: Group,
    /// The method that ran.
    pub method: String,
    /// Predicted seconds of the exact method on this machine.
    pub exact_seconds: f64,
    /// Predicted seconds of the method that ran, when the planner predicted it (the stage's
    /// measured time sits beside it in `stages`).
    #[serde(default)]
    pub predicted_seconds: Option<f64>,
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
    /// Always the exact method.
    Exact,
    /// Always the estimator.
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

/// Exact or estimate for one group: the user's choice, or exact when its predicted time fits
/// the budget.
pub(crate) fn decide(choice: Choice, predicted: f64, budget: f64) -> bool {
    match choice {
        Choice::Exact => true,
        Choice::Estimate => false,
        Choice::Auto => predicted <= budget,
    }
}

/// The report's sentence for a decision.
pub(crate) fn why(choice: Choice, exact: bool, what: &str, predicted: f64, budget: f64) -> String {
    match (choice, exact) {
        (Choice::Auto, true) => format!(
            "exact {what} predicted {} on this machine, within the {} budget",
            secs(predicted),
            secs(budget)
        ),
        (Choice::Auto, false) => format!(
            "exact {what} predicted {}, over the {} budget",
            secs(predicted),
            secs(budget)
        ),
        _ => format!(
            "chosen by the user (exact {what} predicted {})",
            secs(predicted)
        ),
    }
}

/// Seconds with the digits a prediction deserves.
pub(crate) fn secs(s: f64) -> String {
    if s < 1.0 {
        format!("{s:.2} s")
    } else if s < 100.0 {
        format!("{s:.1} s")
    } else {
        format!("{s:.2e} s")
    }
}

//! One result type for every figure plumb reports, exact or estimated: the value, how it was
//! obtained, on how much data, and for estimates a standard error and a confidence interval at a
//! stated level. An estimate cannot be made without an interval.

use serde::{Deserialize, Serialize};

/// How a figure was obtained.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(tag = "kind", rename_all = "lowercase")]
pub enum Method {
    /// Computed exactly by the named algorithm.
    Exact { algorithm: String },
    /// Estimated by the named estimator.
    Estimate { estimator: String },
    /// Not computed exactly, but certainly within the interval (level 1): the value is the
    /// lower bound.
    Bounds { algorithm: String },
}

/// A two-sided confidence interval.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Interval {
    pub low: f64,
    pub high: f64,
    /// Nominal coverage, e.g. 0.95.
    pub level: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Figure {
    pub value: f64,
    pub method: Method,
    /// Units of work behind the figure: samples, sources, registers; for exact figures the
    /// number of items it ranges over (nodes, pairs).
    pub sample_size: Option<u64>,
    pub std_error: Option<f64>,
    pub interval: Option<Interval>,
}

impl Figure {
    /// An exact figure.
    pub fn exact(value: f64, algorithm: &str) -> Self {
        Figure {
            value,
            method: Method::Exact {
                algorithm: algorithm.to_string(),
            },
            sample_size: None,
            std_error: None,
            interval: None,
        }
    }

    /// An exact figure over `items` items.
    pub fn exact_over(value: f64, algorithm: &str, items: u64) -> Self {
        Figure {
            sample_size: Some(items),
            ..Figure::exact(value, algorithm)
        }
    }

    /// An estimate; the interval is required.
    pub fn estimate(
        value: f64,
        estimator: &str,
        sample_size: u64,
        std_error: f64,
        interval: Interval,
    ) -> Self {
        Figure {
            value,
            method: Method::Estimate {
                estimator: estimator.to_string(),
            },
            sample_size: Some(sample_size),
            std_error: Some(std_error),
            interval: Some(interval),
        }
    }

    /// A figure known only to lie in `[low, high]` for certain.
    pub fn bounds(low: f64, high: f64, algorithm: &str) -> Self {
        Figure {
            value: low,
            method: Method::Bounds {
                algorithm: algorithm.to_string(),
            },
            sample_size: None,
            std_error: None,
            interval: Some(Interval {
                low,
                high,
                level: 1.0,
            }),
        }
    }

    pub fn is_exact(&self) -> bool {
        matches!(self.method, Method::Exact { .. })
    }
}

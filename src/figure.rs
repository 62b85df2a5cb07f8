//! One result type for every figure plumb reports, exact or estimated: the value, how it was
//! obtained, on how much data, and for estimates a standard error and a confidence interval at a
//! stated level. An estimate cannot be made without an interval.
//!
//! ```
//! use plumb::figure::{Figure, Interval};
//! let t = Figure::estimate(
//!     0.25,
//!     "wedge sampling",
//!     18_445,
//!     0.001,
//!     Interval { low: 0.248, high: 0.252, level: 0.95 },
//! );
//! assert!(t.is_estimate() && t.interval().is_some());
//! assert_eq!(Figure::exact(45.0, "forward triangle listing").interval(), None);
//! ```
//!
//! A figure cannot be assembled field by field:
//!
//! ```compile_fail
//! use plumb::figure::{Figure, Method};
//! let f = Figure {
//!     value: 0.25,
//!     method: Method::Estimate { estimator: "guess".into() },
//!     sample_size: None,
//!     std_error: None,
//!     interval: None,
//! };
//! ```

use serde::{Deserialize, Serialize};

/// How a figure was obtained.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(tag = "kind", rename_all = "lowercase")]
pub enum Method {
    /// Computed exactly by the named algorithm.
    Exact {
        /// The algorithm, with its source.
        algorithm: String,
    },
    /// Estimated by the named estimator.
    Estimate {
        /// The estimator, with its source.
        estimator: String,
    },
    /// Not computed exactly, but certainly within the interval (level 1): the value is the
    /// lower bound.
    Bounds {
        /// The algorithms behind the bounds.
        algorithm: String,
    },
}

/// A two-sided confidence interval.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Interval {
    /// Lower end.
    pub low: f64,
    /// Upper end.
    pub high: f64,
    /// Nominal coverage, e.g. 0.95.
    pub level: f64,
}

impl Interval {
    /// The interval `centre ± half` at `level`.
    pub fn around(centre: f64, half: f64, level: f64) -> Interval {
        Interval {
            low: centre - half,
            high: centre + half,
            level,
        }
    }
}

/// One reported figure: its value, how it was obtained, on how much data, and for estimates its
/// standard error and interval. The fields are private and the constructors are the only way to
/// make one, so an estimate without an interval cannot exist.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Figure {
    /// The value (for bounds: the lower bound).
    value: f64,
    /// How it was obtained.
    method: Method,
    /// Units of work behind the figure: samples, sources, registers; for exact figures the
    /// number of items it ranges over (nodes, pairs).
    sample_size: Option<u64>,
    /// Standard error of an estimate.
    std_error: Option<f64>,
    /// Confidence interval of an estimate (level < 1), or certain bounds (level 1).
    interval: Option<Interval>,
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

    /// Whether the figure was computed exactly.
    pub fn is_exact(&self) -> bool {
        matches!(self.method, Method::Exact { .. })
    }

    /// Whether the figure is an estimate (with an interval).
    pub fn is_estimate(&self) -> bool {
        matches!(self.method, Method::Estimate { .. })
    }

    /// The value (for bounds: the lower bound).
    pub fn value(&self) -> f64 {
        self.value
    }

    /// How the figure was obtained.
    pub fn method(&self) -> &Method {
        &self.method
    }

    /// Units of work behind the figure, when counted.
    pub fn sample_size(&self) -> Option<u64> {
        self.sample_size
    }

    /// Standard error, for estimates.
    pub fn std_error(&self) -> Option<f64> {
        self.std_error
    }

    /// The interval: a confidence interval for estimates, certain bounds for bounds.
    pub fn interval(&self) -> Option<Interval> {
        self.interval
    }

    /// The interval of an estimate only (none for exact figures and bounds).
    pub fn estimate_interval(&self) -> Option<Interval> {
        self.interval.filter(|_| self.is_estimate())
    }

    /// The same figure in units `by` times larger (value, standard error and interval divided
    /// by `by`); the method and sample size stay.
    pub fn scaled(&self, by: f64) -> Figure {
        Figure {
            value: self.value / by,
            method: self.method.clone(),
            sample_size: self.sample_size,
            std_error: self.std_error.map(|s| s / by),
            interval: self.interval.map(|iv| Interval {
                low: iv.low / by,
                high: iv.high / by,
                level: iv.level,
            }),
        }
    }
}

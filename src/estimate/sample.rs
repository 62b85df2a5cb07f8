//! The mean-with-interval summary the node-level estimators share.

use super::interval::z_for;
use crate::figure::Interval;
use crate::numeric::mean_variance;

/// Mean of `values` (a sample of `k` from a population of `population`) with its standard error
/// (finite-population corrected, sqrt(1 - k/N)) and a normal interval at `level`, clipped to
/// `[lo, hi]`. Returns (mean, standard error, interval).
pub fn mean_interval(
    values: &[f64],
    population: u64,
    level: f64,
    lo: f64,
    hi: f64,
) -> (f64, f64, Interval) {
    let k = values.len();
    if k == 0 {
        return (
            0.0,
            0.0,
            Interval {
                low: lo,
                high: hi,
                level,
            },
        );
    }
    let (mean, var) = mean_variance(values);
    let fpc = (1.0 - k as f64 / population.max(1) as f64).max(0.0);
    let se = (var / k as f64 * fpc).sqrt();
    let z = z_for(level);
    let iv = Interval {
        low: (mean - z * se).max(lo),
        high: (mean + z * se).min(hi),
        level,
    };
    (mean, se, iv)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_census_has_no_sampling_error() {
        // A full census has no sampling error.
        let (m, se, _) = mean_interval(&[1.0, 3.0], 2, 0.95, 0.0, 10.0);
        assert_eq!((m, se), (2.0, 0.0));
    }
}

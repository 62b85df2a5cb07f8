//! Uniform samples of nodes without replacement, seeded, and the mean-with-interval summary the
//! node-level estimators share.

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rustc_hash::FxHashSet;

use super::interval::z_for;
use crate::figure::Interval;
use crate::numeric::mean_variance;

/// `k` distinct items of `population` (all of it when k >= its length), in a seeded random
/// order. Floyd's algorithm (Bentley & Floyd, "A sample of brilliance", CACM 30(9), 1987).
pub fn without_replacement(population: &[u32], k: usize, seed: u64) -> Vec<u32> {
    let n = population.len();
    if k >= n {
        return population.to_vec();
    }
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut chosen = FxHashSet::default();
    let mut order = Vec::with_capacity(k);
    for j in (n - k)..n {
        let t = rng.random_range(0..=j);
        let pick = if chosen.contains(&t) { j } else { t };
        chosen.insert(pick);
        order.push(population[pick]);
    }
    order
}

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
    fn samples_are_distinct_and_seeded() {
        let pop: Vec<u32> = (100..200).collect();
        let a = without_replacement(&pop, 30, 4);
        let mut s = a.clone();
        s.sort_unstable();
        s.dedup();
        assert_eq!(s.len(), 30);
        assert!(a.iter().all(|v| (100..200).contains(v)));
        assert_eq!(a, without_replacement(&pop, 30, 4));
        assert_eq!(without_replacement(&pop, 500, 4).len(), 100);
        // A full census has no sampling error.
        let (m, se, _) = mean_interval(&[1.0, 3.0], 2, 0.95, 0.0, 10.0);
        assert_eq!((m, se), (2.0, 0.0));
    }
}

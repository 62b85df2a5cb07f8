//! Summation that gives the same floating-point result on any thread count: fixed-size blocks
//! summed in parallel, then the block sums added in order.

use rayon::prelude::*;

const BLOCK: usize = 4096;

/// Sum `f(i)` for `i` in `0..n`, deterministically.
pub fn det_sum(n: usize, f: impl Fn(usize) -> f64 + Sync) -> f64 {
    let blocks: Vec<f64> = (0..n.div_ceil(BLOCK))
        .into_par_iter()
        .map(|b| (b * BLOCK..((b + 1) * BLOCK).min(n)).map(&f).sum())
        .collect();
    blocks.iter().sum()
}

/// Mean and sample variance (n − 1 denominator; 0 for fewer than two values), deterministic.
pub fn mean_variance(x: &[f64]) -> (f64, f64) {
    let n = x.len();
    if n == 0 {
        return (0.0, 0.0);
    }
    let mean = det_sum(n, |i| x[i]) / n as f64;
    let var = if n > 1 {
        det_sum(n, |i| (x[i] - mean).powi(2)) / (n - 1) as f64
    } else {
        0.0
    };
    (mean, var)
}

/// The `q` quantile of `sorted` (ascending, non-empty) by the lower order statistic.
pub fn lower_quantile(sorted: &[f64], q: f64) -> f64 {
    sorted[((q * sorted.len() as f64) as usize).min(sorted.len() - 1)]
}

/// The central `level` interval of the sorted draws `sorted` (percentile method), widened to
/// contain `value`, so the reported figure always lies inside its interval.
pub fn percentile_interval(sorted: &[f64], level: f64, value: f64) -> crate::figure::Interval {
    let tail = (1.0 - level) / 2.0;
    crate::figure::Interval {
        low: lower_quantile(sorted, tail).min(value),
        high: lower_quantile(sorted, 1.0 - tail).max(value),
        level,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn moments_and_quantiles() {
        assert_eq!(mean_variance(&[1.0, 2.0, 3.0, 4.0]), (2.5, 5.0 / 3.0));
        assert_eq!(mean_variance(&[7.0]), (7.0, 0.0));
        assert_eq!(lower_quantile(&[1.0, 2.0, 3.0, 4.0], 0.5), 3.0);
        assert_eq!(lower_quantile(&[1.0, 2.0], 1.0), 2.0);
    }
}

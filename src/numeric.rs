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

/// Limbs of [`ExactSum`]: 40 × 64 bits hold every finite f64 (bits 2^-1074 to 2^1023) with
/// room for 2^400 carries.
const LIMBS: usize = 40;

/// An exact sum of non-negative f64 values (a fixed-point superaccumulator with its lowest bit
/// at 2^-1074, the smallest subnormal), rounded once when read. Unlike a float sum it does not
/// depend on the order of the terms, so partial sums made anywhere (threads, processes) merge
/// to the same last digit; the value read is the correctly rounded sum (Kulisch's long
/// accumulator, as in Kulisch & Miranker 1986, "The arithmetic of the digital computer").
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct ExactSum {
    limbs: Vec<u64>,
}

impl Default for ExactSum {
    fn default() -> Self {
        ExactSum {
            limbs: vec![0; LIMBS],
        }
    }
}

impl ExactSum {
    /// Add `x`, a finite non-negative value (others are ignored: no figure summed here has them).
    pub fn add(&mut self, x: f64) {
        if !(x.is_finite() && x > 0.0) {
            debug_assert!(
                x == 0.0,
                "ExactSum takes finite non-negative terms, got {x}"
            );
            return;
        }
        let bits = x.to_bits();
        let exp = (bits >> 52) & 0x7ff;
        let frac = bits & ((1 << 52) - 1);
        // x = mantissa * 2^(shift - 1074).
        let (mantissa, shift) = if exp == 0 {
            (frac, 0)
        } else {
            (frac | 1 << 52, exp as usize - 1)
        };
        let wide = (mantissa as u128) << (shift % 64);
        self.add_at(shift / 64, wide as u64);
        self.add_at(shift / 64 + 1, (wide >> 64) as u64);
    }

    fn add_at(&mut self, mut i: usize, v: u64) {
        let (sum, mut carry) = self.limbs[i].overflowing_add(v);
        self.limbs[i] = sum;
        while carry && i + 1 < LIMBS {
            i += 1;
            (self.limbs[i], carry) = self.limbs[i].overflowing_add(1);
        }
    }

    /// Add another partial sum.
    pub fn merge(&mut self, other: &ExactSum) {
        for (i, &v) in other.limbs.iter().enumerate() {
            if v != 0 {
                self.add_at(i, v);
            }
        }
    }

    /// The sum, rounded to nearest (ties to even) once.
    pub fn value(&self) -> f64 {
        let Some(top) = self.limbs.iter().rposition(|&l| l != 0) else {
            return 0.0;
        };
        // p: index of the highest set bit; take the 64 bits below and including it.
        let p = top * 64 + 63 - self.limbs[top].leading_zeros() as usize;
        if p < 64 {
            return self.limbs[0] as f64 * 2f64.powi(-1074);
        }
        let lo = p - 63;
        let bit = |k: usize| (self.limbs[k / 64] >> (k % 64)) & 1;
        let (li, lo_off) = (lo / 64, lo % 64);
        let mut head = self.limbs[li] >> lo_off;
        if lo_off > 0 {
            head |= self.limbs[li + 1] << (64 - lo_off);
        }
        // Bits below the 64 kept only decide ties: one sticky bit far below f64's 53 does that.
        let sticky = self.limbs[..li].iter().any(|&l| l != 0)
            || (lo_off > 0 && self.limbs[li] & ((1u64 << lo_off) - 1) != 0);
        debug_assert!(bit(p) == 1);
        if sticky {
            head |= 1;
        }
        head as f64 * 2f64.powi(lo as i32 - 1074)
    }
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

    /// The exact sum agrees with a sum in 128-bit integers of values on a fixed grid, and does
    /// not depend on the order of the terms (common practice, no source).
    #[test]
    fn exact_sum_is_exact_and_order_free() {
        let xs: Vec<f64> = (1..20_000u64)
            .map(|i| (i * 7919 % 10_007) as f64 / 1024.0)
            .collect();
        let grid: u128 = (1..20_000u64).map(|i| (i * 7919 % 10_007) as u128).sum();
        let mut a = ExactSum::default();
        xs.iter().for_each(|&x| a.add(x));
        assert_eq!(a.value(), grid as f64 / 1024.0);
        let (mut b, mut c) = (ExactSum::default(), ExactSum::default());
        xs.iter().rev().step_by(2).for_each(|&x| b.add(x));
        xs.iter().rev().skip(1).step_by(2).for_each(|&x| c.add(x));
        b.merge(&c);
        assert_eq!(b, a);
        // Terms far apart in size: 1 + 2^-60 + 2^-60 rounds once, not term by term.
        let mut d = ExactSum::default();
        for x in [1.0, 2f64.powi(-53), 2f64.powi(-53)] {
            d.add(x);
        }
        assert_eq!(d.value(), 1.0 + 2f64.powi(-52));
        let mut tiny = ExactSum::default();
        tiny.add(f64::from_bits(1));
        tiny.add(f64::from_bits(3));
        assert_eq!(tiny.value(), f64::from_bits(4));
        tiny.add(1e300);
        tiny.add(1e300);
        assert_eq!(tiny.value(), 2e300);
    }

    #[test]
    fn moments_and_quantiles() {
        assert_eq!(mean_variance(&[1.0, 2.0, 3.0, 4.0]), (2.5, 5.0 / 3.0));
        assert_eq!(mean_variance(&[7.0]), (7.0, 0.0));
        assert_eq!(lower_quantile(&[1.0, 2.0, 3.0, 4.0], 0.5), 3.0);
        assert_eq!(lower_quantile(&[1.0, 2.0], 1.0), 2.0);
    }
}

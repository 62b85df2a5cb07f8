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

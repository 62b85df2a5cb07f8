//! The neighbourhood function N(t) — ordered pairs (x, y) with d(x, y) <= t, self pairs included —
//! of a whole graph by HyperBall / HyperANF (Boldi, Rosa & Vigna, "HyperANF: approximating the
//! neighbourhood function of very large graphs on a budget", WWW 2011): every node keeps a
//! HyperLogLog counter (Flajolet, Fusy, Gandouet & Meunier, "HyperLogLog: the analysis of a
//! near-optimal cardinality estimation algorithm", AofA 2007) of the nodes within distance t;
//! round t+1 takes the register-wise maximum over the node's neighbours.
//!
//! Registers are one byte each in one flat array (node-major), so a counter of 64 registers is
//! one cache line and a merge is a vectorised byte max. A node is recomputed only when one of its
//! neighbours changed in the previous round. All nodes share one seeded hash, so the counters'
//! errors are correlated; independent repetitions with different hash seeds give the intervals
//! on the derived figures (Student t over repetitions).

use rayon::prelude::*;
use xxhash_rust::xxh3::xxh3_64_with_seed;

use super::hll::{count, register_of};
use super::interval::t_for;
use crate::error::ParamError;
use crate::exact::distances::effective_diameter;
use crate::figure::{Figure, Interval};
use crate::numeric::det_sum;
use crate::store::csr::Csr;

/// Nodes per work unit; fixed so that sums are taken in the same order on any thread count.
const CHUNK: usize = 1024;

/// Options of a HyperBall run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BallOptions {
    /// log2 of the registers per counter (4..=16).
    pub log2_registers: u8,
    /// Independent repetitions (different hash seeds); at least 2, since the interval comes from
    /// their spread.
    pub repeats: u32,
    /// Confidence level of the intervals.
    pub level: f64,
    /// Seed of the first hash function; each repetition derives its own.
    pub seed: u64,
}

impl Default for BallOptions {
    fn default() -> Self {
        BallOptions {
            log2_registers: 6,
            repeats: 5,
            level: 0.95,
            seed: 1,
        }
    }
}

/// Relative standard error of one HyperLogLog counter with `registers` registers: 1.04/sqrt(m)
/// (Flajolet et al. 2007).
pub fn counter_rse(registers: usize) -> f64 {
    1.04 / (registers as f64).sqrt()
}

/// Bytes of register memory a run needs (two arrays of n counters).
pub fn memory_bytes(n: usize, log2_registers: u8) -> u64 {
    2 * n as u64 * (1u64 << log2_registers)
}

/// Figures derived from the neighbourhood function, over the pairs that can reach each other.
#[derive(Debug, Clone, PartialEq)]
pub struct BallEstimate {
    /// Mean distance over reachable ordered pairs of distinct nodes.
    pub mean: Figure,
    /// 90th-percentile distance over reachable pairs (self pairs excluded), interpolated.
    pub effective_diameter: Figure,
    /// Reachable ordered pairs of distinct nodes, N(∞) − N(0).
    pub reachable_pairs: Figure,
    /// Share of reachable pairs at each distance d = 1, 2, … (index 0 is distance 1).
    pub distribution: Vec<Figure>,
    /// N(t) of every repetition.
    pub runs: Vec<Vec<f64>>,
    /// Registers per counter.
    pub registers: u32,
    /// Relative standard error of each node's counter.
    pub counter_rse: f64,
}

/// The neighbourhood function N(0), N(1), … until no counter changes, for one hash seed.
/// `round_done` is told after every round (for progress display).
pub fn neighbourhood_function(
    g: &Csr,
    log2_registers: u8,
    seed: u64,
    round_done: &(dyn Fn(usize) + Sync),
) -> Result<Vec<f64>, ParamError> {
    if !(4..=16).contains(&log2_registers) {
        return Err(ParamError::from(format!(
            "HyperBall registers per counter must be 2^4 to 2^16 (got 2^{log2_registers})"
        )));
    }
    let n = g.node_count();
    let b = log2_registers as u32;
    let m = 1usize << b;
    let mut cur: Vec<u8> = crate::store::pages::zeroed(n * m);
    let mut next: Vec<u8> = crate::store::pages::zeroed(n * m);
    let mut estimate = vec![0f64; n];
    let mut changed = vec![true; n];
    let mut changed_next = vec![false; n];
    let q = 64 - b as usize;
    // Round 0: each counter holds its own node.
    cur.par_chunks_mut(m * CHUNK)
        .zip(estimate.par_chunks_mut(CHUNK))
        .enumerate()
        .for_each(|(c, (regs, est))| {
            for (i, (r, e)) in regs.chunks_mut(m).zip(est.iter_mut()).enumerate() {
                let v = (c * CHUNK + i) as u64;
                let h = xxh3_64_with_seed(&v.to_le_bytes(), seed);
                let (j, rank) = register_of(h, b);
                r[j] = rank;
                *e = count(r, q);
            }
        });
    let mut nt = vec![chunked_sum(&estimate)];
    let offsets = g.offsets();
    let targets = g.targets();
    loop {
        let any: bool = next
            .par_chunks_mut(m * CHUNK)
            .zip(estimate.par_chunks_mut(CHUNK))
            .zip(changed_next.par_chunks_mut(CHUNK))
            .enumerate()
            .map(|(c, ((regs, est), flags))| {
                let mut any = false;
                for (i, ((r, e), f)) in regs
                    .chunks_mut(m)
                    .zip(est.iter_mut())
                    .zip(flags.iter_mut())
                    .enumerate()
                {
                    let v = c * CHUNK + i;
                    let own = &cur[v * m..(v + 1) * m];
                    r.copy_from_slice(own);
                    *f = false;
                    let nb = &targets[offsets[v] as usize..offsets[v + 1] as usize];
                    let mut touched = false;
                    for &u in nb {
                        let u = u as usize;
                        if changed[u] {
                            touched = true;
                            for (x, &y) in r.iter_mut().zip(&cur[u * m..(u + 1) * m]) {
                                *x = (*x).max(y);
                            }
                        }
                    }
                    if touched && r != own {
                        *f = true;
                        *e = count(r, q);
                        any = true;
                    }
                }
                any
            })
            .reduce(|| false, |a, b| a || b);
        std::mem::swap(&mut cur, &mut next);
        std::mem::swap(&mut changed, &mut changed_next);
        if !any {
            break;
        }
        nt.push(chunked_sum(&estimate));
        round_done(nt.len() - 1);
    }
    Ok(nt)
}

/// Sum in fixed chunks, then the chunk sums in order: the same bits on any thread count.
fn chunked_sum(x: &[f64]) -> f64 {
    let parts: Vec<f64> = x.par_chunks(CHUNK).map(|c| c.iter().sum()).collect();
    det_sum(parts.len(), |i| parts[i])
}

/// Figures read off one neighbourhood function.
#[derive(Debug, Clone, PartialEq)]
pub struct Derived {
    /// Mean distance over reachable pairs.
    pub mean: f64,
    /// Effective diameter at 90%, interpolated.
    pub effective_diameter: f64,
    /// Reachable ordered pairs of distinct nodes.
    pub reachable_pairs: f64,
    /// Share of reachable pairs at each distance >= 1.
    pub shares: Vec<f64>,
}

/// Figures from one neighbourhood function.
pub fn derived(nt: &[f64]) -> Derived {
    let n0 = nt[0];
    let total = nt.last().copied().unwrap_or(n0) - n0;
    if total <= 0.0 {
        return Derived {
            mean: 0.0,
            effective_diameter: 0.0,
            reachable_pairs: 0.0,
            shares: Vec::new(),
        };
    }
    // Counters never shrink, so N(t) is non-decreasing and every share is >= 0.
    let mut weighted = 0.0;
    let mut shares = Vec::with_capacity(nt.len().saturating_sub(1));
    for t in 1..nt.len() {
        let at = nt[t] - nt[t - 1];
        weighted += t as f64 * at;
        shares.push(at / total);
    }
    let cum: Vec<f64> = nt.iter().map(|&x| x - n0).collect();
    Derived {
        mean: weighted / total,
        effective_diameter: effective_diameter(&cum, 0.9),
        reachable_pairs: total,
        shares,
    }
}

/// HyperBall with `opts.repeats` independent hash seeds, and t intervals over the repetitions
/// for the mean distance, effective diameter, reachable pairs and distance distribution.
pub fn estimate(
    g: &Csr,
    opts: &BallOptions,
    round_done: &(dyn Fn(usize) + Sync),
) -> Result<BallEstimate, ParamError> {
    if opts.repeats < 2 {
        return Err(ParamError::from(format!(
            "HyperBall intervals need at least two runs (got {})",
            opts.repeats
        )));
    }
    let runs: Vec<Vec<f64>> = (0..opts.repeats as u64)
        .map(|i| neighbourhood_function(g, opts.log2_registers, run_seed(opts.seed, i), round_done))
        .collect::<Result<_, _>>()?;
    Ok(from_runs(runs, opts))
}

/// The hash seed of run `i` of a HyperBall estimate seeded with `seed`.
pub(crate) fn run_seed(seed: u64, i: u64) -> u64 {
    seed.wrapping_mul(0x9E37_79B9_7F4A_7C15)
        .wrapping_add(i.wrapping_mul(0xD1B5_4A32_D192_ED03))
}

/// The estimate from the neighbourhood functions of independent runs (one per hash seed):
/// figures from their average, jackknife t intervals over the runs.
pub(crate) fn from_runs(runs: Vec<Vec<f64>>, opts: &BallOptions) -> BallEstimate {
    // The figures are ratios of sums of N(t), so each run's figure carries an O(1/registers)
    // bias; deriving them from the runs' average N(t) divides that bias by the run count, and
    // the jackknife over runs gives the standard error of exactly that estimator.
    let r = runs.len();
    let longest = runs.iter().map(Vec::len).max().unwrap_or(0);
    let average = |skip: Option<usize>| -> Vec<f64> {
        let kept = (0..r).filter(|&i| Some(i) != skip);
        let k = kept.clone().count() as f64;
        (0..longest)
            .map(|t| {
                kept.clone()
                    .map(|i| *runs[i].get(t).unwrap_or(runs[i].last().unwrap()))
                    .sum::<f64>()
                    / k
            })
            .collect()
    };
    let full = derived(&average(None));
    let leave_one_out: Vec<Derived> = (0..r).map(|i| derived(&average(Some(i)))).collect();
    let registers = 1u32 << opts.log2_registers;
    let name = format!(
        "HyperBall, {registers} registers per node (Boldi, Rosa & Vigna 2011), \
         jackknife t interval over {} hash seeds",
        opts.repeats
    );
    let fig = |value: f64, pick: &dyn Fn(&Derived) -> f64, lo: f64, hi: f64| {
        let loo: Vec<f64> = leave_one_out.iter().map(pick).collect();
        jackknife(value, &loo, opts.level, &name, lo, hi)
    };
    let distribution = (0..full.shares.len())
        .map(|t| {
            fig(
                full.shares[t],
                &|x| x.shares.get(t).copied().unwrap_or(0.0),
                0.0,
                1.0,
            )
        })
        .collect();
    BallEstimate {
        mean: fig(full.mean, &|x| x.mean, 0.0, f64::INFINITY),
        effective_diameter: fig(
            full.effective_diameter,
            &|x| x.effective_diameter,
            0.0,
            f64::INFINITY,
        ),
        reachable_pairs: fig(
            full.reachable_pairs,
            &|x| x.reachable_pairs,
            0.0,
            f64::INFINITY,
        ),
        distribution,
        runs,
        registers,
        counter_rse: counter_rse(registers as usize),
    }
}

/// A figure with its jackknife standard error from the `r` leave-one-out values (Efron & Stein,
/// "The jackknife estimate of variance", Ann. Statist. 9, 1981: se² = (r−1)/r Σ (θ_(i) − θ_(·))²)
/// and a Student t interval with r − 1 degrees of freedom, clipped to [lo, hi].
fn jackknife(value: f64, loo: &[f64], level: f64, name: &str, lo: f64, hi: f64) -> Figure {
    let r = loo.len();
    let centre = det_sum(r, |i| loo[i]) / r as f64;
    let se = ((r - 1) as f64 / r as f64 * det_sum(r, |i| (loo[i] - centre).powi(2))).sqrt();
    let half = t_for(level, r as u64 - 1) * se;
    Figure::estimate(
        value,
        name,
        r as u64,
        se,
        Interval {
            low: (value - half).max(lo),
            high: (value + half).min(hi),
            level,
        },
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counters_count_distinct_hashes() {
        // Linear counting is near exact for small sets; a full path's last counter sees all.
        let mut r = vec![0u8; 64];
        assert_eq!(count(&r, 58), 0.0);
        r[3] = 1;
        assert!((count(&r, 58) - 1.0).abs() < 0.01, "{}", count(&r, 58));
        // A path of 300 nodes: N(0) ~ n, N(∞) ~ n², each within a few counter errors.
        let e: Vec<(u32, u32)> = (0..299).map(|i| (i, i + 1)).collect();
        let g = Csr::from_edges(300, &e);
        let nt = neighbourhood_function(&g, 8, 5, &|_| {}).unwrap();
        assert_eq!(nt.len(), 300, "the diameter is 299 rounds");
        assert!((nt[0] / 300.0 - 1.0).abs() < 0.01, "{}", nt[0]);
        let rse = counter_rse(256);
        assert!((nt[299] / 90_000.0 - 1.0).abs() < 3.0 * rse, "{}", nt[299]);
        assert!(nt.windows(2).all(|w| w[1] >= w[0]));
    }

    #[test]
    fn same_on_any_thread_count() {
        let g = crate::models::generate::watts_strogatz(5000, 6, 0.05, 3);
        let opts = BallOptions {
            repeats: 2,
            ..Default::default()
        };
        let one = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap()
            .install(|| estimate(&g, &opts, &|_| {}));
        assert_eq!(one, estimate(&g, &opts, &|_| {}));
    }
}

//! Degree statistics: size, density, degree moments, the degree histogram (exact and in
//! logarithmic bins) and degree assortativity.

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::store::csr::Csr;

/// A logarithmic bin of degrees `[low, high]` (both inclusive) and how many nodes fall in it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct DegreeBin {
    /// Smallest degree in the bin.
    pub low: u32,
    /// Largest degree in the bin.
    pub high: u32,
    /// Nodes in the bin.
    pub nodes: u64,
}

/// Degree statistics and degree assortativity (Newman, Phys. Rev. Lett. 89, 208701, 2002).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct DegreeStats {
    /// Nodes.
    pub nodes: u64,
    /// Undirected edges.
    pub edges: u64,
    /// 2m / (n (n - 1)).
    pub density: f64,
    /// Nodes of degree 0.
    pub isolated: u64,
    /// Smallest degree.
    pub min: u32,
    /// Largest degree.
    pub max: u32,
    /// Mean degree 2m/n.
    pub mean: f64,
    /// Mean of the squared degree, <k^2>.
    pub second_moment: f64,
    /// `histogram[k]` = nodes of degree k, for k up to the maximum degree.
    pub histogram: Vec<u64>,
    /// Degree 0 alone, then bins `[1,1]`, `[2,3]`, `[4,7]`, … (powers of two).
    pub log_bins: Vec<DegreeBin>,
    /// Pearson correlation of the degrees at either end of an edge (Newman, "Assortative mixing
    /// in networks", Phys. Rev. Lett. 89, 208701, 2002). `None` when undefined (no edges, or all
    /// edge ends have the same degree).
    pub assortativity: Option<f64>,
}

/// Degrees of at least this are read from the offsets; below it, from one byte a node.
const SATURATED: u8 = u8::MAX;

/// Nodes per task: enough work to amortise a task, small enough to balance hubs.
const NODES_PER_TASK: usize = 1 << 14;

/// Exact degree statistics. Sums are kept in integers (u128 where squares of degrees meet edge
/// counts), so the result is exact and identical on any thread count.
pub fn degree_stats(g: &Csr) -> DegreeStats {
    let n = g.node_count();
    let m = g.edge_count();
    // One byte a node (saturated at 255, the rest read from the offsets) serves the histogram and
    // assortativity's scattered reads: 100 MB at 1e8 nodes instead of 400 MB for u32 degrees, so
    // far more of it stays in cache. Hubs, the only nodes read from the offsets, are hot anyway.
    let degrees = Degrees::of(g);
    let small = &degrees.small;
    // Counts of degrees below 255 and the list of larger ones; the histogram and moments follow.
    let (counts, mut large) = small
        .par_chunks(NODES_PER_TASK)
        .enumerate()
        .fold(
            || ([0u64; SATURATED as usize], Vec::new()),
            |(mut counts, mut large), (c, chunk)| {
                for (i, &d) in chunk.iter().enumerate() {
                    match d {
                        SATURATED => large.push(degrees.get(c * NODES_PER_TASK + i) as u32),
                        d => counts[d as usize] += 1,
                    }
                }
                (counts, large)
            },
        )
        .reduce(
            || ([0u64; SATURATED as usize], Vec::new()),
            |(mut a, mut la), (b, lb)| {
                a.iter_mut().zip(b).for_each(|(x, y)| *x += y);
                la.extend(lb);
                (a, la)
            },
        );
    large.sort_unstable();
    let max = large
        .last()
        .copied()
        .or_else(|| counts.iter().rposition(|&c| c > 0).map(|d| d as u32))
        .unwrap_or(0);
    let mut histogram = vec![0u64; max as usize + 1];
    histogram[..counts.len().min(max as usize + 1)]
        .copy_from_slice(&counts[..counts.len().min(max as usize + 1)]);
    for &d in &large {
        histogram[d as usize] += 1;
    }
    let sums = end_sums(g, &degrees);
    stats_from(n as u64, m, histogram, sums)
}

/// The statistics from the degree histogram (`histogram[d]` nodes of degree d, its last entry
/// non-zero when there are edges) and the end sums behind assortativity; shared by the
/// single-machine and the distributed profile, so both round the same integers the same way.
pub(crate) fn stats_from(n: u64, m: u64, histogram: Vec<u64>, sums: EndSums) -> DegreeStats {
    let mut histogram = histogram;
    if histogram.is_empty() {
        histogram.push(0);
    }
    let max = (histogram.len() - 1) as u32;
    let min = histogram.iter().position(|&c| c > 0).unwrap_or(0) as u32;
    let isolated = histogram[0];
    let sum_sq: u128 = histogram
        .iter()
        .enumerate()
        .map(|(d, &c)| (d as u128) * (d as u128) * c as u128)
        .sum();
    let mut log_bins = Vec::new();
    if histogram[0] > 0 {
        log_bins.push(DegreeBin {
            low: 0,
            high: 0,
            nodes: histogram[0],
        });
    }
    let mut low = 1u32;
    while low <= max {
        let high = (low.saturating_mul(2) - 1).min(max);
        let nodes = histogram[low as usize..=high as usize].iter().sum();
        log_bins.push(DegreeBin { low, high, nodes });
        low = low.saturating_mul(2);
    }
    DegreeStats {
        nodes: n,
        edges: m,
        density: if n > 1 {
            2.0 * m as f64 / (n as f64 * (n as f64 - 1.0))
        } else {
            0.0
        },
        isolated,
        min: if n == 0 { 0 } else { min },
        max,
        mean: if n == 0 {
            0.0
        } else {
            2.0 * m as f64 / n as f64
        },
        second_moment: if n == 0 {
            0.0
        } else {
            sum_sq as f64 / n as f64
        },
        histogram,
        log_bins,
        assortativity: assortativity(sums, 2 * m as usize),
    }
}

/// Every node's degree, one byte a node: degrees from 255 up are read from the offsets.
struct Degrees<'g> {
    small: Vec<u8>,
    offsets: &'g [u64],
}

impl<'g> Degrees<'g> {
    fn of(g: &'g Csr) -> Self {
        let o = g.offsets();
        let mut small: Vec<u8> = crate::store::pages::with_capacity(g.node_count());
        (0..g.node_count())
            .into_par_iter()
            .with_min_len(NODES_PER_TASK)
            .map(|u| (o[u + 1] - o[u]).min(SATURATED as u64) as u8)
            .collect_into_vec(&mut small);
        Degrees { small, offsets: o }
    }

    #[inline(always)]
    fn get(&self, v: usize) -> u64 {
        match self.small[v] {
            SATURATED => self.offsets[v + 1] - self.offsets[v],
            d => d as u64,
        }
    }

    #[inline(always)]
    fn prefetch(&self, v: usize) {
        crate::store::pages::prefetch(&self.small[v]);
    }
}

/// Sums over directed edge ends (u -> v): of d_u d_v, of d_u and of d_u^2.
pub(crate) type EndSums = (u128, u128, u128);

/// The sums behind assortativity in one pass over the adjacency, each task a run of nodes.
/// Lists are sorted and symmetric without self-loops, so each edge is read once, from its
/// smaller end (the part of u's list above u), and counted twice: half the scattered reads. The
/// neighbours' degrees are prefetched a fixed distance ahead so the misses overlap rather than
/// queue; an entry not above the current node cannot be above its own node either, so it is
/// never prefetched.
fn end_sums(g: &Csr, degrees: &Degrees) -> EndSums {
    const AHEAD: usize = 32;
    let o = g.offsets();
    let t = g.targets();
    let n = g.node_count();
    (0..n.div_ceil(NODES_PER_TASK))
        .into_par_iter()
        .map(|task| {
            let first = task * NODES_PER_TASK;
            let last = (first + NODES_PER_TASK).min(n);
            let end = o[last] as usize;
            let mut sums: EndSums = (0, 0, 0);
            for u in first..last {
                let (a, b) = (o[u] as usize, o[u + 1] as usize);
                let above = a + t[a..b].partition_point(|&v| (v as usize) < u);
                // The sum of u's neighbours' degrees is at most 2m, so u64 holds it.
                let mut around = 0u64;
                for i in above..b {
                    if let Some(&w) = t[..end].get(i + AHEAD).filter(|&&w| w as usize > u) {
                        degrees.prefetch(w as usize);
                    }
                    around += degrees.get(t[i] as usize);
                }
                let du = (b - a) as u128;
                sums.0 += 2 * du * around as u128;
                sums.1 += du * du;
                sums.2 += du * du * du;
            }
            sums
        })
        .reduce(|| (0, 0, 0), |a, b| (a.0 + b.0, a.1 + b.1, a.2 + b.2))
}

/// Newman (2002), eq. (4), with sums over edges taken in both directions, which symmetrises the
/// formula: r = (S_jk/M - (S_j/M)^2) / (S_jj/M - (S_j/M)^2) over the M = 2m edge ends.
fn assortativity((s_jk, s_j, s_jj): EndSums, ends: usize) -> Option<f64> {
    if ends == 0 {
        return None;
    }
    let m = ends as f64;
    let mean = s_j as f64 / m;
    let var = s_jj as f64 / m - mean * mean;
    let cov = s_jk as f64 / m - mean * mean;
    // Exact-integer test for zero variance (every edge end has the same degree).
    if s_jj * (ends as u128) == s_j * s_j || var <= 0.0 {
        return None;
    }
    Some(cov / var)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn star_is_perfectly_disassortative() {
        // A star: every edge joins the hub (degree 4) and a leaf (degree 1): r = -1 exactly.
        let g = Csr::from_edges(5, &[(0, 1), (0, 2), (0, 3), (0, 4)]);
        let s = degree_stats(&g);
        assert!((s.assortativity.unwrap() + 1.0).abs() < 1e-12);
        assert_eq!((s.min, s.max, s.isolated), (1, 4, 0));
        assert_eq!(s.histogram, vec![0, 4, 0, 0, 1]);
        assert!((s.second_moment - 20.0 / 5.0).abs() < 1e-12);
        assert_eq!(
            s.log_bins,
            vec![
                DegreeBin {
                    low: 1,
                    high: 1,
                    nodes: 4
                },
                DegreeBin {
                    low: 2,
                    high: 3,
                    nodes: 0
                },
                DegreeBin {
                    low: 4,
                    high: 4,
                    nodes: 1
                }
            ]
        );
    }

    /// The plain twin: u32 degrees, per-end products, one pass over every edge end.
    fn end_sums_naive(g: &Csr) -> EndSums {
        let n = g.node_count() as u32;
        let mut sums = (0u128, 0u128, 0u128);
        for u in 0..n {
            let du = g.degree(u) as u128;
            for &v in g.neighbors(u) {
                sums.0 += du * g.degree(v) as u128;
                sums.1 += du;
                sums.2 += du * du;
            }
        }
        sums
    }

    #[test]
    fn fast_sums_and_histogram_equal_their_plain_twins() {
        use rand::{RngExt, SeedableRng};
        // Random graphs with hubs past the one-byte degrees (255), over several tasks' nodes.
        for seed in 0..4u64 {
            let mut rng = rand::rngs::StdRng::seed_from_u64(seed);
            let n = 40_000u32 + seed as u32 * 7_919;
            let mut edges: Vec<(u32, u32)> = (0..120_000)
                .map(|_| (rng.random_range(0..n), rng.random_range(0..n)))
                .collect();
            for hub in 0..3u32 {
                edges.extend((0..300 + 500 * hub).map(|_| (hub * 977, rng.random_range(0..n))));
            }
            let g = Csr::from_edges(n as usize, &edges);
            let degrees = Degrees::of(&g);
            assert_eq!(end_sums(&g, &degrees), end_sums_naive(&g), "seed {seed}");
            let s = degree_stats(&g);
            let mut histogram = vec![0u64; s.max as usize + 1];
            (0..n).for_each(|u| histogram[g.degree(u) as usize] += 1);
            assert_eq!(s.histogram, histogram);
            assert!(s.max >= 300, "a hub is past the byte range");
            let sum_sq: u128 = (0..n).map(|u| (g.degree(u) as u128).pow(2)).sum();
            assert_eq!(s.second_moment, sum_sq as f64 / n as f64);
            assert_eq!(s.min, (0..n).map(|u| g.degree(u)).min().unwrap());
        }
    }

    #[test]
    fn regular_graph_has_no_assortativity() {
        let g = Csr::from_edges(4, &[(0, 1), (1, 2), (2, 3), (3, 0)]);
        assert_eq!(degree_stats(&g).assortativity, None);
        let empty = Csr::from_edges(3, &[]);
        let s = degree_stats(&empty);
        assert_eq!((s.isolated, s.assortativity, s.density), (3, None, 0.0));
    }
}

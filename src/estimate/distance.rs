//! Mean distance of a connected graph from breadth-first searches at uniformly sampled sources
//! (Eppstein & Wang, "Fast approximation of centrality", J. Graph Algorithms Appl. 8(1), 2004):
//! each source's mean distance to all other nodes is exact, and the mean over sources estimates
//! the mean over all pairs, with a finite-population corrected normal interval over sources.

use rayon::prelude::*;

use super::sample::{mean_interval, without_replacement};
use crate::bfs::Bfs;
use crate::csr::Csr;
use crate::figure::Figure;

#[derive(Debug, Clone, PartialEq)]
pub struct DistanceEstimate {
    pub mean: Figure,
    /// Ordered pairs at each distance from the sampled sources, summed.
    pub sampled_pairs: Vec<u64>,
    pub sources: u64,
}

/// `g` must be connected (pass the giant component).
pub fn estimate(g: &Csr, sources: usize, level: f64, seed: u64) -> DistanceEstimate {
    let n = g.node_count();
    let all: Vec<u32> = (0..n as u32).collect();
    let picked = without_replacement(&all, sources, seed);
    let per: Vec<(f64, Vec<u64>)> = picked
        .par_iter()
        .map_init(
            || Bfs::new(n),
            |b, &s| {
                b.run(g, s);
                let sum: u64 = b
                    .levels
                    .iter()
                    .enumerate()
                    .map(|(d, &c)| d as u64 * c)
                    .sum();
                let reached = b.reached().saturating_sub(1).max(1);
                (sum as f64 / reached as f64, b.levels.clone())
            },
        )
        .collect();
    let means: Vec<f64> = per.iter().map(|p| p.0).collect();
    let mut sampled_pairs = vec![0u64];
    for (_, levels) in &per {
        if levels.len() > sampled_pairs.len() {
            sampled_pairs.resize(levels.len(), 0);
        }
        for (d, &c) in levels.iter().enumerate().skip(1) {
            sampled_pairs[d] += c;
        }
    }
    let (mean, se, iv) = mean_interval(&means, n as u64, level, 1.0, f64::INFINITY);
    DistanceEstimate {
        mean: Figure::estimate(
            mean,
            "BFS from uniformly sampled sources (Eppstein & Wang 2004), normal interval (FPC)",
            means.len() as u64,
            se,
            iv,
        ),
        sampled_pairs,
        sources: means.len() as u64,
    }
}

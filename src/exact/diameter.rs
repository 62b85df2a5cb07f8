//! The exact diameter of a large connected graph with few breadth-first searches.
//!
//! A double sweep (BFS from a node, then from the farthest node found) gives a lower bound and a
//! central node (Magnien, Latapy & Habib, "Fast computation of empirically tight bounds for the
//! diameter of massive graphs", ACM J. Exp. Algorithmics 13, 2009). iFUB then examines the BFS
//! levels of that central node from the outside in, taking the eccentricity of every node on a
//! level until the bounds meet (Crescenzi, Grossi, Habib, Lanzi & Marino, "On computing the
//! diameter of real-world undirected graphs", Theor. Comput. Sci. 514, 2013). The eccentricities
//! of a level are computed 64 at a time by the bit-parallel search of [`crate::exact::distances`].
//!
//! iFUB is fast on real-world graphs, whose peripheries are thin, and slow on homogeneous random
//! graphs, whose outer levels hold most nodes; so it runs under a work budget and, when that runs
//! out, reports the bounds it has instead of a guess.

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::exact::bfs::{Bfs, UNREACHED};
use crate::exact::distances::{BatchBuffers, sources_batch};
use crate::store::csr::Csr;

/// The double sweep and the BFS levels of the central node.
pub struct Sweep {
    /// Lower bound on the diameter.
    pub lower: u32,
    /// A node near the centre (the midpoint of the longest path found).
    pub center: u32,
    /// Its eccentricity.
    pub center_ecc: u32,
    /// `levels[i]` = nodes at distance i from the center.
    pub levels: Vec<Vec<u32>>,
    /// Eccentricities computed on the way: (node, eccentricity).
    pub known: Vec<(u32, u32)>,
    /// Breadth-first searches run.
    pub bfs_runs: u64,
}

/// The diameter, exact or between certain bounds (iFUB: Crescenzi, Grossi, Habib, Lanzi &
/// Marino, Theor. Comput. Sci. 514, 2013).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Diameter {
    /// Exact when `lower == upper`.
    pub lower: u32,
    /// Upper bound.
    pub upper: u32,
    /// The double-sweep lower bound iFUB started from.
    pub double_sweep_bound: u32,
    /// Breadth-first searches run (each source of a bit-parallel batch counts as one).
    pub bfs_runs: u64,
    /// Eccentricities learnt on the way (node index, eccentricity).
    #[serde(skip)]
    pub known: Vec<(u32, u32)>,
}

impl Diameter {
    /// Whether the bounds met.
    pub fn is_exact(&self) -> bool {
        self.lower == self.upper
    }
}

/// Double sweep from a highest-degree node, then BFS from the middle of the path found.
/// `g` must be connected and non-empty.
pub fn sweep(g: &Csr) -> Sweep {
    let n = g.node_count();
    let mut b = Bfs::new(n);
    let mut known = Vec::new();
    let start = (0..n as u32)
        .max_by_key(|&v| (g.degree(v), std::cmp::Reverse(v)))
        .unwrap_or(0);
    b.run_parallel(g, start);
    known.push((start, b.eccentricity()));
    let a = farthest(b.dist());
    b.run_parallel(g, a);
    let lower = b.eccentricity();
    known.push((a, lower));
    // The middle of the a–far shortest path: walk back from `far` to distance ceil(lower / 2).
    let mut mid = farthest(b.dist());
    while b.dist()[mid as usize] > lower.div_ceil(2) {
        let d = b.dist()[mid as usize];
        mid = *g
            .neighbors(mid)
            .iter()
            .find(|&&w| b.dist()[w as usize] == d - 1)
            .expect("a BFS parent exists");
    }
    b.run_parallel(g, mid);
    let center_ecc = b.eccentricity();
    known.push((mid, center_ecc));
    let mut levels = vec![Vec::new(); center_ecc as usize + 1];
    for v in 0..n as u32 {
        levels[b.dist()[v as usize] as usize].push(v);
    }
    Sweep {
        lower: lower.max(center_ecc),
        center: mid,
        center_ecc,
        levels,
        known,
        bfs_runs: 3,
    }
}

/// Work of one bit-parallel batch on `g` reaching at most `levels` levels, in the units of the
/// exact budget (see [`crate::exact::cost::all_pairs_work`]).
fn batch_cost(g: &Csr, levels: u32) -> f64 {
    (levels as f64 + 1.0) * (g.node_count() as f64 + 2.0 * g.edge_count() as f64)
}

/// iFUB from a sweep, spending at most `budget` work units on eccentricities.
pub fn ifub(g: &Csr, s: Sweep, budget: f64) -> Diameter {
    let Sweep {
        mut lower,
        center_ecc,
        levels,
        mut known,
        mut bfs_runs,
        ..
    } = s;
    let double_sweep_bound = lower;
    let mut upper = 2 * center_ecc;
    let mut i = center_ecc;
    let mut spent = 0.0;
    while upper > lower && i > 0 {
        let fringe = &levels[i as usize];
        let cost = fringe.len().div_ceil(64) as f64 * batch_cost(g, upper);
        if spent + cost > budget {
            break;
        }
        spent += cost;
        let eccs: Vec<(u32, u32)> = fringe
            .par_chunks(64)
            .map_init(
                || BatchBuffers::new(g.node_count()),
                |bufs, chunk| {
                    let (_, ecc) = sources_batch(g, chunk, bufs);
                    chunk.iter().copied().zip(ecc).collect::<Vec<_>>()
                },
            )
            .flatten()
            .collect();
        bfs_runs += fringe.len() as u64;
        let bi = eccs.iter().map(|&(_, e)| e).max().unwrap_or(0);
        known.extend(eccs);
        lower = lower.max(bi);
        if lower > 2 * (i - 1) {
            upper = lower;
            break;
        }
        upper = 2 * (i - 1);
        i -= 1;
    }
    Diameter {
        lower,
        upper: upper.max(lower),
        double_sweep_bound,
        bfs_runs,
        known,
    }
}

/// Exact diameter with no work limit.
pub fn diameter(g: &Csr) -> Diameter {
    ifub(g, sweep(g), f64::INFINITY)
}

/// The reached node farthest from the source (smallest index among ties).
fn farthest(dist: &[u32]) -> u32 {
    let mut best = (0u32, 0u32);
    for (v, &d) in dist.iter().enumerate() {
        if d != UNREACHED && d > best.1 {
            best = (v as u32, d);
        }
    }
    best.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_cycles_and_trees() {
        let path = Csr::from_edges(10, &(0..9).map(|i| (i, i + 1)).collect::<Vec<_>>());
        assert_eq!(diameter(&path).lower, 9);
        let cycle = Csr::from_edges(11, &(0..11).map(|i| (i, (i + 1) % 11)).collect::<Vec<_>>());
        let d = diameter(&cycle);
        assert_eq!((d.lower, d.upper), (5, 5));
        let single = Csr::from_edges(1, &[]);
        assert_eq!(diameter(&single).lower, 0);
        // A spider whose legs have lengths 3, 4 and 6: diameter 10.
        let mut e = Vec::new();
        let mut next = 1u32;
        for len in [3u32, 4, 6] {
            let mut prev = 0;
            for _ in 0..len {
                e.push((prev, next));
                prev = next;
                next += 1;
            }
        }
        assert_eq!(diameter(&Csr::from_edges(next as usize, &e)).lower, 10);
    }

    #[test]
    fn a_tiny_budget_gives_honest_bounds() {
        let cycle = Csr::from_edges(
            101,
            &(0..101).map(|i| (i, (i + 1) % 101)).collect::<Vec<_>>(),
        );
        let d = ifub(&cycle, sweep(&cycle), 0.0);
        assert!(d.lower <= 50 && d.upper >= 50, "{d:?}");
        assert_eq!(d.bfs_runs, 3);
    }
}

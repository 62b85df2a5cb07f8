//! The exact diameter of a large connected graph with few breadth-first searches.
//!
//! A double sweep (BFS from a node, then from the farthest node found) gives a lower bound and a
//! central node (Magnien, Latapy & Habib, "Fast computation of empirically tight bounds for the
//! diameter of massive graphs", ACM J. Exp. Algorithmics 13, 2009). iFUB then examines the BFS
//! levels of that central node from the outside in, taking the eccentricity of every node on a
//! level until the bounds meet (Crescenzi, Grossi, Habib, Lanzi & Marino, "On computing the
//! diameter of real-world undirected graphs", Theor. Comput. Sci. 514, 2013).

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::bfs::Bfs;
use crate::csr::Csr;

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Diameter {
    pub diameter: u32,
    /// The double-sweep lower bound, before iFUB.
    pub double_sweep_bound: u32,
    pub bfs_runs: u64,
    /// Eccentricities learnt on the way (node index, eccentricity).
    #[serde(skip)]
    pub known: Vec<(u32, u32)>,
}

/// Exact diameter of `g`, which must be connected and non-empty.
pub fn diameter(g: &Csr) -> Diameter {
    let n = g.node_count();
    let mut runs = 0u64;
    let mut known = Vec::new();
    let mut b = Bfs::new(n);
    // Start the sweep at a highest-degree node (smallest index among ties).
    let start = (0..n as u32)
        .max_by_key(|&v| (g.degree(v), std::cmp::Reverse(v)))
        .unwrap_or(0);
    b.run(g, start);
    runs += 1;
    known.push((start, b.eccentricity()));
    let a = farthest(&b.dist);
    b.run(g, a);
    runs += 1;
    let lb = b.eccentricity();
    known.push((a, lb));
    let far = farthest(&b.dist);
    // The middle of the a–far shortest path: walk back from `far` to distance ceil(lb / 2).
    let mut mid = far;
    while b.dist[mid as usize] > lb.div_ceil(2) {
        let d = b.dist[mid as usize];
        mid = *g
            .neighbors(mid)
            .iter()
            .find(|&&w| b.dist[w as usize] == d - 1)
            .expect("a BFS parent exists");
    }
    b.run(g, mid);
    runs += 1;
    let ecc_u = b.eccentricity();
    known.push((mid, ecc_u));
    let mut fringe_of = vec![Vec::new(); ecc_u as usize + 1];
    for v in 0..n as u32 {
        fringe_of[b.dist[v as usize] as usize].push(v);
    }
    let mut lower = lb.max(ecc_u);
    let mut upper = 2 * ecc_u;
    let mut i = ecc_u;
    while upper > lower && i > 0 {
        let fringe = &fringe_of[i as usize];
        let eccs: Vec<(u32, u32)> = fringe
            .par_iter()
            .map_init(
                || Bfs::new(n),
                |bfs, &z| {
                    bfs.run(g, z);
                    (z, bfs.eccentricity())
                },
            )
            .collect();
        runs += fringe.len() as u64;
        let bi = eccs.iter().map(|&(_, e)| e).max().unwrap_or(0);
        known.extend(eccs);
        lower = lower.max(bi);
        if lower > 2 * (i - 1) {
            break;
        }
        upper = 2 * (i - 1);
        i -= 1;
    }
    Diameter {
        diameter: lower,
        double_sweep_bound: lb,
        bfs_runs: runs,
        known,
    }
}

/// The reached node farthest from the source (smallest index among ties).
fn farthest(dist: &[u32]) -> u32 {
    let mut best = (0u32, 0u32);
    for (v, &d) in dist.iter().enumerate() {
        if d != crate::bfs::UNREACHED && d > best.1 {
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
        assert_eq!(diameter(&path).diameter, 9);
        let cycle = Csr::from_edges(11, &(0..11).map(|i| (i, (i + 1) % 11)).collect::<Vec<_>>());
        assert_eq!(diameter(&cycle).diameter, 5);
        let single = Csr::from_edges(1, &[]);
        assert_eq!(diameter(&single).diameter, 0);
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
        assert_eq!(diameter(&Csr::from_edges(next as usize, &e)).diameter, 10);
    }
}

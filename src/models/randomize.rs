//! Random graphs with a given degree sequence: degree-preserving randomisation of a graph by
//! double-edge swaps (Maslov & Sneppen, "Specificity and stability in topology of protein
//! networks", Science 296, 2002), and the configuration model from a degree sequence (Molloy &
//! Reed 1995; as analysed by Newman, "The structure and function of complex networks", SIAM
//! Review 45, 2003), with self-loops and repeated pairs erased and counted.

use crate::error::ParamError;
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rustc_hash::FxHashSet;
use serde::{Deserialize, Serialize};

use crate::store::csr::Csr;
use crate::store::fill::csr_from_pairs;

/// What the double-edge swaps did (Maslov & Sneppen, Science 296, 2002).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct SwapReport {
    /// Swaps attempted.
    pub attempted: u64,
    /// Swaps made; the rest would have made a self-loop or a repeated edge.
    pub accepted: u64,
}

fn key(a: u32, b: u32) -> u64 {
    ((a.min(b) as u64) << 32) | a.max(b) as u64
}

/// The edges of `g`, each once (u < v), in order.
pub fn edge_list(g: &Csr) -> Vec<(u32, u32)> {
    let mut e = Vec::with_capacity(g.edge_count() as usize);
    for u in 0..g.node_count() as u32 {
        for &v in g.neighbors(u) {
            if u < v {
                e.push((u, v));
            }
        }
    }
    e
}

/// Randomise `edges` in place by `attempts` double-edge swaps: pick two edges (a, b) and (c, d)
/// and a random orientation, rewire to (a, d) and (c, b) unless that makes a self-loop or an
/// existing edge. Every degree is preserved exactly.
pub fn swap_edges(edges: &mut [(u32, u32)], attempts: u64, seed: u64) -> SwapReport {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let m = edges.len();
    let mut accepted = 0;
    if m < 2 {
        return SwapReport {
            attempted: 0,
            accepted: 0,
        };
    }
    let mut present: FxHashSet<u64> = edges.iter().map(|&(a, b)| key(a, b)).collect();
    for _ in 0..attempts {
        let i = rng.random_range(0..m);
        let j = rng.random_range(0..m);
        let flip: bool = rng.random();
        if i == j {
            continue;
        }
        let (a, b) = edges[i];
        let (c, d) = if flip {
            (edges[j].1, edges[j].0)
        } else {
            edges[j]
        };
        if a == d || c == b || present.contains(&key(a, d)) || present.contains(&key(c, b)) {
            continue;
        }
        present.remove(&key(a, b));
        present.remove(&key(c, d));
        present.insert(key(a, d));
        present.insert(key(c, b));
        edges[i] = (a, d);
        edges[j] = (c, b);
        accepted += 1;
    }
    SwapReport {
        attempted: attempts,
        accepted,
    }
}

/// A degree-preserving random graph from `g`: `swaps_per_edge × m` attempted swaps.
pub fn degree_preserving(g: &Csr, swaps_per_edge: f64, seed: u64) -> (Csr, SwapReport) {
    let mut e = edge_list(g);
    let attempts = (swaps_per_edge * e.len() as f64).round() as u64;
    let report = swap_edges(&mut e, attempts, seed);
    (csr_from_pairs(g.node_count(), &e), report)
}

/// What the configuration model erased (Newman, SIAM Review 45, 2003).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct ConfigurationReport {
    /// Stub pairs that joined a node to itself (erased).
    pub loops_erased: u64,
    /// Stub pairs that repeated an edge already made (erased).
    pub repeats_erased: u64,
}

/// The erased configuration model: every node gets `degrees[v]` stubs, the stubs are shuffled and
/// paired in order; self-loops and repeated pairs are erased and counted, so degrees can fall a
/// little short on heavy-tailed sequences. The degree sum must be even.
pub fn configuration(
    degrees: &[u32],
    seed: u64,
    emit: &mut dyn FnMut(u32, u32),
) -> Result<ConfigurationReport, ParamError> {
    let total: u64 = degrees.iter().map(|&d| d as u64).sum();
    if total % 2 == 1 {
        return Err(ParamError::from(format!(
            "the degree sum must be even (it is {total})"
        )));
    }
    let mut stubs: Vec<u32> = Vec::with_capacity(total as usize);
    for (v, &d) in degrees.iter().enumerate() {
        stubs.extend(std::iter::repeat_n(v as u32, d as usize));
    }
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    // Fisher–Yates.
    for i in (1..stubs.len()).rev() {
        let j = rng.random_range(0..=i);
        stubs.swap(i, j);
    }
    let mut seen: FxHashSet<u64> = FxHashSet::default();
    let mut report = ConfigurationReport {
        loops_erased: 0,
        repeats_erased: 0,
    };
    for pair in stubs.chunks_exact(2) {
        let (a, b) = (pair[0], pair[1]);
        if a == b {
            report.loops_erased += 1;
        } else if !seen.insert(key(a, b)) {
            report.repeats_erased += 1;
        } else {
            emit(a, b);
        }
    }
    Ok(report)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn swaps_keep_every_degree_and_stay_simple() {
        let g = crate::models::generate::preferential_attachment(2000, 3, 1);
        let (r, rep) = degree_preserving(&g, 10.0, 4);
        r.verify().unwrap();
        assert_eq!(r.edge_count(), g.edge_count());
        assert!((0..2000).all(|v| r.degree(v) == g.degree(v)));
        assert!(rep.accepted > rep.attempted / 2, "{rep:?}");
        assert_ne!(r.targets(), g.targets());
        // Seeded.
        assert_eq!(degree_preserving(&g, 10.0, 4).0.targets(), r.targets());
    }

    #[test]
    fn configuration_model_meets_the_sequence_up_to_erasures() {
        let mut degrees: Vec<u32> = (0..1000).map(|v| 2 + v % 7).collect();
        degrees[0] += 1; // make the sum (4997) even
        let mut e = Vec::new();
        let rep = configuration(&degrees, 3, &mut |a, b| e.push((a, b))).unwrap();
        let g = csr_from_pairs(1000, &e);
        let total: u64 = degrees.iter().map(|&d| d as u64).sum();
        assert_eq!(
            2 * (g.edge_count() + rep.loops_erased + rep.repeats_erased),
            total
        );
        assert!(configuration(&[1, 2], 1, &mut |_, _| {}).is_err());
    }
}

//! Seeded generators of the reference graph models, built straight into the adjacency store.
//! Every generator takes a seed and gives the same graph for the same arguments on any machine
//! and thread count (ChaCha8 streams, sequential draws).

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rustc_hash::FxHashSet;

use crate::csr::Csr;
use crate::ingest::fill::csr_from_pairs;

/// Ring lattice: node i joined to its `k / 2` nearest neighbours on each side (k even, k < n).
/// Watts & Strogatz, "Collective dynamics of 'small-world' networks", Nature 393 (1998).
pub fn ring_lattice(n: u32, k: u32) -> Csr {
    csr_from_pairs(n as usize, &lattice_pairs(n, k))
}

fn lattice_pairs(n: u32, k: u32) -> Vec<(u32, u32)> {
    assert!(
        k.is_multiple_of(2) && k < n,
        "ring lattice needs an even k below n"
    );
    (0..n)
        .flat_map(|i| (1..=k / 2).map(move |j| (i, (i + j) % n)))
        .collect()
}

/// Watts–Strogatz: the ring lattice with each edge's far end rewired with probability `p` to a
/// uniformly chosen node, avoiding self-loops and duplicate edges (Watts & Strogatz 1998).
pub fn watts_strogatz(n: u32, k: u32, p: f64, seed: u64) -> Csr {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut pairs = lattice_pairs(n, k);
    let key = |a: u32, b: u32| ((a.min(b) as u64) << 32) | a.max(b) as u64;
    let mut present: FxHashSet<u64> = pairs.iter().map(|&(a, b)| key(a, b)).collect();
    // Rewire in the original order: ring distance j = 1 first, as in the paper.
    for j in 1..=k / 2 {
        for i in 0..n {
            let idx = (i * (k / 2) + (j - 1)) as usize;
            if rng.random::<f64>() >= p {
                continue;
            }
            let (a, b) = pairs[idx];
            // A node already joined to everyone cannot be rewired.
            for _ in 0..64 {
                let w = rng.random_range(0..n);
                if w != a && !present.contains(&key(a, w)) {
                    present.remove(&key(a, b));
                    present.insert(key(a, w));
                    pairs[idx] = (a, w);
                    break;
                }
            }
        }
    }
    csr_from_pairs(n as usize, &pairs)
}

/// Erdős–Rényi G(n, m): m distinct edges drawn uniformly (rejection of loops and repeats).
pub fn gnm(n: u32, m: u64, seed: u64) -> Csr {
    let max = n as u64 * (n as u64 - 1) / 2;
    assert!(m <= max, "G(n, m) needs m <= n(n-1)/2");
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut seen: FxHashSet<u64> = FxHashSet::default();
    let mut pairs = Vec::with_capacity(m as usize);
    while (pairs.len() as u64) < m {
        let (a, b) = (rng.random_range(0..n), rng.random_range(0..n));
        if a == b {
            continue;
        }
        let k = ((a.min(b) as u64) << 32) | a.max(b) as u64;
        if seen.insert(k) {
            pairs.push((a, b));
        }
    }
    csr_from_pairs(n as usize, &pairs)
}

/// Preferential attachment: each new node brings `d` edges whose far ends are drawn in
/// proportion to degree, by the linear-time method of Batagelj & Brandes ("Efficient generation
/// of large random networks", Phys. Rev. E 71, 036113, 2005). As in their method, repeated draws
/// may coincide; those are merged, so some nodes get fewer than `d` new edges.
pub fn preferential_attachment(n: u32, d: u32, seed: u64) -> Csr {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let total = 2 * n as usize * d as usize;
    let mut m = vec![0u32; total];
    for v in 0..n as usize {
        for i in 0..d as usize {
            let at = 2 * (v * d as usize + i);
            m[at] = v as u32;
            let r = rng.random_range(0..=at);
            m[at + 1] = m[r];
        }
    }
    let pairs: Vec<(u32, u32)> = m.chunks_exact(2).map(|c| (c[0], c[1])).collect();
    csr_from_pairs(n as usize, &pairs)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_and_determinism() {
        let g = ring_lattice(20, 4);
        assert_eq!(g.edge_count(), 40);
        assert!((0..20).all(|v| g.degree(v) == 4));
        let a = watts_strogatz(500, 10, 0.2, 7);
        assert_eq!(a.edge_count(), 2500);
        assert_eq!(a.targets(), watts_strogatz(500, 10, 0.2, 7).targets());
        assert_ne!(a.targets(), watts_strogatz(500, 10, 0.2, 8).targets());
        a.verify().unwrap();
        let e = gnm(300, 1000, 3);
        assert_eq!(e.edge_count(), 1000);
        e.verify().unwrap();
        let p = preferential_attachment(1000, 3, 5);
        assert!(p.edge_count() > 2700 && p.edge_count() <= 3000);
        p.verify().unwrap();
    }
}

//! Seeded generators of the reference graph models. Each streams its edges to a callback as they
//! are decided, so a writer can put 100 million edges on disk while holding only what the model
//! itself needs (nothing for the lattice and G(n,p); a set of edge keys for Watts–Strogatz and
//! G(n,m); the endpoint array for preferential attachment). The `Csr` builders collect the same
//! stream. Every generator gives the same edges in the same order for the same arguments and seed
//! on any machine and thread count (ChaCha8, sequential draws).

use crate::error::ParamError;
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rustc_hash::FxHashSet;
use serde::{Deserialize, Serialize};

use crate::store::csr::Csr;
use crate::store::fill::csr_from_pairs;

/// A reference graph model and its parameters.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(tag = "model", rename_all = "kebab-case")]
pub enum Model {
    /// Ring lattice: node i joined to its k/2 nearest neighbours on each side.
    Lattice {
        /// Nodes on the ring.
        n: u32,
        /// Degree (even).
        k: u32,
    },
    /// Watts–Strogatz rewiring of the ring lattice with probability p.
    WattsStrogatz {
        /// Nodes on the ring.
        n: u32,
        /// Lattice degree before rewiring (even).
        k: u32,
        /// Probability that an edge's far end is rewired.
        p: f64,
    },
    /// Erdős–Rényi with exactly m edges.
    Gnm {
        /// Nodes.
        n: u32,
        /// Edges, uniform among all pairs.
        m: u64,
    },
    /// Erdős–Rényi with each pair joined independently with probability p.
    Gnp {
        /// Nodes.
        n: u32,
        /// Probability that a pair is joined.
        p: f64,
    },
    /// Preferential attachment, d edges per new node.
    Preferential {
        /// Nodes, added one at a time.
        n: u32,
        /// Edges each new node attaches.
        d: u32,
    },
}

impl Model {
    /// Check the parameters; the message says what is wrong.
    pub fn validate(&self) -> Result<(), ParamError> {
        let pairs = |n: u32| n as u64 * (n as u64).saturating_sub(1) / 2;
        match *self {
            Model::Lattice { n, k } | Model::WattsStrogatz { n, k, .. } if k % 2 == 1 || k >= n => {
                Err(ParamError::from(format!(
                    "a ring lattice needs an even degree k below n (k = {k}, n = {n})"
                )))
            }
            Model::Lattice { k: 0, .. } | Model::WattsStrogatz { k: 0, .. } => {
                Err("a ring lattice needs a degree k of at least 2".into())
            }
            Model::WattsStrogatz { p, .. } | Model::Gnp { p, .. } if !(0.0..=1.0).contains(&p) => {
                Err(ParamError::from(format!(
                    "the probability p must lie in [0, 1] (got {p})"
                )))
            }
            Model::Gnm { n, m } if m > pairs(n) => Err(ParamError::from(format!(
                "G(n, m) with n = {n} has at most {} edges (asked for {m})",
                pairs(n)
            ))),
            Model::Preferential { n, d } if d == 0 || d >= n => Err(ParamError::from(format!(
                "preferential attachment needs 1 <= d < n (d = {d}, n = {n})"
            ))),
            _ if self.nodes() < 2 => Err("a model graph needs at least 2 nodes".into()),
            _ => Ok(()),
        }
    }

    /// Nodes of the model graph.
    pub fn nodes(&self) -> u32 {
        match *self {
            Model::Lattice { n, .. }
            | Model::WattsStrogatz { n, .. }
            | Model::Gnm { n, .. }
            | Model::Gnp { n, .. }
            | Model::Preferential { n, .. } => n,
        }
    }

    /// A one-line description with the source of the model.
    pub fn describe(&self) -> String {
        match *self {
            Model::Lattice { n, k } => {
                format!("ring lattice n={n} k={k} (Watts & Strogatz 1998)")
            }
            Model::WattsStrogatz { n, k, p } => {
                format!("Watts–Strogatz n={n} k={k} p={p} (Watts & Strogatz 1998)")
            }
            Model::Gnm { n, m } => format!("Erdős–Rényi G(n={n}, m={m})"),
            Model::Gnp { n, p } => {
                format!("Erdős–Rényi G(n={n}, p={p}) by geometric skips (Batagelj & Brandes 2005)")
            }
            Model::Preferential { n, d } => format!(
                "preferential attachment n={n} d={d} (Barabási & Albert 1999; Batagelj & Brandes 2005)"
            ),
        }
    }
}

/// Stream the edges of `model` (validated first) to `emit`, in a fixed order for `seed`.
pub fn stream(model: &Model, seed: u64, emit: &mut dyn FnMut(u32, u32)) -> Result<(), ParamError> {
    model.validate()?;
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    match *model {
        Model::Lattice { n, k } => {
            for i in 0..n {
                for j in 1..=k / 2 {
                    emit(i, (i + j) % n);
                }
            }
        }
        Model::WattsStrogatz { n, k, p } => watts_strogatz_stream(n, k, p, &mut rng, emit),
        Model::Gnm { n, m } => gnm_stream(n, m, &mut rng, emit),
        Model::Gnp { n, p } => gnp_stream(n, p, &mut rng, emit),
        Model::Preferential { n, d } => preferential_stream(n, d, &mut rng, emit),
    }
    Ok(())
}

/// Build the model's graph in memory.
pub fn build(model: &Model, seed: u64) -> Result<Csr, ParamError> {
    let mut pairs = Vec::new();
    stream(model, seed, &mut |a, b| pairs.push((a, b)))?;
    Ok(csr_from_pairs(model.nodes() as usize, &pairs))
}

fn expect_valid(model: Model, seed: u64) -> Csr {
    build(&model, seed).unwrap_or_else(|e| panic!("{e}"))
}

/// Ring lattice: node i joined to its `k / 2` nearest neighbours on each side (k even, k < n).
/// Watts & Strogatz, "Collective dynamics of 'small-world' networks", Nature 393 (1998).
pub fn ring_lattice(n: u32, k: u32) -> Csr {
    expect_valid(Model::Lattice { n, k }, 0)
}

/// Watts–Strogatz: the ring lattice with each edge's far end rewired with probability `p` to a
/// uniformly chosen node, avoiding self-loops and duplicate edges (Watts & Strogatz 1998).
pub fn watts_strogatz(n: u32, k: u32, p: f64, seed: u64) -> Csr {
    expect_valid(Model::WattsStrogatz { n, k, p }, seed)
}

/// Erdős–Rényi G(n, m): m distinct edges drawn uniformly (rejection of loops and repeats).
pub fn gnm(n: u32, m: u64, seed: u64) -> Csr {
    expect_valid(Model::Gnm { n, m }, seed)
}

/// Erdős–Rényi G(n, p) in O(n + m) time (Batagelj & Brandes 2005).
pub fn gnp(n: u32, p: f64, seed: u64) -> Csr {
    expect_valid(Model::Gnp { n, p }, seed)
}

/// Preferential attachment: each new node brings `d` edges whose far ends are drawn in
/// proportion to degree, by the linear-time method of Batagelj & Brandes ("Efficient generation
/// of large random networks", Phys. Rev. E 71, 036113, 2005). As in their method, repeated draws
/// may coincide; those are merged, so some nodes get fewer than `d` new edges.
pub fn preferential_attachment(n: u32, d: u32, seed: u64) -> Csr {
    expect_valid(Model::Preferential { n, d }, seed)
}

fn key(a: u32, b: u32) -> u64 {
    ((a.min(b) as u64) << 32) | a.max(b) as u64
}

fn watts_strogatz_stream(
    n: u32,
    k: u32,
    p: f64,
    rng: &mut ChaCha8Rng,
    emit: &mut dyn FnMut(u32, u32),
) {
    // Every lattice edge is present until its own turn; only its turn may move it, so it is
    // final (and emitted) right after.
    let mut present: FxHashSet<u64> = FxHashSet::default();
    present.reserve(n as usize * (k / 2) as usize);
    for i in 0..n {
        for j in 1..=k / 2 {
            present.insert(key(i, (i + j) % n));
        }
    }
    // Rewire in the original order: ring distance j = 1 first, as in the paper.
    for j in 1..=k / 2 {
        for a in 0..n {
            let b = (a + j) % n;
            let mut end = b;
            if rng.random::<f64>() < p {
                // A node already joined to everyone cannot be rewired; give up after 64 tries.
                for _ in 0..64 {
                    let w = rng.random_range(0..n);
                    if w != a && !present.contains(&key(a, w)) {
                        present.remove(&key(a, b));
                        present.insert(key(a, w));
                        end = w;
                        break;
                    }
                }
            }
            emit(a, end);
        }
    }
}

fn gnm_stream(n: u32, m: u64, rng: &mut ChaCha8Rng, emit: &mut dyn FnMut(u32, u32)) {
    let total = n as u64 * (n as u64 - 1) / 2;
    if m * 2 > total {
        // Dense: choose the pairs to leave out instead, then stream the rest in order.
        let mut out: FxHashSet<u64> = FxHashSet::default();
        while (out.len() as u64) < total - m {
            let (a, b) = (rng.random_range(0..n), rng.random_range(0..n));
            if a != b {
                out.insert(key(a, b));
            }
        }
        for a in 0..n {
            for b in a + 1..n {
                if !out.contains(&key(a, b)) {
                    emit(a, b);
                }
            }
        }
        return;
    }
    let mut seen: FxHashSet<u64> = FxHashSet::default();
    seen.reserve(m as usize);
    while (seen.len() as u64) < m {
        let (a, b) = (rng.random_range(0..n), rng.random_range(0..n));
        if a != b && seen.insert(key(a, b)) {
            emit(a, b);
        }
    }
}

/// Batagelj & Brandes (2005), algorithm for G(n, p): walk the lower triangle of the adjacency
/// matrix, skipping a geometric number of pairs between edges.
fn gnp_stream(n: u32, p: f64, rng: &mut ChaCha8Rng, emit: &mut dyn FnMut(u32, u32)) {
    if p <= 0.0 {
        return;
    }
    if p >= 1.0 {
        for v in 1..n {
            for w in 0..v {
                emit(v, w);
            }
        }
        return;
    }
    let log_q = (1.0 - p).ln();
    let (mut v, mut w): (u64, i64) = (1, -1);
    let n = n as u64;
    while v < n {
        let r: f64 = rng.random();
        let skip = ((1.0 - r).ln() / log_q).floor();
        w += 1 + skip.min(i64::MAX as f64 / 2.0) as i64;
        while v < n && w >= v as i64 {
            w -= v as i64;
            v += 1;
        }
        if v < n {
            emit(v as u32, w as u32);
        }
    }
}

fn preferential_stream(n: u32, d: u32, rng: &mut ChaCha8Rng, emit: &mut dyn FnMut(u32, u32)) {
    let total = 2 * n as usize * d as usize;
    let mut m = vec![0u32; total];
    let mut mine: Vec<u32> = Vec::with_capacity(d as usize);
    for v in 0..n as usize {
        mine.clear();
        for i in 0..d as usize {
            let at = 2 * (v * d as usize + i);
            m[at] = v as u32;
            let r = rng.random_range(0..=at);
            m[at + 1] = m[r];
            // Every pair made now includes v, so repeats can only be among v's own draws; a
            // draw of v itself (possible only among them) would be a loop. Both are merged.
            let w = m[at + 1];
            if w != v as u32 && !mine.contains(&w) {
                mine.push(w);
                emit(v as u32, w);
            }
        }
    }
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
        assert_eq!(gnm(10, 40, 3).edge_count(), 40);
        let p = preferential_attachment(1000, 3, 5);
        assert!(p.edge_count() > 2700 && p.edge_count() <= 3000);
        p.verify().unwrap();
        assert_eq!(gnp(30, 1.0, 1).edge_count(), 435);
        assert_eq!(gnp(30, 0.0, 1).edge_count(), 0);
    }

    #[test]
    fn parameters_are_checked() {
        for bad in [
            Model::Lattice { n: 10, k: 3 },
            Model::Lattice { n: 10, k: 10 },
            Model::WattsStrogatz {
                n: 10,
                k: 4,
                p: 1.5,
            },
            Model::Gnm { n: 10, m: 46 },
            Model::Gnp { n: 10, p: -0.1 },
            Model::Preferential { n: 10, d: 0 },
        ] {
            assert!(bad.validate().is_err(), "{bad:?}");
            assert!(stream(&bad, 1, &mut |_, _| {}).is_err());
        }
    }

    #[test]
    fn gnp_edge_count_is_binomial() {
        // E[m] = p n(n-1)/2 = 0.01 * 49,995,000 = 499,950; sd = sqrt(499,950 * 0.99) = 703.5.
        let mut m = 0u64;
        let mut distinct = FxHashSet::default();
        stream(&Model::Gnp { n: 10_000, p: 0.01 }, 3, &mut |a, b| {
            assert!(a != b && a < 10_000 && b < 10_000);
            distinct.insert(key(a, b));
            m += 1;
        })
        .unwrap();
        assert_eq!(distinct.len() as u64, m, "no pair twice");
        assert!((m as f64 - 499_950.0).abs() < 4.0 * 703.5, "{m}");
    }
}

//! Distinct-count sketches of a graph's node ids and edges, by their original ids: small enough
//! to keep with every snapshot, and mergeable, so two exports can be compared for churn (nodes
//! and edges that appeared or vanished) without either file. HyperLogLog++ (Heule, Nunkesser &
//! Hall, "HyperLogLog in practice", EDBT 2013) from the `hyperloglogplus` crate, with one fixed
//! seeded hash of our own; the crate's merge does not check that two sketches hash alike, so
//! this wrapper does (same seed and precision, or no merge).

use std::hash::{BuildHasher, Hasher};

use hyperloglogplus::{HyperLogLog, HyperLogLogPlus};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use xxhash_rust::xxh3::{xxh3_64, xxh3_64_with_seed};

use crate::estimate::interval::z_for;
use crate::figure::{Figure, Interval};
use crate::store::graph::Graph;

/// Default precision: 2^14 registers, relative standard error about 0.8%.
pub const DEFAULT_PRECISION: u8 = 14;

/// A hasher built from a seed, so a sketch's hash is part of its saved state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct SeededHash {
    pub seed: u64,
}

#[derive(Debug, Clone)]
pub struct SeededHasher {
    seed: u64,
    state: u64,
}

impl Hasher for SeededHasher {
    fn write(&mut self, bytes: &[u8]) {
        self.state = xxh3_64_with_seed(bytes, self.seed ^ self.state);
    }
    fn write_u64(&mut self, x: u64) {
        self.write(&x.to_le_bytes());
    }
    fn finish(&self) -> u64 {
        self.state
    }
}

impl BuildHasher for SeededHash {
    type Hasher = SeededHasher;
    fn build_hasher(&self) -> SeededHasher {
        SeededHasher {
            seed: self.seed,
            state: 0,
        }
    }
}

type Hll = HyperLogLogPlus<u64, SeededHash>;

/// Sketches of the node ids and of the edges (unordered id pairs) of one graph.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct IdSketch {
    pub precision: u8,
    pub seed: u64,
    /// Exact counts of the graph sketched (known when it was loaded).
    pub node_count: u64,
    pub edge_count: u64,
    nodes: Hll,
    edges: Hll,
}

/// Why two sketches cannot be combined.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Mismatch {
    pub what: String,
}

/// Nodes and edges in `after` but not `before` (appeared) and the reverse (vanished).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Churn {
    pub appeared_nodes: Figure,
    pub vanished_nodes: Figure,
    pub appeared_edges: Figure,
    pub vanished_edges: Figure,
}

fn new_hll(precision: u8, seed: u64) -> Hll {
    HyperLogLogPlus::new(precision, SeededHash { seed }).expect("precision checked by caller")
}

/// The key of a node: a hash of its original id's bytes, so equal ids in two files agree.
fn node_key(label: &[u8]) -> u64 {
    xxh3_64(label)
}

/// The key of an edge from its two node keys, independent of their order.
fn edge_key(a: u64, b: u64) -> u64 {
    let (lo, hi) = if a <= b { (a, b) } else { (b, a) };
    let mut bytes = [0u8; 16];
    bytes[..8].copy_from_slice(&lo.to_le_bytes());
    bytes[8..].copy_from_slice(&hi.to_le_bytes());
    xxh3_64(&bytes)
}

impl IdSketch {
    /// Sketch `g` at `precision` (4..=18) with hash seed `seed`. Per-thread sketches are merged;
    /// a union does not depend on order, so neither does the result.
    pub fn of_graph(g: &Graph, precision: u8, seed: u64) -> IdSketch {
        assert!((4..=18).contains(&precision), "precision 4..=18");
        let n = g.node_count();
        let keys: Vec<u64> = (0..n as u32)
            .into_par_iter()
            .map(|v| node_key(&g.ids.label_bytes(v)))
            .collect();
        let merge = |mut a: (Hll, Hll), b: (Hll, Hll)| {
            a.0.merge(&b.0).expect("same precision");
            a.1.merge(&b.1).expect("same precision");
            a
        };
        let fresh = || (new_hll(precision, seed), new_hll(precision, seed));
        let (nodes, edges) = (0..n as u32)
            .into_par_iter()
            .fold(fresh, |mut acc, v| {
                let kv = keys[v as usize];
                acc.0.insert(&kv);
                for &u in g.csr.neighbors(v) {
                    if u > v {
                        acc.1.insert(&edge_key(kv, keys[u as usize]));
                    }
                }
                acc
            })
            .reduce(fresh, merge);
        IdSketch {
            precision,
            seed,
            node_count: n as u64,
            edge_count: g.edge_count(),
            nodes,
            edges,
        }
    }

    /// Relative standard error of one count, 1.04/sqrt(2^precision) (Flajolet et al. 2007).
    pub fn rse(&self) -> f64 {
        1.04 / ((1u64 << self.precision) as f64).sqrt()
    }

    /// Estimated distinct nodes and edges (the exact counts are kept too).
    pub fn counts(&self) -> (f64, f64) {
        (self.nodes.clone().count(), self.edges.clone().count())
    }

    fn check(&self, other: &IdSketch) -> Result<(), Mismatch> {
        if self.precision != other.precision || self.seed != other.seed {
            return Err(Mismatch {
                what: format!(
                    "sketches differ in precision or hash seed ({}/{} against {}/{})",
                    self.precision, self.seed, other.precision, other.seed
                ),
            });
        }
        Ok(())
    }

    /// Churn from `self` (before) to `after`, at `level`: appeared = |A ∪ B| − |A| with the
    /// exact |A|, so the union's error is the only error; its standard error is taken as the
    /// sketch's relative standard error times the union.
    pub fn churn(&self, after: &IdSketch, level: f64) -> Result<Churn, Mismatch> {
        self.check(after)?;
        let union = |a: &Hll, b: &Hll| {
            let mut u = a.clone();
            u.merge(b).expect("checked");
            u.count()
        };
        let nodes = union(&self.nodes, &after.nodes);
        let edges = union(&self.edges, &after.edges);
        let z = z_for(level);
        let rse = self.rse();
        let name = format!(
            "HyperLogLog++ union of id sketches (Heule, Nunkesser & Hall 2013), 2^{} registers",
            self.precision
        );
        let fig = |u: f64, known: u64, most: u64| {
            let value = (u - known as f64).clamp(0.0, most as f64);
            let se = rse * u;
            Figure::estimate(
                value,
                &name,
                1u64 << self.precision,
                se,
                Interval {
                    low: (value - z * se).max(0.0),
                    high: (value + z * se).min(most as f64),
                    level,
                },
            )
        };
        Ok(Churn {
            appeared_nodes: fig(nodes, self.node_count, after.node_count),
            vanished_nodes: fig(nodes, after.node_count, self.node_count),
            appeared_edges: fig(edges, self.edge_count, after.edge_count),
            vanished_edges: fig(edges, after.edge_count, self.edge_count),
        })
    }
}

impl PartialEq for IdSketch {
    /// Equal parameters, exact counts and estimates (the crate's sketches have no equality).
    fn eq(&self, other: &Self) -> bool {
        (self.precision, self.seed, self.node_count, self.edge_count)
            == (
                other.precision,
                other.seed,
                other.node_count,
                other.edge_count,
            )
            && self.counts() == other.counts()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::csr::Csr;
    use crate::store::graph::NodeIds;
    use crate::store::intake::Intake;

    fn graph(n: u32, offset: u32, edges: &[(u32, u32)]) -> Graph {
        // Node v carries the original id v + offset, so two graphs can share ids.
        let csr = Csr::from_edges(n as usize, edges);
        Graph {
            ids: NodeIds::Range {
                first: offset as u64,
                len: n as usize,
            },
            intake: Intake::generated("test", n as u64, csr.edge_count(), 0),
            csr,
        }
    }

    #[test]
    fn counts_and_churn_match_the_exact_sets() {
        // Before: ids 0..50,000 on a path; after: ids 10,000..70,000 on a path. Appeared
        // nodes = 20,000 exactly, vanished = 10,000.
        let path = |n: u32| (0..n - 1).map(|i| (i, i + 1)).collect::<Vec<_>>();
        let a = graph(50_000, 0, &path(50_000));
        let b = graph(60_000, 10_000, &path(60_000));
        let sa = IdSketch::of_graph(&a, 14, 3);
        let sb = IdSketch::of_graph(&b, 14, 3);
        let (n, e) = sa.counts();
        assert!((n / 50_000.0 - 1.0).abs() < 3.0 * sa.rse(), "{n}");
        assert!((e / 49_999.0 - 1.0).abs() < 3.0 * sa.rse(), "{e}");
        let c = sa.churn(&sb, 0.95).unwrap();
        let inside = |f: &Figure, x: f64| {
            let iv = f.interval.unwrap();
            iv.low <= x && x <= iv.high
        };
        assert!(
            inside(&c.appeared_nodes, 20_000.0),
            "{:?}",
            c.appeared_nodes
        );
        assert!(
            inside(&c.vanished_nodes, 10_000.0),
            "{:?}",
            c.vanished_nodes
        );
        // Edges (i, i+1) shared for ids 10,000..49,999: 39,999 shared.
        assert!(inside(&c.appeared_edges, 59_999.0 - 39_999.0));
        assert!(inside(&c.vanished_edges, 49_999.0 - 39_999.0));
        // A different seed is refused rather than silently mixed.
        assert!(sa.churn(&IdSketch::of_graph(&b, 14, 4), 0.95).is_err());
        // Same graph, any thread count: the same counts.
        let one = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap()
            .install(|| IdSketch::of_graph(&a, 14, 3).counts());
        assert_eq!(one, sa.counts());
    }
}

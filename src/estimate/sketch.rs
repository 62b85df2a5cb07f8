//! Distinct-count sketches of a graph's node ids and edges, by their original ids: small enough
//! to keep with every snapshot, and mergeable, so two exports can be compared for churn (nodes
//! and edges that appeared or vanished) without either file. HyperLogLog registers (Flajolet,
//! Fusy, Gandouet & Meunier, AofA 2007) counted by Ertl's improved estimator (arXiv:1702.01284,
//! 2017), which stays nearly unbiased at small counts, where HyperLogLog++ (Heule, Nunkesser &
//! Hall, EDBT 2013) needs its sparse mode.
//!
//! The registers are our own, not a crate's private state, so reports keep a block of our own
//! layout (scheme, precision, hash, seed, registers) that a dependency upgrade cannot change.
//! Two sketches merge only when they hash alike (same seed and precision).

use base64::Engine as _;
use base64::engine::general_purpose::STANDARD as BASE64;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use xxhash_rust::xxh3::{xxh3_64, xxh3_64_with_seed};

use crate::estimate::hll::{count, register_of};
use crate::estimate::interval::z_for;
use crate::figure::{Figure, Interval};
use crate::store::graph::Graph;

/// Default precision: 2^14 registers, relative standard error about 0.8%.
pub const DEFAULT_PRECISION: u8 = 14;

/// The scheme name written in every block.
pub const SCHEME: &str = "hyperloglog";

/// How keys are hashed, written in every block.
pub const HASH: &str = "xxh3-64 of the key's 8 little-endian bytes, seeded with `seed`; a node's \
                        key is xxh3-64 of its id's bytes, an edge's key is xxh3-64 of its two node \
                        keys, smaller first, as 16 little-endian bytes";

/// One HyperLogLog counter: a byte per register.
#[derive(Debug, Clone, PartialEq, Eq)]
struct Registers(Vec<u8>);

impl Registers {
    fn new(precision: u8) -> Self {
        Registers(vec![0; 1 << precision])
    }

    fn insert(&mut self, key: u64, precision: u8, seed: u64) {
        let h = xxh3_64_with_seed(&key.to_le_bytes(), seed);
        let (j, rank) = register_of(h, precision as u32);
        self.0[j] = self.0[j].max(rank);
    }

    fn merge(&mut self, other: &Registers) {
        for (a, &b) in self.0.iter_mut().zip(&other.0) {
            *a = (*a).max(b);
        }
    }

    fn count(&self, precision: u8) -> f64 {
        count(&self.0, 64 - precision as usize)
    }
}

/// Sketches of the node ids and of the edges (unordered id pairs) of one graph.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(try_from = "SketchBlock", into = "SketchBlock")]
pub struct IdSketch {
    /// log2 of the registers per counter.
    pub precision: u8,
    /// Hash seed.
    pub seed: u64,
    /// Exact counts of the graph sketched (known when it was loaded).
    pub node_count: u64,
    /// Exact edge count of the graph sketched.
    pub edge_count: u64,
    nodes: Registers,
    edges: Registers,
}

/// The sketch as reports keep it: our own layout, versioned by its scheme name.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct SketchBlock {
    /// Always "hyperloglog": one byte per register, the largest rank seen.
    pub scheme: String,
    /// log2 of the registers per counter (4 to 18).
    pub precision: u8,
    /// How keys are hashed, in words.
    pub hash: String,
    /// The hash seed; sketches merge only with equal seeds and precisions.
    pub seed: u64,
    /// Exact node count of the graph sketched.
    pub node_count: u64,
    /// Exact edge count of the graph sketched.
    pub edge_count: u64,
    /// The node counter's registers, zstd-compressed, base64 (RFC 4648).
    pub nodes: String,
    /// The edge counter's registers, zstd-compressed, base64 (RFC 4648).
    pub edges: String,
}

fn pack(r: &Registers) -> String {
    BASE64.encode(zstd::bulk::compress(&r.0, 19).unwrap_or_default())
}

fn unpack(text: &str, precision: u8, what: &str) -> Result<Registers, String> {
    let want = 1usize << precision;
    let packed = BASE64
        .decode(text)
        .map_err(|e| format!("{what} registers are not base64: {e}"))?;
    let bytes = zstd::bulk::decompress(&packed, want)
        .map_err(|e| format!("{what} registers do not decompress: {e}"))?;
    if bytes.len() != want || bytes.iter().any(|&r| r as u32 > 65 - precision as u32) {
        return Err(format!(
            "{what} registers do not fit precision {precision} ({} bytes)",
            bytes.len()
        ));
    }
    Ok(Registers(bytes))
}

impl From<IdSketch> for SketchBlock {
    fn from(s: IdSketch) -> Self {
        SketchBlock {
            scheme: SCHEME.into(),
            precision: s.precision,
            hash: HASH.into(),
            seed: s.seed,
            node_count: s.node_count,
            edge_count: s.edge_count,
            nodes: pack(&s.nodes),
            edges: pack(&s.edges),
        }
    }
}

impl TryFrom<SketchBlock> for IdSketch {
    type Error = String;
    fn try_from(b: SketchBlock) -> Result<Self, String> {
        if b.scheme != SCHEME {
            return Err(format!("unknown sketch scheme {:?}", b.scheme));
        }
        if !(4..=18).contains(&b.precision) {
            return Err(format!("precision {} outside 4..=18", b.precision));
        }
        Ok(IdSketch {
            precision: b.precision,
            seed: b.seed,
            node_count: b.node_count,
            edge_count: b.edge_count,
            nodes: unpack(&b.nodes, b.precision, "node")?,
            edges: unpack(&b.edges, b.precision, "edge")?,
        })
    }
}

/// Why two sketches cannot be combined.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Mismatch {
    /// What differs between the two sketches.
    pub what: String,
}

/// Nodes and edges in `after` but not `before` (appeared) and the reverse (vanished).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Churn {
    /// Nodes in the later graph only.
    pub appeared_nodes: Figure,
    /// Nodes in the earlier graph only.
    pub vanished_nodes: Figure,
    /// Edges in the later graph only.
    pub appeared_edges: Figure,
    /// Edges in the earlier graph only.
    pub vanished_edges: Figure,
}

/// The key of a node: a hash of its original id's bytes, so equal ids in two files agree.
fn node_key(label: &[u8]) -> u64 {
    xxh3_64(label)
}

/// The key of node `v`'s original id: [`node_key`] of its label, with integer ids written in
/// decimal on the stack rather than in a new string per node (1e8 allocations at 1e9 edges).
fn label_key(ids: &crate::store::graph::NodeIds, v: u32) -> u64 {
    use crate::store::graph::NodeIds;
    let int = |x: u64| node_key(itoa::Buffer::new().format(x).as_bytes());
    match ids {
        NodeIds::Range { first, .. } => int(first + v as u64),
        NodeIds::Ints(x) => int(x[v as usize]),
        NodeIds::Text { .. } => node_key(&ids.label_bytes(v)),
    }
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
        // Contiguous ids are hashed where needed: cheaper than a scattered read of a key table
        // (at 1e9 edges the table's reads took most of a 107 s pass).
        let keys: Option<Vec<u64>> = match g.ids {
            crate::store::graph::NodeIds::Range { .. } => None,
            _ => Some(
                (0..n as u32)
                    .into_par_iter()
                    .map(|v| label_key(&g.ids, v))
                    .collect(),
            ),
        };
        let key = |v: u32| match &keys {
            Some(k) => k[v as usize],
            None => label_key(&g.ids, v),
        };
        let merge = |mut a: (Registers, Registers), b: (Registers, Registers)| {
            a.0.merge(&b.0);
            a.1.merge(&b.1);
            a
        };
        let fresh = || (Registers::new(precision), Registers::new(precision));
        let (nodes, edges) = (0..n as u32)
            .into_par_iter()
            .fold(fresh, |mut acc, v| {
                let kv = key(v);
                acc.0.insert(kv, precision, seed);
                for &u in g.csr.neighbors(v) {
                    if u > v {
                        acc.1.insert(edge_key(kv, key(u)), precision, seed);
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
        (
            self.nodes.count(self.precision),
            self.edges.count(self.precision),
        )
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
        let union = |a: &Registers, b: &Registers| {
            let mut u = a.clone();
            u.merge(b);
            u.count(self.precision)
        };
        let nodes = union(&self.nodes, &after.nodes);
        let edges = union(&self.edges, &after.edges);
        let z = z_for(level);
        let rse = self.rse();
        let name = format!(
            "HyperLogLog union of id sketches (Flajolet et al. 2007; Ertl 2017 estimator), 2^{} \
             registers",
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
            directions: None,
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
            let iv = f.interval().unwrap();
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

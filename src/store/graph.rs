//! A loaded graph: the adjacency store, the user's node ids, and what reading it found.

use std::borrow::Cow;

use crate::store::csr::Csr;
use crate::store::intake::{IdKind, Intake};
use crate::store::slab::Slab;

/// The original id of every dense node index.
#[derive(Debug)]
pub enum NodeIds {
    /// Ids `first, first + 1, …` (contiguous numbering needs no table).
    Range {
        /// The first id.
        first: u64,
        /// How many ids.
        len: usize,
    },
    /// Integer ids, ascending.
    Ints(Slab<u64>),
    /// Text ids, bytewise ascending: id `i` is `bytes[offsets[i]..offsets[i + 1]]`.
    Text {
        /// Where each id starts in `bytes` (n + 1 offsets).
        offsets: Slab<u64>,
        /// The ids' bytes, concatenated in rank order.
        bytes: Slab<u8>,
    },
}

impl NodeIds {
    /// Use a range when the integer ids are contiguous, else keep the table.
    pub fn from_ints(ids: Vec<u64>) -> Self {
        match ids.first() {
            Some(&first)
                if ids
                    .last()
                    .is_some_and(|&l| l - first == ids.len() as u64 - 1) =>
            {
                NodeIds::Range {
                    first,
                    len: ids.len(),
                }
            }
            None => NodeIds::Range { first: 0, len: 0 },
            _ => NodeIds::Ints(ids.into()),
        }
    }

    /// Number of ids (= nodes).
    pub fn len(&self) -> usize {
        match self {
            NodeIds::Range { len, .. } => *len,
            NodeIds::Ints(v) => v.len(),
            NodeIds::Text { offsets, .. } => offsets.len() - 1,
        }
    }

    /// Whether there are no ids.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Integer or text ids.
    pub fn kind(&self) -> IdKind {
        match self {
            NodeIds::Text { .. } => IdKind::Text,
            _ => IdKind::Integer,
        }
    }

    /// The original id of dense index `i`, as the user wrote it (integers in decimal).
    pub fn label(&self, i: u32) -> Cow<'_, str> {
        match self {
            NodeIds::Range { first, .. } => Cow::Owned((first + i as u64).to_string()),
            NodeIds::Ints(v) => Cow::Owned(v[i as usize].to_string()),
            NodeIds::Text { offsets, bytes } => String::from_utf8_lossy(
                &bytes[offsets[i as usize] as usize..offsets[i as usize + 1] as usize],
            ),
        }
    }

    /// The original id of dense index `i` as bytes (text ids may not be UTF-8).
    pub fn label_bytes(&self, i: u32) -> Cow<'_, [u8]> {
        match self {
            NodeIds::Text { offsets, bytes } => Cow::Borrowed(
                &bytes[offsets[i as usize] as usize..offsets[i as usize + 1] as usize],
            ),
            _ => Cow::Owned(self.label(i).into_owned().into_bytes()),
        }
    }

    /// Bytes the table occupies.
    pub fn bytes(&self) -> u64 {
        match self {
            NodeIds::Range { .. } => 0,
            NodeIds::Ints(v) => v.len() as u64 * 8,
            NodeIds::Text { offsets, bytes } => offsets.len() as u64 * 8 + bytes.len() as u64,
        }
    }
}

/// Direction flag of an entry `v` in `u`'s list: the input has the edge u → v.
pub const OUT: u8 = 1;
/// Direction flag of an entry `v` in `u`'s list: the input has the edge v → u.
pub const IN: u8 = 2;

/// A loaded graph: the adjacency, the original ids, and what reading found.
#[derive(Debug)]
pub struct Graph {
    /// The adjacency.
    pub csr: Csr,
    /// Each node's original id.
    pub ids: NodeIds,
    /// What reading the input found.
    pub intake: Intake,
    /// For a directed input: each entry of `csr.targets` flagged [`OUT`]
    /// (u → v), [`IN`] (v → u) or both; `None` for undirected input.
    pub directions: Option<Slab<u8>>,
}

/// Degree extremes and mean, the first figures a user checks after loading.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DegreeSummary {
    /// Smallest degree.
    pub min: u32,
    /// Largest degree.
    pub max: u32,
    /// Mean degree.
    pub mean: f64,
}

impl Graph {
    /// Nodes.
    pub fn node_count(&self) -> usize {
        self.csr.node_count()
    }

    /// Undirected edges.
    pub fn edge_count(&self) -> u64 {
        self.csr.edge_count()
    }

    /// Exact minimum, mean and maximum degree.
    pub fn degree_summary(&self) -> DegreeSummary {
        use rayon::prelude::*;
        let o = self.csr.offsets();
        let n = self.node_count();
        let (min, max) = (0..n)
            .into_par_iter()
            .map(|u| {
                let d = (o[u + 1] - o[u]) as u32;
                (d, d)
            })
            .reduce(|| (u32::MAX, 0), |a, b| (a.0.min(b.0), a.1.max(b.1)));
        DegreeSummary {
            min: if n == 0 { 0 } else { min },
            max,
            mean: if n == 0 {
                0.0
            } else {
                2.0 * self.edge_count() as f64 / n as f64
            },
        }
    }

    /// For a directed graph, check that every entry's direction mirrors its twin's: u → v in
    /// u's list is v ← u in v's (lists must be sorted and symmetric: [`Csr::verify`] first).
    /// Returns the first node whose list disagrees.
    pub fn verify_directions(&self) -> Result<(), String> {
        use rayon::prelude::*;
        let Some(dir) = self.directions.as_deref() else {
            return Ok(());
        };
        let off = self.csr.offsets();
        if dir.len() != self.csr.targets().len() {
            return Err("the directions do not cover the adjacency".into());
        }
        let mirror = |f: u8| ((f & OUT) << 1) | ((f & IN) >> 1);
        let bad = (0..self.node_count() as u32)
            .into_par_iter()
            .find_first(|&u| {
                let lo = off[u as usize] as usize;
                self.csr.neighbors(u).iter().enumerate().any(|(k, &v)| {
                    let f = dir[lo + k];
                    let twin = self
                        .csr
                        .neighbors(v)
                        .binary_search(&u)
                        .map(|j| dir[off[v as usize] as usize + j]);
                    f == 0 || f > (OUT | IN) || twin != Ok(mirror(f))
                })
            });
        match bad {
            Some(u) => Err(format!(
                "node index {u}: an edge's direction disagrees with its twin's"
            )),
            None => Ok(()),
        }
    }

    /// Resident bytes of the store: adjacency, id table and, when directed, the directions.
    pub fn store_bytes(&self) -> u64 {
        self.csr.bytes() + self.ids.bytes() + self.directions.as_ref().map_or(0, |d| d.len() as u64)
    }
}

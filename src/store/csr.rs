//! The compact adjacency store: compressed sparse rows with sorted, de-duplicated, symmetric
//! neighbour lists (`u32` targets, `u64` offsets), owned or mapped from a store file.

use crate::store::slab::Slab;

/// Compressed sparse rows of an undirected graph: sorted, deduplicated, symmetric neighbour
/// lists (u32 targets, u64 offsets), owned or mapped from a store file.
#[derive(Debug)]
pub struct Csr {
    offsets: Slab<u64>,
    targets: Slab<u32>,
}

impl Csr {
    /// Wrap arrays that already satisfy the invariants (checked by `verify`).
    pub fn from_parts(offsets: Slab<u64>, targets: Slab<u32>) -> Self {
        debug_assert_eq!(offsets.last().copied(), Some(targets.len() as u64));
        Csr { offsets, targets }
    }

    /// Build from an undirected edge list by the simplest possible route; the reference that
    /// the fast builder is tested against, and a convenience for small graphs.
    pub fn from_edges(n: usize, edges: &[(u32, u32)]) -> Self {
        let mut lists = vec![Vec::new(); n];
        for &(u, v) in edges {
            if u != v {
                lists[u as usize].push(v);
                lists[v as usize].push(u);
            }
        }
        let mut offsets = Vec::with_capacity(n + 1);
        let mut targets = Vec::new();
        offsets.push(0u64);
        for mut l in lists {
            l.sort_unstable();
            l.dedup();
            targets.extend_from_slice(&l);
            offsets.push(targets.len() as u64);
        }
        Csr::from_parts(offsets.into(), targets.into())
    }

    /// Drop a mapped store's pages from the resident set (see [`Slab::release_pages`]).
    pub(crate) fn release_pages(&self) {
        self.offsets.release_pages();
        self.targets.release_pages();
    }

    /// Nodes.
    #[inline]
    pub fn node_count(&self) -> usize {
        self.offsets.len() - 1
    }

    /// Undirected edges (each stored twice).
    #[inline]
    pub fn edge_count(&self) -> u64 {
        self.targets.len() as u64 / 2
    }

    /// Where each node's list starts (n + 1 offsets).
    #[inline]
    pub fn offsets(&self) -> &[u64] {
        &self.offsets
    }

    /// Every list, concatenated.
    #[inline]
    pub fn targets(&self) -> &[u32] {
        &self.targets
    }

    /// The neighbours of `u`, ascending.
    #[inline]
    pub fn neighbors(&self, u: u32) -> &[u32] {
        let o = self.offsets();
        &self.targets()[o[u as usize] as usize..o[u as usize + 1] as usize]
    }

    /// The degree of `u`.
    #[inline]
    pub fn degree(&self, u: u32) -> u32 {
        let o = self.offsets();
        (o[u as usize + 1] - o[u as usize]) as u32
    }

    /// Build a CSR whose list for node `u` (of `n`) is produced by `list(u, &mut out)` appending
    /// to `out`. Nodes are processed in parallel blocks, one allocation per block, not per node.
    pub fn from_lists(n: usize, list: impl Fn(u32, &mut Vec<u32>) + Sync) -> Self {
        use rayon::prelude::*;
        const BLOCK: usize = 4096;
        let blocks: Vec<(Vec<u64>, Vec<u32>)> = (0..n.div_ceil(BLOCK))
            .into_par_iter()
            .map(|b| {
                let mut lens = Vec::with_capacity(BLOCK);
                let mut out = Vec::new();
                for u in b * BLOCK..((b + 1) * BLOCK).min(n) {
                    let before = out.len();
                    list(u as u32, &mut out);
                    lens.push((out.len() - before) as u64);
                }
                (lens, out)
            })
            .collect();
        let total: usize = blocks.iter().map(|b| b.1.len()).sum();
        let mut offsets = super::pages::with_capacity(n + 1);
        let mut targets = super::pages::with_capacity(total);
        offsets.push(0u64);
        let mut acc = 0u64;
        for (lens, out) in blocks {
            for l in lens {
                acc += l;
                offsets.push(acc);
            }
            targets.extend_from_slice(&out);
        }
        Csr {
            offsets: offsets.into(),
            targets: targets.into(),
        }
    }

    /// Whether the lists are mapped from a store file.
    pub fn is_mapped(&self) -> bool {
        self.targets.is_mapped()
    }

    /// Bytes the two arrays occupy.
    pub fn bytes(&self) -> u64 {
        self.offsets.len() as u64 * 8 + self.targets.len() as u64 * 4
    }

    /// Check every invariant: offsets start at 0, never decrease and end at the target count;
    /// every list is strictly increasing, has no self-loop, and every edge appears in both
    /// directions. Returns the first violation found.
    pub fn verify(&self) -> Result<(), Violation> {
        use rayon::prelude::*;
        let o = self.offsets();
        let t = self.targets();
        let n = self.node_count();
        if o.first() != Some(&0) {
            return Err(Violation::OffsetsStart);
        }
        if o[n] != t.len() as u64 {
            return Err(Violation::LastOffset {
                last: o[n],
                targets: t.len() as u64,
            });
        }
        if let Some(u) = (0..n).into_par_iter().find_first(|&u| o[u] > o[u + 1]) {
            return Err(Violation::OffsetsDecrease { node: u as u32 });
        }
        let bad = (0..n as u32).into_par_iter().find_first(|&u| {
            let l = self.neighbors(u);
            l.windows(2).any(|w| w[0] >= w[1])
                || l.iter().any(|&v| {
                    v as usize >= n || v == u || self.neighbors(v).binary_search(&u).is_err()
                })
        });
        match bad {
            Some(u) => Err(Violation::BadList { node: u }),
            None => Ok(()),
        }
    }
}

/// The first broken invariant [`Csr::verify`] found.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
pub enum Violation {
    /// The first offset is not 0.
    #[error("offsets do not start at 0")]
    OffsetsStart,
    /// The last offset is not the number of targets.
    #[error("last offset {last} differs from target count {targets}")]
    LastOffset {
        /// The last offset.
        last: u64,
        /// Targets stored.
        targets: u64,
    },
    /// Offsets decrease after this node.
    #[error("offsets decrease at node index {node}")]
    OffsetsDecrease {
        /// The node index.
        node: u32,
    },
    /// This node's list breaks an invariant.
    #[error(
        "neighbour list of node index {node} is unsorted, out of range, has a self-loop or lacks \
         its reverse edge"
    )]
    BadList {
        /// The node index.
        node: u32,
    },
}

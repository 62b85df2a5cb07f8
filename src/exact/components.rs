//! Connected components by a concurrent union-find: every edge is processed in parallel, roots
//! are linked by compare-and-swap (larger index under smaller), with path halving. This is the
//! lock-free scheme analysed by Jayanti & Tarjan ("A randomized concurrent algorithm for disjoint
//! set union", PODC 2016), with index order in place of random priorities. Because the smaller
//! root always wins, every component ends up labelled by its smallest node index, so the labels
//! do not depend on the thread count.

use std::sync::atomic::{AtomicU32, Ordering::Relaxed};

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::store::csr::Csr;
use crate::store::pages;

/// Component of every node, and sizes.
#[derive(Debug, Clone)]
pub struct Components {
    /// `label[v]` = smallest node index in v's component.
    pub label: Vec<u32>,
    /// Component sizes, largest first; ties broken by smallest label.
    pub sizes: Vec<(u32, u64)>,
}

/// The summary a profile reports.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct ComponentStats {
    /// Number of connected components (isolated nodes count).
    pub count: u64,
    /// Nodes in the largest component.
    pub giant_nodes: u64,
    /// Edges in the largest component.
    pub giant_edges: u64,
    /// Share of nodes in the largest component.
    pub giant_fraction: f64,
    /// Isolated nodes are components of size 1.
    pub singletons: u64,
    /// (size, number of components of that size), ascending size.
    pub size_histogram: Vec<(u64, u64)>,
}

fn find(p: &[AtomicU32], mut x: u32) -> u32 {
    loop {
        let px = p[x as usize].load(Relaxed);
        if px == x {
            return x;
        }
        let gp = p[px as usize].load(Relaxed);
        // Path halving: point x at its grandparent (any interleaving keeps a valid forest).
        let _ = p[x as usize].compare_exchange_weak(px, gp, Relaxed, Relaxed);
        x = gp;
    }
}

fn union(p: &[AtomicU32], a: u32, b: u32) {
    let (mut a, mut b) = (a, b);
    loop {
        a = find(p, a);
        b = find(p, b);
        if a == b {
            return;
        }
        let (lo, hi) = if a < b { (a, b) } else { (b, a) };
        if p[hi as usize]
            .compare_exchange(hi, lo, Relaxed, Relaxed)
            .is_ok()
        {
            return;
        }
    }
}

/// Connected components by a concurrent union-find with Afforest's subgraph sampling (Sutton,
/// Ben-Nun & Barak, "Optimizing parallel graph connectivity computation via subgraph sampling",
/// IPDPS 2018): link every node to its first two neighbours, guess the largest component from a
/// sample of nodes, then link the remaining neighbours of nodes outside it only. An edge from the
/// large component to outside it is still linked from its other end (lists are symmetric), so the
/// result is exact; most of the adjacency of the giant component is never touched again. Labels
/// are each component's smallest node, so they never depend on threads.
pub fn components(g: &Csr) -> Components {
    const FIRST: usize = 2;
    let n = g.node_count();
    let mut parent: Vec<AtomicU32> = pages::with_capacity(n);
    parent.extend((0..n as u32).map(AtomicU32::new));
    for r in 0..FIRST {
        (0..n as u32).into_par_iter().for_each(|u| {
            if let Some(&v) = g.neighbors(u).get(r) {
                union(&parent, u, v);
            }
        });
    }
    (0..n as u32).into_par_iter().for_each(|u| {
        let root = find(&parent, u);
        parent[u as usize].store(root, Relaxed);
    });
    let big = likely_giant(&parent, n);
    (0..n as u32).into_par_iter().for_each(|u| {
        if Some(find(&parent, u)) == big {
            return;
        }
        for &v in g.neighbors(u).iter().skip(FIRST) {
            union(&parent, u, v);
        }
    });
    let mut label: Vec<u32> = pages::with_capacity(n);
    (0..n as u32)
        .into_par_iter()
        .map(|u| find(&parent, u))
        .collect_into_vec(&mut label);
    let mut count: Vec<u64> = pages::zeroed(n);
    for &l in &label {
        count[l as usize] += 1;
    }
    let mut sizes: Vec<(u32, u64)> = count
        .iter()
        .enumerate()
        .filter(|&(_, &c)| c > 0)
        .map(|(l, &c)| (l as u32, c))
        .collect();
    sizes.sort_by_key(|&(l, c)| (std::cmp::Reverse(c), l));
    Components { label, sizes }
}

/// The most frequent root among an evenly spaced sample of nodes (the smallest on a tie).
fn likely_giant(parent: &[AtomicU32], n: usize) -> Option<u32> {
    if n == 0 {
        return None;
    }
    let step = n.div_ceil(1024);
    let mut roots: Vec<u32> = (0..n)
        .step_by(step)
        .map(|u| parent[u].load(Relaxed))
        .collect();
    roots.sort_unstable();
    let mut best = (0usize, roots[0]);
    for run in roots.chunk_by(|a, b| a == b) {
        if run.len() > best.0 {
            best = (run.len(), run[0]);
        }
    }
    Some(best.1)
}

impl Components {
    /// The largest component's label (the smallest such label on a tie).
    pub fn giant(&self) -> Option<u32> {
        self.sizes.first().map(|&(l, _)| l)
    }

    /// Node indices of the giant component, ascending.
    pub fn giant_nodes(&self) -> Vec<u32> {
        let Some(g) = self.giant() else {
            return Vec::new();
        };
        (0..self.label.len() as u32)
            .filter(|&v| self.label[v as usize] == g)
            .collect()
    }

    /// Nodes in the giant component.
    pub fn giant_size(&self) -> usize {
        self.sizes.first().map_or(0, |&(_, c)| c as usize)
    }

    /// Each node's component rank: 1 for the giant component, then by size.
    pub fn ranks(&self) -> Vec<u32> {
        let mut rank = vec![0u32; self.label.len()];
        for (r, &(label, _)) in self.sizes.iter().enumerate() {
            rank[label as usize] = r as u32 + 1;
        }
        self.label.iter().map(|&l| rank[l as usize]).collect()
    }

    /// Size, giant component and size histogram of the components of `g`.
    pub fn stats(&self, g: &Csr) -> ComponentStats {
        let n = self.label.len() as u64;
        let giant = self.giant();
        let giant_nodes = self.sizes.first().map_or(0, |&(_, c)| c);
        let giant_edges = match giant {
            Some(l) => {
                (0..self.label.len() as u32)
                    .into_par_iter()
                    .filter(|&u| self.label[u as usize] == l)
                    .map(|u| g.degree(u) as u64)
                    .sum::<u64>()
                    / 2
            }
            None => 0,
        };
        let mut hist = std::collections::BTreeMap::new();
        for &(_, c) in &self.sizes {
            *hist.entry(c).or_insert(0u64) += 1;
        }
        ComponentStats::from_sizes(n, hist.into_iter().collect(), giant_nodes, giant_edges)
    }
}

impl ComponentStats {
    /// The figures from the size histogram (`(size, components of that size)`, ascending) and
    /// the giant component's nodes and edges, among `n` nodes; shared with the distributed
    /// profile.
    pub(crate) fn from_sizes(
        n: u64,
        size_histogram: Vec<(u64, u64)>,
        giant_nodes: u64,
        giant_edges: u64,
    ) -> Self {
        ComponentStats {
            count: size_histogram.iter().map(|s| s.1).sum(),
            giant_nodes,
            giant_edges,
            giant_fraction: if n == 0 {
                0.0
            } else {
                giant_nodes as f64 / n as f64
            },
            singletons: size_histogram.iter().find(|s| s.0 == 1).map_or(0, |s| s.1),
            size_histogram,
        }
    }
}

/// The subgraph induced by `nodes` (ascending), renumbered 0..len in that order.
pub fn induced(g: &Csr, nodes: &[u32]) -> Csr {
    let mut index = vec![u32::MAX; g.node_count()];
    for (i, &v) in nodes.iter().enumerate() {
        index[v as usize] = i as u32;
    }
    // Renumbering keeps each list ascending.
    Csr::from_lists(nodes.len(), |i, out| {
        out.extend(g.neighbors(nodes[i as usize]).iter().filter_map(|&w| {
            let j = index[w as usize];
            (j != u32::MAX).then_some(j)
        }));
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_are_smallest_members() {
        let g = Csr::from_edges(7, &[(5, 1), (1, 3), (2, 4), (6, 6)]);
        let c = components(&g);
        assert_eq!(c.label, vec![0, 1, 2, 1, 2, 1, 6]);
        assert_eq!(c.sizes, vec![(1, 3), (2, 2), (0, 1), (6, 1)]);
        let s = c.stats(&g);
        assert_eq!(
            (s.count, s.giant_nodes, s.giant_edges, s.singletons),
            (4, 3, 2, 2)
        );
        assert_eq!(s.size_histogram, vec![(1, 2), (2, 1), (3, 1)]);
        let sub = induced(&g, &c.giant_nodes());
        assert_eq!(sub.node_count(), 3);
        assert_eq!(sub.edge_count(), 2);
        sub.verify().unwrap();
    }
}

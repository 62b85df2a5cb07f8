//! Breadth-first search from one source, direction-optimising: top-down while the frontier is
//! small, bottom-up (unvisited nodes look for a parent in the frontier) while it is large.
//! Beamer, Asanović & Patterson, "Direction-optimizing breadth-first search", SC 2012, with their
//! switching thresholds alpha = 14 and beta = 24. Large levels are processed in parallel; the
//! distances found are the same on any thread count (only the order inside a level varies).

use std::sync::atomic::{AtomicU32, Ordering::Relaxed};

use rayon::prelude::*;

use crate::store::csr::Csr;

/// Distance of a node not reached.
pub const UNREACHED: u32 = u32::MAX;

/// Reusable buffers, so repeated searches allocate nothing.
pub struct Bfs {
    dist: Vec<AtomicU32>,
    frontier: Vec<u32>,
    /// Nodes at each distance from the last source (index 0 is the source itself).
    pub levels: Vec<u64>,
    /// Adjacency entries examined by the last search.
    pub edges_scanned: u64,
}

const ALPHA: u64 = 14;
const BETA: u64 = 24;
/// Levels with fewer frontier nodes (top-down) are not worth splitting across threads.
const PARALLEL_FRONTIER: usize = 2048;
const CHUNK: usize = 4096;

impl Bfs {
    /// A searcher for graphs of `n` nodes (its arrays are reused across searches).
    pub fn new(n: usize) -> Self {
        Bfs {
            dist: (0..n).map(|_| AtomicU32::new(UNREACHED)).collect(),
            frontier: Vec::new(),
            levels: Vec::new(),
            edges_scanned: 0,
        }
    }

    /// Distances from the last source ([`UNREACHED`] where not reached).
    pub fn dist(&self) -> &[u32] {
        // SAFETY: AtomicU32 has the layout of u32, and every write happens inside `run`, which
        // takes `&mut self`; while this shared borrow lives nothing can write.
        unsafe { std::slice::from_raw_parts(self.dist.as_ptr() as *const u32, self.dist.len()) }
    }

    /// Eccentricity of the last source within its component.
    pub fn eccentricity(&self) -> u32 {
        self.levels.len().saturating_sub(1) as u32
    }

    /// Nodes reached by the last search, the source included.
    pub fn reached(&self) -> u64 {
        self.levels.iter().sum()
    }

    /// Search from `source` on this thread only (for many searches run side by side).
    pub fn run(&mut self, g: &Csr, source: u32) {
        self.search(g, source, false);
    }

    /// Search from `source`, splitting large levels across the thread pool.
    pub fn run_parallel(&mut self, g: &Csr, source: u32) {
        self.search(g, source, true);
    }

    fn search(&mut self, g: &Csr, source: u32, parallel: bool) {
        let n = g.node_count();
        if self.dist.len() != n {
            *self = Bfs::new(n);
        } else {
            self.dist.iter().for_each(|d| d.store(UNREACHED, Relaxed));
        }
        self.frontier.clear();
        self.levels.clear();
        self.edges_scanned = 0;
        let o = g.offsets();
        let t = g.targets();
        let deg = |v: u32| o[v as usize + 1] - o[v as usize];
        let dist = &self.dist;
        dist[source as usize].store(0, Relaxed);
        self.frontier.push(source);
        self.levels.push(1);
        let mut unexplored_edges = t.len() as u64 - deg(source);
        let mut frontier_edges = deg(source);
        let mut bottom_up = false;
        let mut level = 0u32;
        while !self.frontier.is_empty() {
            // Beamer et al.: go bottom-up when the frontier's edges exceed the unexplored
            // edges / alpha; come back when the frontier shrinks below n / beta.
            if !bottom_up && frontier_edges > unexplored_edges / ALPHA {
                bottom_up = true;
            } else if bottom_up && (self.frontier.len() as u64) < n as u64 / BETA {
                bottom_up = false;
            }
            // Each piece returns (new frontier nodes, their edges, entries scanned).
            let (next, next_edges, scanned) = if bottom_up {
                // A node's distance is written only by the piece that owns it; others read it
                // only to compare with `level`, which a concurrent write (level + 1) cannot
                // change the outcome of.
                let piece = |lo: usize, hi: usize| {
                    let (mut out, mut e, mut s) = (Vec::new(), 0u64, 0u64);
                    for v in lo..hi {
                        if dist[v].load(Relaxed) != UNREACHED {
                            continue;
                        }
                        for &u in &t[o[v] as usize..o[v + 1] as usize] {
                            s += 1;
                            if dist[u as usize].load(Relaxed) == level {
                                dist[v].store(level + 1, Relaxed);
                                out.push(v as u32);
                                e += deg(v as u32);
                                break;
                            }
                        }
                    }
                    (out, e, s)
                };
                if parallel && n > CHUNK {
                    merge(
                        (0..n.div_ceil(CHUNK))
                            .into_par_iter()
                            .map(|c| piece(c * CHUNK, ((c + 1) * CHUNK).min(n)))
                            .collect(),
                    )
                } else {
                    piece(0, n)
                }
            } else {
                let piece = |us: &[u32]| {
                    let (mut out, mut e, mut s) = (Vec::new(), 0u64, 0u64);
                    for &u in us {
                        let nbrs = &t[o[u as usize] as usize..o[u as usize + 1] as usize];
                        s += nbrs.len() as u64;
                        for &v in nbrs {
                            let d = &dist[v as usize];
                            // Claim by compare-and-swap so two pieces never both take v.
                            if d.load(Relaxed) == UNREACHED
                                && d.compare_exchange(UNREACHED, level + 1, Relaxed, Relaxed)
                                    .is_ok()
                            {
                                out.push(v);
                                e += deg(v);
                            }
                        }
                    }
                    (out, e, s)
                };
                if parallel && self.frontier.len() >= PARALLEL_FRONTIER {
                    merge(self.frontier.par_chunks(512).map(piece).collect())
                } else {
                    piece(&self.frontier)
                }
            };
            self.edges_scanned += scanned;
            unexplored_edges = unexplored_edges.saturating_sub(next_edges);
            frontier_edges = next_edges;
            self.frontier = next;
            if !self.frontier.is_empty() {
                self.levels.push(self.frontier.len() as u64);
            }
            level += 1;
        }
    }
}

fn merge(parts: Vec<(Vec<u32>, u64, u64)>) -> (Vec<u32>, u64, u64) {
    let mut out = Vec::with_capacity(parts.iter().map(|p| p.0.len()).sum());
    let (mut e, mut s) = (0, 0);
    for (p, pe, ps) in parts {
        out.extend_from_slice(&p);
        e += pe;
        s += ps;
    }
    (out, e, s)
}

/// Plain queue BFS, the reference the fast search is tested against.
pub fn naive_distances(g: &Csr, source: u32) -> Vec<u32> {
    let mut dist = vec![UNREACHED; g.node_count()];
    let mut queue = std::collections::VecDeque::from([source]);
    dist[source as usize] = 0;
    while let Some(u) = queue.pop_front() {
        for &v in g.neighbors(u) {
            if dist[v as usize] == UNREACHED {
                dist[v as usize] = dist[u as usize] + 1;
                queue.push_back(v);
            }
        }
    }
    dist
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn path_and_disconnected() {
        let g = Csr::from_edges(6, &[(0, 1), (1, 2), (2, 3), (4, 5)]);
        let mut b = Bfs::new(6);
        b.run(&g, 0);
        assert_eq!(b.dist(), &[0, 1, 2, 3, UNREACHED, UNREACHED]);
        assert_eq!(b.levels, vec![1, 1, 1, 1]);
        assert_eq!((b.eccentricity(), b.reached()), (3, 4));
        b.run(&g, 5);
        assert_eq!(b.dist()[4], 1);
        assert_eq!(b.eccentricity(), 1);
    }

    #[test]
    fn parallel_search_matches_naive_on_a_large_graph() {
        let g = crate::models::generate::watts_strogatz(20_000, 6, 0.05, 3);
        let mut b = Bfs::new(g.node_count());
        for s in [0, 777, 19_999] {
            b.run_parallel(&g, s);
            assert_eq!(b.dist(), &naive_distances(&g, s)[..]);
        }
    }
}

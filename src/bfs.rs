//! Breadth-first search from one source, direction-optimising: top-down while the frontier is
//! small, bottom-up (unvisited nodes look for a parent in the frontier) while it is large.
//! Beamer, Asanović & Patterson, "Direction-optimizing breadth-first search", SC 2012, with their
//! switching thresholds alpha = 14 and beta = 24.

use crate::csr::Csr;

pub const UNREACHED: u32 = u32::MAX;

/// Reusable buffers, so repeated searches allocate nothing.
pub struct Bfs {
    pub dist: Vec<u32>,
    frontier: Vec<u32>,
    next: Vec<u32>,
    /// Nodes at each distance from the last source (index 0 is the source itself).
    pub levels: Vec<u64>,
    /// Adjacency entries examined by the last search.
    pub edges_scanned: u64,
}

const ALPHA: u64 = 14;
const BETA: u64 = 24;

impl Bfs {
    pub fn new(n: usize) -> Self {
        Bfs {
            dist: vec![UNREACHED; n],
            frontier: Vec::new(),
            next: Vec::new(),
            levels: Vec::new(),
            edges_scanned: 0,
        }
    }

    /// Eccentricity of the last source within its component.
    pub fn eccentricity(&self) -> u32 {
        self.levels.len().saturating_sub(1) as u32
    }

    /// Nodes reached by the last search, the source included.
    pub fn reached(&self) -> u64 {
        self.levels.iter().sum()
    }

    /// Search from `source`; afterwards `dist[v]` is the distance or [`UNREACHED`].
    pub fn run(&mut self, g: &Csr, source: u32) {
        let n = g.node_count();
        self.dist.clear();
        self.dist.resize(n, UNREACHED);
        self.frontier.clear();
        self.levels.clear();
        self.edges_scanned = 0;
        let o = g.offsets();
        let t = g.targets();
        let deg = |v: u32| o[v as usize + 1] - o[v as usize];
        self.dist[source as usize] = 0;
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
            self.next.clear();
            let mut next_edges = 0u64;
            if bottom_up {
                for v in 0..n as u32 {
                    if self.dist[v as usize] != UNREACHED {
                        continue;
                    }
                    for &u in &t[o[v as usize] as usize..o[v as usize + 1] as usize] {
                        self.edges_scanned += 1;
                        if self.dist[u as usize] == level {
                            self.dist[v as usize] = level + 1;
                            self.next.push(v);
                            next_edges += deg(v);
                            break;
                        }
                    }
                }
            } else {
                for &u in &self.frontier {
                    let nbrs = &t[o[u as usize] as usize..o[u as usize + 1] as usize];
                    self.edges_scanned += nbrs.len() as u64;
                    for &v in nbrs {
                        if self.dist[v as usize] == UNREACHED {
                            self.dist[v as usize] = level + 1;
                            self.next.push(v);
                            next_edges += deg(v);
                        }
                    }
                }
            }
            unexplored_edges = unexplored_edges.saturating_sub(next_edges);
            frontier_edges = next_edges;
            std::mem::swap(&mut self.frontier, &mut self.next);
            if !self.frontier.is_empty() {
                self.levels.push(self.frontier.len() as u64);
            }
            level += 1;
        }
    }
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
        assert_eq!(b.dist, vec![0, 1, 2, 3, UNREACHED, UNREACHED]);
        assert_eq!(b.levels, vec![1, 1, 1, 1]);
        assert_eq!((b.eccentricity(), b.reached()), (3, 4));
        b.run(&g, 5);
        assert_eq!(b.dist[4], 1);
        assert_eq!(b.eccentricity(), 1);
    }
}

//! Figures of a directed graph, read from the symmetrised adjacency and each entry's direction
//! flags: reciprocity, in- and out-degrees, strongly connected components and Fagiolo's
//! directed clustering. All exact, in integer sums, identical on any thread count.

use std::sync::atomic::{AtomicU64, Ordering::Relaxed};

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::exact::components::ComponentStats;
use crate::store::csr::Csr;
use crate::store::graph::{IN, OUT};

/// In- or out-degree statistics.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct DirectedDegrees {
    /// Smallest degree.
    pub min: u32,
    /// Largest degree.
    pub max: u32,
    /// Mean degree: directed edges / nodes (the same for in and out).
    pub mean: f64,
    /// Mean of the squared degree.
    pub second_moment: f64,
    /// Nodes with this degree 0 (sources have in-degree 0, sinks out-degree 0).
    pub zero: u64,
    /// `histogram[k]` = nodes of degree k, for k up to the maximum.
    pub histogram: Vec<u64>,
}

/// Fagiolo's clustering of a directed graph, "total" form: every orientation of the three
/// edges of a triangle counts (Fagiolo, "Clustering in complex directed networks", Phys. Rev. E
/// 76, 026107, 2007, eq. 9).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct DirectedClustering {
    /// Directed triangles: (A + Aᵀ)³ summed over the diagonal, halved (each undirected triangle
    /// counts the product of its three edges' multiplicities, 1 or 2, at each corner).
    pub directed_triangles: u64,
    /// Mean over all nodes of C_i = t_i / (d_i (d_i − 1) − 2 d_i↔), with 0 where the
    /// denominator is 0 (d_i total degree, d_i↔ reciprocated neighbours).
    pub average: f64,
    /// Σ t_i / Σ (d_i (d_i − 1) − 2 d_i↔): the share of directed triples that close, the
    /// ratio form of the same coefficient.
    pub transitivity: f64,
}

/// The directed figures of a graph read with `--directed`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct DirectedStats {
    /// Distinct directed edges u → v (self-loops dropped, repeats merged).
    pub directed_edges: u64,
    /// Node pairs joined both ways.
    pub mutual_pairs: u64,
    /// Share of directed edges whose reverse is also present, 2 · mutual / directed edges
    /// (Newman, Forrest and Balthrop, "Email networks and the spread of computer viruses",
    /// Phys. Rev. E 66, 035101, 2002; the `overall_reciprocity` of general-purpose libraries).
    /// `None` without edges.
    pub reciprocity: Option<f64>,
    /// Out-degree statistics.
    pub out_degree: DirectedDegrees,
    /// In-degree statistics.
    pub in_degree: DirectedDegrees,
    /// Weakly connected components: the components of the symmetrised graph.
    pub weak_components: u64,
    /// Nodes in the largest weakly connected component.
    pub largest_weak: u64,
    /// Strongly connected components (Tarjan, "Depth-first search and linear graph
    /// algorithms", SIAM J. Comput. 1, 1972; isolated nodes count).
    pub strong_components: u64,
    /// Nodes in the largest strongly connected component.
    pub largest_strong: u64,
    /// Share of nodes in the largest strongly connected component.
    pub largest_strong_fraction: f64,
    /// Strongly connected components of a single node.
    pub strong_singletons: u64,
    /// Fagiolo's directed clustering, when clustering was computed exactly (`None` otherwise).
    pub clustering: Option<DirectedClustering>,
}

fn side_stats(deg: &[u32]) -> DirectedDegrees {
    let n = deg.len();
    let max = deg.par_iter().copied().max().unwrap_or(0);
    let min = deg.par_iter().copied().min().unwrap_or(0);
    let (sum, sq) = deg
        .par_iter()
        .map(|&d| (d as u64, d as u128 * d as u128))
        .reduce(|| (0, 0), |a, b| (a.0 + b.0, a.1 + b.1));
    let mut histogram = vec![0u64; max as usize + 1];
    for &d in deg {
        histogram[d as usize] += 1;
    }
    DirectedDegrees {
        min,
        max,
        mean: if n == 0 { 0.0 } else { sum as f64 / n as f64 },
        second_moment: if n == 0 { 0.0 } else { sq as f64 / n as f64 },
        zero: histogram.first().copied().unwrap_or(0),
        histogram,
    }
}

/// Out- and in-degree of every node, from the direction flags.
pub fn degrees(g: &Csr, dir: &[u8]) -> (Vec<u32>, Vec<u32>) {
    let off = g.offsets();
    (0..g.node_count())
        .into_par_iter()
        .map(|u| {
            let f = &dir[off[u] as usize..off[u + 1] as usize];
            let out = f.iter().filter(|&&x| x & OUT != 0).count() as u32;
            let inn = f.iter().filter(|&&x| x & IN != 0).count() as u32;
            (out, inn)
        })
        .unzip()
}

/// Strongly connected components, iterative Tarjan: the component index of every node, and
/// how many there are. Recursion-free, so any depth of path is fine.
pub fn strong_components(g: &Csr, dir: &[u8]) -> (Vec<u32>, u32) {
    const NONE: u32 = u32::MAX;
    let n = g.node_count();
    let off = g.offsets();
    let targets = g.targets();
    let mut index = vec![NONE; n];
    let mut low = vec![0u32; n];
    let mut on_stack = vec![false; n];
    let mut comp = vec![NONE; n];
    let mut stack: Vec<u32> = Vec::new();
    // The DFS path: (node, next entry of its list to look at).
    let mut path: Vec<(u32, u64)> = Vec::new();
    let mut next_index = 0u32;
    let mut count = 0u32;
    for root in 0..n as u32 {
        if index[root as usize] != NONE {
            continue;
        }
        // `enter` is the node the search steps into next: the root, then each new successor.
        let mut enter = Some(root);
        loop {
            if let Some(v) = enter.take() {
                index[v as usize] = next_index;
                low[v as usize] = next_index;
                next_index += 1;
                stack.push(v);
                on_stack[v as usize] = true;
                path.push((v, off[v as usize]));
            }
            let Some(&mut (u, ref mut at)) = path.last_mut() else {
                break;
            };
            let end = off[u as usize + 1];
            while *at < end {
                let e = *at as usize;
                *at += 1;
                if dir[e] & OUT == 0 {
                    continue;
                }
                let v = targets[e];
                if index[v as usize] == NONE {
                    enter = Some(v);
                    break;
                } else if on_stack[v as usize] {
                    low[u as usize] = low[u as usize].min(index[v as usize]);
                }
            }
            if enter.is_some() {
                continue;
            }
            path.pop();
            if let Some(&(parent, _)) = path.last() {
                low[parent as usize] = low[parent as usize].min(low[u as usize]);
            }
            if low[u as usize] == index[u as usize] {
                while let Some(w) = stack.pop() {
                    on_stack[w as usize] = false;
                    comp[w as usize] = count;
                    if w == u {
                        break;
                    }
                }
                count += 1;
            }
        }
    }
    (comp, count)
}

/// Fagiolo's directed triangles t_i at every node: over the undirected triangles {i, j, k}
/// through i, the product of the three edges' multiplicities (1 one way, 2 both ways), which is
/// (A + Aᵀ)³_ii / 2. Each triangle is found once, from its lowest-ranked corner by (degree,
/// index), on the same oriented lists and stamps as forward triangle listing (Schank and Wagner
/// 2005), with each oriented entry's multiplicity beside it.
pub fn directed_triangles(g: &Csr, dir: &[u8]) -> Vec<u64> {
    use crate::exact::triangles::{oriented, over_stamped_with};
    let n = g.node_count();
    let dag = oriented(g);
    // Each oriented entry's multiplicity, in the dag's order (the orientation keeps the order
    // of g's lists, so one filtered walk beside it lines them up).
    let off = g.offsets();
    let mut weight = vec![0u8; dag.targets().len()];
    {
        // Blocks of nodes, each filling its own span of `weight`, in parallel.
        const NODES: usize = 4096;
        let dag_off = dag.offsets();
        let mut rest: &mut [u8] = &mut weight;
        let mut blocks = Vec::with_capacity(n.div_ceil(NODES));
        for a in (0..n).step_by(NODES) {
            let b = (a + NODES).min(n);
            let (part, tail) =
                std::mem::take(&mut rest).split_at_mut((dag_off[b] - dag_off[a]) as usize);
            blocks.push((a, b, part));
            rest = tail;
        }
        blocks.into_par_iter().for_each(|(a, b, part)| {
            let mut slots = part.iter_mut();
            for u in a..b {
                let du = g.degree(u as u32);
                let (lo, hi) = (off[u] as usize, off[u + 1] as usize);
                let kept = g.targets()[lo..hi]
                    .iter()
                    .zip(&dir[lo..hi])
                    .filter(|&(&v, _)| (du, u as u32) < (g.degree(v), v));
                for ((_, &f), slot) in kept.zip(&mut slots) {
                    *slot = multiplicity(f);
                }
            }
        });
    }
    let dag_off = dag.offsets();
    let t: Vec<AtomicU64> = (0..n).map(|_| AtomicU64::new(0)).collect();
    over_stamped_with(
        &dag,
        || vec![0u8; n],
        |stamp, w_of, u| {
            let (lo, hi) = (
                dag_off[u as usize] as usize,
                dag_off[u as usize + 1] as usize,
            );
            let out_u = &dag.targets()[lo..hi];
            // The multiplicity of (u, x) for every x in N+(u), read when x closes a triangle.
            for (&x, &w) in out_u.iter().zip(&weight[lo..hi]) {
                w_of[x as usize] = w;
            }
            let mut at_u = 0u64;
            for (&v, &w_uv) in out_u.iter().zip(&weight[lo..hi]) {
                let (vlo, vhi) = (
                    dag_off[v as usize] as usize,
                    dag_off[v as usize + 1] as usize,
                );
                let mut at_v = 0u64;
                for (&w, &w_vw) in dag.targets()[vlo..vhi].iter().zip(&weight[vlo..vhi]) {
                    if stamp[w as usize] == u {
                        let p = w_uv as u64 * w_vw as u64 * w_of[w as usize] as u64;
                        t[w as usize].fetch_add(p, Relaxed);
                        at_v += p;
                    }
                }
                if at_v > 0 {
                    t[v as usize].fetch_add(at_v, Relaxed);
                    at_u += at_v;
                }
            }
            if at_u > 0 {
                t[u as usize].fetch_add(at_u, Relaxed);
            }
            0
        },
    );
    t.into_iter().map(AtomicU64::into_inner).collect()
}

/// 1 for an edge one way, 2 for both ways.
fn multiplicity(f: u8) -> u8 {
    (f & OUT != 0) as u8 + (f & IN != 0) as u8
}

/// Fagiolo's total directed clustering from the directed triangles `t` (see
/// [`directed_triangles`]), averaged over all nodes and in ratio form.
pub fn directed_clustering(g: &Csr, dir: &[u8], t: &[u64]) -> DirectedClustering {
    let off = g.offsets();
    let n = g.node_count();
    // d(d − 1) − 2 d↔ at node u: its directed triples (d total degree, d↔ mutual neighbours).
    let triples = |u: usize| {
        let f = &dir[off[u] as usize..off[u + 1] as usize];
        let total: u64 = f.iter().map(|&x| multiplicity(x) as u64).sum();
        let both = f.iter().filter(|&&x| x == OUT | IN).count() as u64;
        (total * total.saturating_sub(1)).saturating_sub(2 * both)
    };
    let den: u64 = (0..n).into_par_iter().map(triples).sum();
    let num: u64 = t.par_iter().sum();
    let average = if n == 0 {
        0.0
    } else {
        crate::numeric::det_sum(n, |u| match triples(u) {
            0 => 0.0,
            d => t[u] as f64 / d as f64,
        }) / n as f64
    };
    DirectedClustering {
        directed_triangles: num / 3,
        average,
        transitivity: if den == 0 {
            0.0
        } else {
            num as f64 / den as f64
        },
    }
}

/// Every directed figure. `weak` are the symmetrised graph's components (the weak ones);
/// `clustering` says whether to count directed triangles (as costly as triangle listing).
pub fn directed_stats(
    g: &Csr,
    dir: &[u8],
    weak: &ComponentStats,
    clustering: bool,
) -> DirectedStats {
    let n = g.node_count();
    let directed_edges: u64 = dir.par_iter().filter(|&&x| x & OUT != 0).count() as u64;
    let mutual_pairs = dir.par_iter().filter(|&&x| x == OUT | IN).count() as u64 / 2;
    let (out, inn) = degrees(g, dir);
    let (comp, count) = strong_components(g, dir);
    let mut sizes = vec![0u64; count as usize];
    for &c in &comp {
        sizes[c as usize] += 1;
    }
    let largest_strong = sizes.iter().copied().max().unwrap_or(0);
    DirectedStats {
        directed_edges,
        mutual_pairs,
        reciprocity: (directed_edges > 0)
            .then(|| 2.0 * mutual_pairs as f64 / directed_edges as f64),
        out_degree: side_stats(&out),
        in_degree: side_stats(&inn),
        weak_components: weak.count,
        largest_weak: weak.giant_nodes,
        strong_components: count as u64,
        largest_strong,
        largest_strong_fraction: if n == 0 {
            0.0
        } else {
            largest_strong as f64 / n as f64
        },
        strong_singletons: sizes.iter().filter(|&&s| s == 1).count() as u64,
        clustering: clustering.then(|| {
            let t = directed_triangles(g, dir);
            directed_clustering(g, dir, &t)
        }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::fill::csr_from_directed;

    /// Naive twin: (A + Aᵀ)³ diagonal from a dense matrix, halved.
    fn naive_triangles(n: usize, edges: &[(u32, u32)]) -> Vec<u64> {
        let mut s = vec![vec![0u64; n]; n];
        for &(u, v) in edges {
            if u != v {
                s[u as usize][v as usize] = 1;
            }
        }
        let sym: Vec<Vec<u64>> = (0..n)
            .map(|i| (0..n).map(|j| s[i][j] + s[j][i]).collect())
            .collect();
        (0..n)
            .map(|i| {
                let mut acc = 0;
                for j in 0..n {
                    for k in 0..n {
                        acc += sym[i][j] * sym[j][k] * sym[k][i];
                    }
                }
                acc / 2
            })
            .collect()
    }

    /// Naive twin: u and v share a strong component when each reaches the other.
    fn naive_strong_count(n: usize, edges: &[(u32, u32)]) -> u32 {
        let mut reach = vec![vec![false; n]; n];
        for (i, row) in reach.iter_mut().enumerate() {
            row[i] = true;
        }
        for &(u, v) in edges {
            reach[u as usize][v as usize] = true;
        }
        for k in 0..n {
            for i in 0..n {
                for j in 0..n {
                    if reach[i][k] && reach[k][j] {
                        reach[i][j] = true;
                    }
                }
            }
        }
        let mut seen = vec![false; n];
        let mut count = 0;
        for i in 0..n {
            if seen[i] {
                continue;
            }
            count += 1;
            for j in 0..n {
                if reach[i][j] && reach[j][i] {
                    seen[j] = true;
                }
            }
        }
        count
    }

    #[test]
    fn hand_worked_example() {
        // 0 ⇄ 1, 1 → 2, 2 → 0, 2 → 3, 3 → 4, 4 → 3 (and 3 ⇄ 4 mutual), 5 isolated.
        // Worked by hand:
        // - directed edges 7, mutual pairs 2 ({0,1}, {3,4}), reciprocity 4/7;
        // - weak components {0..4}, {5}; strong {0,1,2}, {3,4}, {5}: three, the largest of 3;
        // - the one triangle {0,1,2} has multiplicities 2 (0-1), 1 (1-2), 1 (2-0): t = 2 at
        //   each corner, 2 directed triangles in all (6 / 3);
        // - denominators d(d − 1) − 2 d↔: node 0 total degree 3 (out 1, in 2) with one
        //   reciprocated neighbour, 3·2 − 2 = 4; node 1 likewise 4; node 2 total 3 (in from 1,
        //   out to 0 and 3), none reciprocated, 6; node 3 total 3 (in from 2, both with 4), 4;
        //   node 4 total 2, one reciprocated, 0; node 5: 0;
        // - C = 1/2, 1/2, 1/3, 0, 0, 0: average (4/3)/6 = 2/9; ratio 6/18 = 1/3;
        // - out-degrees 1, 2, 2, 1, 1, 0 and in-degrees 2, 1, 1, 2, 1, 0.
        let edges = [(0, 1), (1, 0), (1, 2), (2, 0), (2, 3), (3, 4), (4, 3)];
        let (g, dir) = csr_from_directed(6, &edges);
        let weak = crate::exact::components::components(&g).stats(&g);
        let s = directed_stats(&g, &dir, &weak, true);
        assert_eq!((s.directed_edges, s.mutual_pairs), (7, 2));
        assert!((s.reciprocity.unwrap() - 4.0 / 7.0).abs() < 1e-15);
        assert_eq!(
            (s.strong_components, s.largest_strong, s.strong_singletons),
            (3, 3, 1)
        );
        assert_eq!((s.weak_components, s.largest_weak), (2, 5));
        let c = s.clustering.unwrap();
        assert!((c.average - 2.0 / 9.0).abs() < 1e-15);
        assert!((c.transitivity - 1.0 / 3.0).abs() < 1e-15);
        assert_eq!(c.directed_triangles, 2);
        assert_eq!(s.out_degree.histogram, vec![1, 3, 2]);
        assert_eq!(s.in_degree.histogram, vec![1, 3, 2]);
        assert_eq!(
            (s.out_degree.zero, s.in_degree.max, s.out_degree.mean),
            (1, 2, 7.0 / 6.0)
        );
    }

    #[test]
    fn fast_figures_equal_their_naive_twins() {
        use rand::{RngExt, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
        for round in 0..40 {
            let n = 2 + round % 17;
            let m = rng.random_range(0..n * 3);
            let edges: Vec<(u32, u32)> = (0..m)
                .map(|_| (rng.random_range(0..n as u32), rng.random_range(0..n as u32)))
                .collect();
            let (g, dir) = csr_from_directed(n, &edges);
            assert_eq!(
                directed_triangles(&g, &dir),
                naive_triangles(n, &edges),
                "{edges:?}"
            );
            assert_eq!(
                strong_components(&g, &dir).1,
                naive_strong_count(n, &edges),
                "{edges:?}"
            );
        }
    }
}

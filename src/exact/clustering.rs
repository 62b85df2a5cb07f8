//! Clustering from exact triangle counts: global transitivity 3T/W (W = sum of C(d,2) wedges),
//! local clustering c_v = 2 t_v / (d_v (d_v - 1)) (Watts & Strogatz, "Collective dynamics of
//! 'small-world' networks", Nature 393, 1998), its average in both conventions in use, and
//! clustering as a function of degree, C(k), in logarithmic bins.

use serde::{Deserialize, Serialize};

use crate::exact::triangles::Triangles;
use crate::figure::Figure;
use crate::store::csr::Csr;

/// Mean local clustering of the nodes whose degree falls in `[low, high]`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct DegreeClustering {
    /// Smallest degree in the bin.
    pub low: u32,
    /// Largest degree in the bin.
    pub high: u32,
    /// Nodes in the bin.
    pub nodes: u64,
    /// Mean local clustering of the bin's nodes.
    pub mean: Figure,
}

/// Triangles, transitivity and local clustering of a graph (Watts & Strogatz, Nature 393, 1998;
/// Newman, SIAM Review 45, 2003).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct ClusteringStats {
    /// Triangles, 1/3 of the closed wedges.
    pub triangles: Figure,
    /// Sum over nodes of C(d, 2), the connected triples centred at each node.
    pub wedges: u128,
    /// Transitivity, 3 triangles / wedges.
    pub transitivity: Figure,
    /// Average local clustering with nodes of degree < 2 counted as 0.
    pub average_zeros: Figure,
    /// Average local clustering over nodes of degree >= 2 only.
    pub average_deg2: Figure,
    /// C(k) in bins `[2,3]`, `[4,7]`, `[8,15]`, … (degree < 2 has no clustering).
    pub by_degree: Vec<DegreeClustering>,
}

/// Wedges (connected triples) centred at a node of degree `d`: C(d, 2).
#[inline]
pub fn wedges_at(d: u32) -> u128 {
    let d = d as u128;
    d * d.saturating_sub(1) / 2
}

/// Total wedges W = sum over nodes of C(d, 2), exact.
pub fn wedge_total(g: &Csr) -> u128 {
    (0..g.node_count() as u32)
        .map(|v| wedges_at(g.degree(v)))
        .sum()
}

/// c_v for every node (0 where the degree is below 2).
pub fn local(g: &Csr, t: &Triangles) -> Vec<f64> {
    local_from(g, &t.per_node)
}

/// c_v = 2 t_v / (d_v (d_v - 1)) for every node from its triangle count `per_node[v]` (0 where
/// the degree is below 2), Watts and Strogatz (1998).
pub fn local_from(g: &Csr, per_node: &[u64]) -> Vec<f64> {
    (0..g.node_count() as u32)
        .map(|v| {
            let d = g.degree(v) as f64;
            if d < 2.0 {
                0.0
            } else {
                2.0 * per_node[v as usize] as f64 / (d * (d - 1.0))
            }
        })
        .collect()
}

/// Summary figures from triangle counts and the local clustering `c` (from [`local`]).
pub fn stats(g: &Csr, t: &Triangles, c: &[f64]) -> ClusteringStats {
    use rayon::prelude::*;
    // Per-task sums merge exactly, so the split does not show in the figures.
    let parts = (0..g.node_count())
        .into_par_iter()
        .with_min_len(1 << 14)
        .fold(ClusteringParts::default, |mut p, v| {
            p.add(g.degree(v as u32), c[v]);
            p
        })
        .reduce(ClusteringParts::default, |mut a, b| {
            a.merge(&b);
            a
        });
    parts.finish(t.total)
}

/// The mergeable sums behind [`ClusteringStats`]: wedges, nodes of degree 2 and up, and exact
/// sums of local clustering overall and per C(k) bin. Partial sums over any split of the nodes
/// merge to the same figures, to the last digit (the float sums are exact until read).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub(crate) struct ClusteringParts {
    nodes: u64,
    wedges: u128,
    deg2: u64,
    max_degree: u32,
    sum: crate::numeric::ExactSum,
    /// Bin k holds degrees [2^k, 2^(k+1) - 1], from k = 1.
    bins: Vec<(u64, crate::numeric::ExactSum)>,
}

impl ClusteringParts {
    /// Count a node of degree `d` and local clustering `c`.
    pub(crate) fn add(&mut self, d: u32, c: f64) {
        self.nodes += 1;
        self.wedges += wedges_at(d);
        self.max_degree = self.max_degree.max(d);
        self.sum.add(c);
        if d >= 2 {
            self.deg2 += 1;
            let k = (31 - d.leading_zeros()) as usize;
            if self.bins.len() <= k {
                self.bins.resize(k + 1, Default::default());
            }
            self.bins[k].0 += 1;
            self.bins[k].1.add(c);
        }
    }

    pub(crate) fn merge(&mut self, o: &ClusteringParts) {
        self.nodes += o.nodes;
        self.wedges += o.wedges;
        self.deg2 += o.deg2;
        self.max_degree = self.max_degree.max(o.max_degree);
        self.sum.merge(&o.sum);
        if self.bins.len() < o.bins.len() {
            self.bins.resize(o.bins.len(), Default::default());
        }
        for (a, b) in self.bins.iter_mut().zip(&o.bins) {
            a.0 += b.0;
            a.1.merge(&b.1);
        }
    }

    /// Transitivity and average local clustering (degree < 2 counted as 0) of the nodes added,
    /// `closed` their summed triangle corners: the giant component's, for the small-world
    /// comparison (a component's triangles never leave it).
    pub(crate) fn giant_figures(&self, closed: u64) -> (Figure, Figure) {
        const ALG: &str = "forward triangle listing, on the giant component";
        let tr = if self.wedges == 0 {
            0.0
        } else {
            closed as f64 / self.wedges as f64
        };
        let avg = if self.nodes == 0 {
            0.0
        } else {
            self.sum.value() / self.nodes as f64
        };
        (
            Figure::exact(tr, ALG),
            Figure::exact_over(avg, ALG, self.nodes),
        )
    }

    /// The figures, with `triangles` the graph's triangle count.
    pub(crate) fn finish(&self, triangles: u64) -> ClusteringStats {
        const ALG: &str = "forward triangle listing (Schank & Wagner 2005)";
        let (n, wedges, deg2) = (self.nodes, self.wedges, self.deg2);
        let sum_c = self.sum.value();
        let transitivity = if wedges == 0 {
            0.0
        } else {
            3.0 * triangles as f64 / wedges as f64
        };
        let by_degree = self
            .bins
            .iter()
            .enumerate()
            .filter(|(_, b)| b.0 > 0)
            .map(|(k, (nodes, sum))| {
                let low = 1u32 << k;
                DegreeClustering {
                    low,
                    high: (low.saturating_mul(2) - 1).min(self.max_degree),
                    nodes: *nodes,
                    mean: Figure::exact_over(sum.value() / *nodes as f64, ALG, *nodes),
                }
            })
            .collect();
        ClusteringStats {
            triangles: Figure::exact(triangles as f64, ALG),
            wedges,
            transitivity: Figure::exact(transitivity, ALG),
            average_zeros: Figure::exact_over(if n == 0 { 0.0 } else { sum_c / n as f64 }, ALG, n),
            average_deg2: Figure::exact_over(
                if deg2 == 0 { 0.0 } else { sum_c / deg2 as f64 },
                ALG,
                deg2,
            ),
            by_degree,
        }
    }
}

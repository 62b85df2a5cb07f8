//! Clustering from exact triangle counts: global transitivity 3T/W (W = sum of C(d,2) wedges),
//! local clustering c_v = 2 t_v / (d_v (d_v - 1)) (Watts & Strogatz, "Collective dynamics of
//! 'small-world' networks", Nature 393, 1998), its average in both conventions in use, and
//! clustering as a function of degree, C(k), in logarithmic bins.

use serde::{Deserialize, Serialize};

use crate::exact::triangles::Triangles;
use crate::figure::Figure;
use crate::numeric::det_sum;
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
    let n = g.node_count();
    let wedges = wedge_total(g);
    let deg2 = (0..n as u32).filter(|&v| g.degree(v) >= 2).count() as u64;
    let sum_c = det_sum(n, |v| c[v]);
    const ALG: &str = "forward triangle listing (Schank & Wagner 2005)";
    let transitivity = if wedges == 0 {
        0.0
    } else {
        3.0 * t.total as f64 / wedges as f64
    };
    let mut by_degree = Vec::new();
    let max = (0..n as u32).map(|v| g.degree(v)).max().unwrap_or(0);
    let mut low = 2u32;
    while low <= max {
        let high = (low.saturating_mul(2) - 1).min(max);
        let members: Vec<usize> = (0..n)
            .filter(|&v| (low..=high).contains(&g.degree(v as u32)))
            .collect();
        if !members.is_empty() {
            let s = det_sum(members.len(), |i| c[members[i]]);
            by_degree.push(DegreeClustering {
                low,
                high,
                nodes: members.len() as u64,
                mean: Figure::exact_over(s / members.len() as f64, ALG, members.len() as u64),
            });
        }
        low = low.saturating_mul(2);
    }
    ClusteringStats {
        triangles: Figure::exact(t.total as f64, ALG),
        wedges,
        transitivity: Figure::exact(transitivity, ALG),
        average_zeros: Figure::exact_over(
            if n == 0 { 0.0 } else { sum_c / n as f64 },
            ALG,
            n as u64,
        ),
        average_deg2: Figure::exact_over(
            if deg2 == 0 { 0.0 } else { sum_c / deg2 as f64 },
            ALG,
            deg2,
        ),
        by_degree,
    }
}

//! What the exact and sketch methods cost: each method's work counted in its own units from the
//! graph's size and degree moments, and turned into seconds with per-thread rates measured by
//! `cargo bench --bench estimate` on the reference machine (README). Predictions for sizing, good
//! to a small factor, not promises.

use crate::store::csr::Csr;

/// Work per second of one thread, per method, on the reference machine.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rates {
    /// Triangle listing: units of [`triangle_work`].
    pub triangle: f64,
    /// Bit-parallel BFS: 64-bit words visited (units of [`all_pairs_work`]).
    pub bfs_words: f64,
    /// HyperBall: register bytes merged (units of [`ball_work`]).
    pub ball_bytes: f64,
    /// Wedge samples drawn and tested.
    pub wedges: f64,
    /// Forward triangle listing: seconds per step of [`triangle_steps`] while the oriented
    /// graph fits in cache.
    pub triangle_step_seconds: f64,
    /// Further seconds per step when it does not (scaled by the share that misses).
    pub triangle_miss_seconds: f64,
    /// The cache the interpolation assumes, in bytes.
    pub cache_bytes: f64,
}

/// Measured with `cargo bench --bench estimate` on the reference machine (2-core virtual Xeon).
pub const REFERENCE_RATES: Rates = Rates {
    triangle: 4.0e8,
    bfs_words: 2.2e8,
    ball_bytes: 1.3e9,
    wedges: 2.0e6,
    // Fitted to forward listing on Watts–Strogatz, G(n,m) and attachment graphs of 5M and 50M
    // edges (`cargo bench --bench planner`): about 10 ns a step at 5M edges, 22 ns at 50M.
    triangle_step_seconds: 3.4e-9,
    triangle_miss_seconds: 2.0e-8,
    cache_bytes: 16.0 * 1024.0 * 1024.0,
};

/// Predicted seconds of forward triangle listing on `g`: its exact steps ([`triangle_steps`])
/// at a per-step cost that grows with the share of the oriented graph and the per-thread marks
/// (4 bytes per entry and per node) that cannot stay in cache.
pub fn triangle_seconds(g: &Csr, rates: &Rates, threads: usize) -> f64 {
    let working_set = 4.0 * (g.edge_count() as f64 + g.node_count() as f64);
    let missing = (1.0 - rates.cache_bytes / working_set.max(1.0)).max(0.0);
    let per_step = rates.triangle_step_seconds + missing * rates.triangle_miss_seconds;
    triangle_steps(g) * per_step / threads.max(1) as f64
}

/// Work of forward triangle listing: each node's list is merged against neighbours whose
/// oriented lists hold at most sqrt(2m) entries, so sum_v d_v min(d_v, sqrt(2m)) bounds it
/// (Chiba & Nishizeki, "Arboricity and subgraph listing algorithms", SIAM J. Comput. 14, 1985).
pub fn triangle_work(g: &Csr) -> f64 {
    let cap = (2.0 * g.edge_count() as f64).sqrt();
    (0..g.node_count() as u32)
        .map(|v| {
            let d = g.degree(v) as f64;
            d * d.min(cap)
        })
        .sum()
}

/// The steps forward triangle listing will actually take on `g`: orienting every edge from lower
/// to higher (degree, index) rank, each oriented edge u→v scans N⁺(v), so the listing costs
/// Σ_v d⁻(v)·d⁺(v) probes plus one pass to orient (Schank & Wagner, WEA 2005; Latapy, Theor.
/// Comput. Sci. 407, 2008). Unlike [`triangle_work`], a bound that overstates heavy-tailed
/// graphs several times, this is exact, at the price of one pass over the adjacency.
pub fn triangle_steps(g: &Csr) -> f64 {
    use rayon::prelude::*;
    let steps: u64 = (0..g.node_count() as u32)
        .into_par_iter()
        .map(|v| {
            let dv = g.degree(v);
            let plus = g
                .neighbors(v)
                .iter()
                .filter(|&&w| (g.degree(w), w) > (dv, v))
                .count() as u64;
            plus * (dv as u64 - plus) + dv as u64
        })
        .sum();
    steps as f64
}

/// Words visited by bit-parallel BFS from `sources` sources over `levels` levels of a connected
/// graph with `n` nodes and `m` edges: one pass over nodes and adjacency per level per 64.
pub fn bfs_work(sources: u64, n: u64, m: u64, levels: u64) -> f64 {
    sources.div_ceil(64) as f64 * (levels + 1) as f64 * (n + 2 * m) as f64
}

/// Work of exact all-pairs distances ([`bfs_work`] from every node).
pub fn all_pairs_work(n: u64, m: u64, levels: u64) -> f64 {
    bfs_work(n, n, m, levels)
}

/// Register bytes HyperBall merges: every arc's counter once per round, per repetition.
pub fn ball_work(n: u64, m: u64, registers: u64, rounds: u64, repeats: u64) -> f64 {
    repeats as f64 * rounds as f64 * (n + 2 * m) as f64 * registers as f64
}

/// Seconds for `work` units at `rate` per thread on `threads` threads.
pub fn seconds(work: f64, rate: f64, threads: usize) -> f64 {
    work / (rate * threads.max(1) as f64)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn costs_grow_as_the_methods_do() {
        // A star: the hub's list is capped at sqrt(2m), the leaves contribute 1 each.
        let star: Vec<(u32, u32)> = (1..=100).map(|i| (0, i)).collect();
        let g = Csr::from_edges(101, &star);
        let cap = 200f64.sqrt();
        assert!((triangle_work(&g) - (100.0 * cap + 100.0)).abs() < 1e-9);
        assert_eq!(all_pairs_work(128, 10, 2), 2.0 * 3.0 * 148.0);
        assert_eq!(bfs_work(65, 128, 10, 2), all_pairs_work(128, 10, 2));
        assert_eq!(ball_work(10, 5, 64, 3, 2), 2.0 * 3.0 * 20.0 * 64.0);
        assert_eq!(seconds(8.0, 2.0, 2), 2.0);
    }
}

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
    /// Forward triangle listing: seconds per step of [`triangle_steps`], as a multiple of the
    /// graph's measured [`listing_probe_seconds`].
    pub triangle_step_per_probe: f64,
}

/// Measured with `cargo bench --bench estimate` on the reference machine (2-core virtual Xeon).
pub const REFERENCE_RATES: Rates = Rates {
    triangle: 4.0e8,
    bfs_words: 2.2e8,
    ball_bytes: 1.3e9,
    wedges: 2.0e6,
    // Measured seconds per listing step over the probe on G(n,m) and attachment graphs of 5M
    // and 50M edges (`cargo bench --bench planner`): 0.61–1.05, so 0.65.
    triangle_step_per_probe: 0.65,
};

/// Predicted seconds of forward triangle listing on `g`: its exact steps ([`triangle_steps`])
/// at the cost per step that `probe` ([`listing_probe_seconds`] on `g`) measured on this machine.
pub fn triangle_seconds(g: &Csr, rates: &Rates, threads: usize, probe: f64) -> f64 {
    triangle_steps(g) * probe * rates.triangle_step_per_probe / threads.max(1) as f64
}

/// Predicted seconds of `draws` wedge or node draws on `g`: the measured rate, whatever the
/// store's size, plus the sampler's passes over the nodes (cumulative wedge counts, degree bins:
/// 50 ns a node, fitted to the Watts–Strogatz 200M stage, where draws are few). Drawn one at a
/// time, the 50M rate fell 2.5–5.6x short at 200M edges, and the prediction slowed in proportion
/// to the store (up to 5x, then 2x). Drawn sixteen at a time, their misses overlap and that
/// slowdown is gone: with the 2x it over-predicted the sampled clustering 2.63x on the 200M
/// attachment graph (34.7 s against 13.2 s), 1.83x and 1.53x on the other two models, and 1.95x
/// on the 1e9 store (38.7 s against 19.8 s). Fitted with `cargo bench --bench planner` and the
/// 1e9 store here; no source.
pub fn draw_seconds(g: &Csr, draws: f64, rates: &Rates, threads: usize) -> f64 {
    seconds(draws, rates.wedges, threads) + g.node_count() as f64 * 5.0e-8
}

/// Seconds one thread spends per step of forward triangle listing on `g`, sampled while
/// `threads` threads probe at once: from a random edge end v (so v is drawn as the listing reaches
/// it, by degree), walk v's list and, for each later-ranked neighbour w, read w's place in a
/// node-sized array, as the listing's mark test does. It measures this machine, this graph's size
/// (caches, TLB reach, pages mapped from disk) and its locality (a lattice's neighbours sit close,
/// a random graph's do not), which no fixed rate can know. The fastest of three rounds (timing
/// noise only adds); about a tenth of a second at 1e9 edges.
pub fn listing_probe_seconds(g: &Csr, threads: usize) -> f64 {
    (0..3)
        .map(|_| listing_probe_round(g, threads))
        .fold(f64::INFINITY, f64::min)
}

fn listing_probe_round(g: &Csr, threads: usize) -> f64 {
    use rayon::prelude::*;
    // Edge ends visited per thread, and the most of one list walked (hubs would dominate).
    const ENDS: usize = 1 << 14;
    const LIST_CAP: usize = 256;
    let t = g.targets();
    if t.is_empty() {
        return 0.0;
    }
    let len = t.len() as u128;
    let started = std::time::Instant::now();
    let (sum, steps) = (0..threads.max(1) as u64)
        .into_par_iter()
        .map(|i| {
            // xorshift64: a fixed, seeded sequence; which ends are drawn does not matter.
            let mut x = 0x9E37_79B9_7F4A_7C15u64 ^ (i + 1).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            let (mut s, mut steps) = (0u64, 0u64);
            for _ in 0..ENDS {
                x ^= x << 13;
                x ^= x >> 7;
                x ^= x << 17;
                let v = t[((x as u128 * len) >> 64) as usize];
                let dv = g.degree(v);
                let list = g.neighbors(v);
                for &w in list.iter().take(LIST_CAP) {
                    s = s.wrapping_add(((g.degree(w), w) > (dv, v)) as u64);
                }
                steps += list.len().min(LIST_CAP) as u64;
            }
            (s, steps)
        })
        .reduce(|| (0, 0), |a, b| (a.0.wrapping_add(b.0), a.1 + b.1));
    std::hint::black_box(sum);
    let per_thread = steps as f64 / threads.max(1) as f64;
    started.elapsed().as_secs_f64() / per_thread.max(1.0)
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

/// Fagiolo's directed triangles (`exact::directed::directed_triangles`) cost about this many
/// triangle listings of the same graph: measured 1.3x on 50M attachment edges (8.6 s against
/// 6.7 s) and 1.5x on 5M (0.36 s against 0.24 s), with `cargo bench --bench directed`; the
/// larger is kept so the budget errs towards sampling.
pub(crate) const DIRECTED_TRIANGLES_PER_LISTING: f64 = 1.5;

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

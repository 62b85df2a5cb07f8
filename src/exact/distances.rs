//! Exact distances between all pairs of a connected graph, by bit-parallel breadth-first search:
//! 64 sources advance together, one bit each per node, so a level costs one pass over the
//! adjacency for all 64 (multi-source BFS in the manner of Then et al., "The more the merrier:
//! efficient multi-source graph traversal", PVLDB 8(4), 2014). Batches run in parallel; the
//! pair counts are integers, so results do not depend on the thread count.

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::figure::Figure;
use crate::store::csr::Csr;

/// Ordered pairs at each distance and every node's eccentricity.
#[derive(Debug, Clone, PartialEq)]
pub struct AllPairs {
    /// `pairs[d]` = ordered pairs (u, v), u != v, at distance d (`pairs[0]` = 0).
    pub pairs: Vec<u64>,
    /// Eccentricity of every node.
    pub eccentricity: Vec<u32>,
}

/// Distances over all pairs of `g`, which must be connected (callers pass the giant component).
pub fn all_pairs(g: &Csr) -> AllPairs {
    all_pairs_sources(g, 0..g.node_count() as u32)
}

/// Distances from the sources in `sources` to every node (pairs counted from those sources only;
/// eccentricities of those sources only).
pub fn all_pairs_sources(g: &Csr, sources: std::ops::Range<u32>) -> AllPairs {
    let n = g.node_count();
    let (lo, hi) = (sources.start as usize, (sources.end as usize).min(n));
    let batches = hi.saturating_sub(lo).div_ceil(64);
    let results: Vec<(Vec<u64>, Vec<u32>)> = (0..batches)
        .into_par_iter()
        .map_init(
            || BatchBuffers::new(n),
            |bufs, b| {
                let a = lo + b * 64;
                let sources: Vec<u32> = (a as u32..(a + 64).min(hi) as u32).collect();
                sources_batch(g, &sources, bufs)
            },
        )
        .collect();
    let mut pairs = vec![0u64];
    let mut eccentricity = Vec::with_capacity(n);
    for (counts, ecc) in results {
        if counts.len() > pairs.len() {
            pairs.resize(counts.len(), 0);
        }
        for (d, c) in counts.into_iter().enumerate() {
            pairs[d] += c;
        }
        eccentricity.extend(ecc);
    }
    AllPairs {
        pairs,
        eccentricity,
    }
}

/// The three word arrays a bit-parallel batch works in (one word per node), reused across
/// batches by each worker.
pub struct BatchBuffers {
    seen: Vec<u64>,
    frontier: Vec<u64>,
    next: Vec<u64>,
}

impl BatchBuffers {
    /// Buffers for graphs of `n` nodes.
    pub fn new(n: usize) -> Self {
        BatchBuffers {
            seen: vec![0; n],
            frontier: vec![0; n],
            next: vec![0; n],
        }
    }
}

/// One batch of up to 64 sources (distinct): returns ordered-pair counts by distance from them
/// and their eccentricities.
pub fn sources_batch(g: &Csr, sources: &[u32], bufs: &mut BatchBuffers) -> (Vec<u64>, Vec<u32>) {
    batch::<false>(g, sources, bufs, &mut Vec::new())
}

/// As [`sources_batch`], and also `per_source[d - 1][i]` = nodes at distance d from
/// `sources[i]`, for the estimators that need each source's own distribution.
pub fn sources_batch_each(
    g: &Csr,
    sources: &[u32],
    bufs: &mut BatchBuffers,
    per_source: &mut Vec<[u64; 64]>,
) -> (Vec<u64>, Vec<u32>) {
    per_source.clear();
    batch::<true>(g, sources, bufs, per_source)
}

/// Push (top-down) a level instead of pulling when the frontier's edges times this are fewer than
/// the edges of nodes some source has not yet reached. A pushed edge costs two scattered accesses
/// (`seen`, `next`) where a pulled one costs one and may stop early, hence more than 1; 4 is our
/// choice, not fitted (Beamer, Asanović & Patterson, "Direction-optimizing breadth-first search",
/// SC 2012, switch on the same two edge counts with 14).
const PUSH_FACTOR: u64 = 4;

/// Frontier lists longer than `n / LIST_SHARE` (and 1024) are not kept: such a frontier is
/// pulled anyway.
const LIST_SHARE: usize = 16;

/// One batch, direction-optimizing: sparse levels (the first few, and the last) push from a list
/// of frontier nodes; dense ones pull over every node not yet reached from all sources, stopping
/// a node's scan once every missing source is found. Both give the same `next` words, so the
/// results equal the pull-only [`batch_pull`] (tested).
fn batch<const EACH: bool>(
    g: &Csr,
    sources: &[u32],
    bufs: &mut BatchBuffers,
    per_source: &mut Vec<[u64; 64]>,
) -> (Vec<u64>, Vec<u32>) {
    let BatchBuffers {
        seen,
        frontier,
        next,
    } = bufs;
    let n = seen.len();
    let k = sources.len();
    assert!(k <= 64, "a batch holds at most 64 sources");
    let full = if k == 64 { u64::MAX } else { (1u64 << k) - 1 };
    seen.fill(0);
    frontier.fill(0);
    next.fill(0);
    let o = g.offsets();
    let t = g.targets();
    let degree = |v: u32| o[v as usize + 1] - o[v as usize];
    // Nodes whose frontier word is nonzero, while few enough to keep.
    let mut list: Option<Vec<u32>> = Some(Vec::with_capacity(k));
    for (i, &s) in sources.iter().enumerate() {
        if seen[s as usize] == 0
            && let Some(l) = list.as_mut()
        {
            l.push(s);
        }
        seen[s as usize] |= 1 << i;
        frontier[s as usize] |= 1 << i;
    }
    // Edge entries of nodes not yet reached from every source (the pull's worst case).
    let mut open_edges = t.len() as u64
        - sources
            .iter()
            .filter(|&&s| seen[s as usize] == full)
            .map(|&s| degree(s))
            .sum::<u64>();
    // The nonzero words of `next` (`None`: unknown), cleared before a push writes into it.
    let mut next_list: Option<Vec<u32>> = Some(Vec::new());
    let mut counts = vec![0u64];
    let mut ecc = vec![0u32; k];
    let mut level = 0u32;
    loop {
        level += 1;
        let mut any = 0u64;
        let mut reached = 0u64;
        let mut each = [0u64; 64];
        let mut record = |new: u64, any: &mut u64, reached: &mut u64| {
            *reached += new.count_ones() as u64;
            *any |= new;
            if EACH {
                for_each_bit(new, |i| each[i] += 1);
            }
        };
        let push = list.as_ref().is_some_and(|l| {
            let frontier_edges: u64 = l.iter().map(|&u| degree(u)).sum();
            frontier_edges.saturating_mul(PUSH_FACTOR) < open_edges
        });
        let mut found: Option<Vec<u32>> = Some(Vec::new());
        if push {
            // `next` must start at zero: clear what the last level left in it.
            match next_list.take() {
                Some(l) => l.iter().for_each(|&w| next[w as usize] = 0),
                None => next.fill(0),
            }
            let found = found.as_mut().expect("a push keeps its list");
            for &u in list.as_deref().unwrap_or_default() {
                let bits = frontier[u as usize];
                for &w in &t[o[u as usize] as usize..o[u as usize + 1] as usize] {
                    let new = bits & !seen[w as usize];
                    if new != 0 {
                        if next[w as usize] == 0 {
                            found.push(w);
                        }
                        next[w as usize] |= new;
                    }
                }
            }
            for &w in found.iter() {
                let new = next[w as usize];
                seen[w as usize] |= new;
                if seen[w as usize] == full {
                    open_edges -= degree(w);
                }
                record(new, &mut any, &mut reached);
            }
        } else {
            for v in 0..n {
                let sv = seen[v];
                if sv == full {
                    next[v] = 0;
                    continue;
                }
                let mut acc = 0u64;
                for &w in &t[o[v] as usize..o[v + 1] as usize] {
                    acc |= frontier[w as usize];
                    if (acc | sv) == full {
                        break;
                    }
                }
                let new = acc & !sv;
                next[v] = new;
                if new != 0 {
                    seen[v] |= new;
                    if seen[v] == full {
                        open_edges -= degree(v as u32);
                    }
                    record(new, &mut any, &mut reached);
                    if let Some(l) = found.as_mut() {
                        if l.len() < (n / LIST_SHARE).max(1024) {
                            l.push(v as u32);
                        } else {
                            found = None;
                        }
                    }
                }
            }
        }
        if any == 0 {
            break;
        }
        counts.push(reached);
        if EACH {
            per_source.push(each);
        }
        for_each_bit(any, |i| ecc[i] = level);
        std::mem::swap(frontier, next);
        // `next` now holds the old frontier, whose nonzero words `list` names.
        next_list = list;
        list = found;
    }
    (counts, ecc)
}

/// Call `f` with the index of every set bit of `bits`, lowest first.
#[inline]
fn for_each_bit(mut bits: u64, mut f: impl FnMut(usize)) {
    while bits != 0 {
        f(bits.trailing_zeros() as usize);
        bits &= bits - 1;
    }
}

/// The pull-only batch: every level scans every node not yet reached from all sources. The
/// simple twin the direction-optimizing [`batch`] is tested against.
#[cfg(test)]
fn batch_pull<const EACH: bool>(
    g: &Csr,
    sources: &[u32],
    bufs: &mut BatchBuffers,
    per_source: &mut Vec<[u64; 64]>,
) -> (Vec<u64>, Vec<u32>) {
    let BatchBuffers {
        seen,
        frontier,
        next,
    } = bufs;
    let k = sources.len();
    let full = if k == 64 { u64::MAX } else { (1u64 << k) - 1 };
    seen.fill(0);
    frontier.fill(0);
    for (i, &s) in sources.iter().enumerate() {
        seen[s as usize] |= 1 << i;
        frontier[s as usize] |= 1 << i;
    }
    let o = g.offsets();
    let t = g.targets();
    let mut counts = vec![0u64];
    let mut ecc = vec![0u32; k];
    let mut level = 0u32;
    loop {
        level += 1;
        let mut any = 0u64;
        let mut reached = 0u64;
        let mut each = [0u64; 64];
        for v in 0..seen.len() {
            if seen[v] == full {
                next[v] = 0;
                continue;
            }
            let mut acc = 0u64;
            for &w in &t[o[v] as usize..o[v + 1] as usize] {
                acc |= frontier[w as usize];
            }
            let new = acc & !seen[v];
            next[v] = new;
            if new != 0 {
                seen[v] |= new;
                reached += new.count_ones() as u64;
                any |= new;
                if EACH {
                    for_each_bit(new, |i| each[i] += 1);
                }
            }
        }
        if any == 0 {
            break;
        }
        counts.push(reached);
        if EACH {
            per_source.push(each);
        }
        for_each_bit(any, |i| ecc[i] = level);
        std::mem::swap(frontier, next);
    }
    (counts, ecc)
}

/// Distance figures of a connected node set, with the convention for pairs stated.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct DistanceStats {
    /// Which nodes the figures cover, e.g. "giant component".
    pub node_set: String,
    /// Nodes of the set measured.
    pub nodes: u64,
    /// Ordered pairs of distinct nodes within the set (all reachable).
    pub pairs: u64,
    /// Ordered pairs of distinct nodes of the whole graph that cannot reach each other.
    pub unreachable_pairs_in_graph: u64,
    /// Mean distance over reachable ordered pairs.
    pub mean: Figure,
    /// `distribution[d]` = ordered pairs at distance d (index 0 unused, 0).
    pub distribution: Vec<u64>,
    /// Diameter, the largest eccentricity.
    pub diameter: Figure,
    /// Radius, the smallest eccentricity (absent when not computed).
    pub radius: Option<Figure>,
    /// 90th-percentile distance, linearly interpolated, self pairs excluded.
    pub effective_diameter: Figure,
    /// The same with the n self pairs at distance 0 counted.
    pub effective_diameter_with_self: f64,
}

/// The smallest interpolated distance within which `alpha` of all pairs lie. `cumulative[t]` is
/// the number of pairs within distance t, non-decreasing; `cumulative[0]` is 0 when self pairs
/// are excluded and n when they are included.
pub fn effective_diameter(cumulative: &[f64], alpha: f64) -> f64 {
    let Some(&total) = cumulative.last() else {
        return 0.0;
    };
    let target = alpha * total;
    for t in 0..cumulative.len() {
        if cumulative[t] >= target {
            if t == 0 {
                return 0.0;
            }
            let (a, b) = (cumulative[t - 1], cumulative[t]);
            return (t - 1) as f64 + if b > a { (target - a) / (b - a) } else { 1.0 };
        }
    }
    (cumulative.len() - 1) as f64
}

impl DistanceStats {
    /// Figures from exact all-pairs counts over a connected set of `n` nodes.
    pub fn from_all_pairs(ap: &AllPairs, node_set: &str, unreachable_pairs_in_graph: u64) -> Self {
        const ALG: &str = "all-pairs bit-parallel BFS";
        let n = ap.eccentricity.len() as u64;
        let pairs: u64 = ap.pairs.iter().sum();
        let weighted: u128 = ap
            .pairs
            .iter()
            .enumerate()
            .map(|(d, &c)| d as u128 * c as u128)
            .sum();
        let mut cum = vec![0.0];
        let mut cum_self = vec![n as f64];
        let mut acc = 0u64;
        for &c in &ap.pairs[1..] {
            acc += c;
            cum.push(acc as f64);
            cum_self.push((acc + n) as f64);
        }
        DistanceStats {
            node_set: node_set.to_string(),
            nodes: n,
            pairs,
            unreachable_pairs_in_graph,
            mean: Figure::exact_over(
                if pairs == 0 {
                    0.0
                } else {
                    weighted as f64 / pairs as f64
                },
                ALG,
                pairs,
            ),
            distribution: ap.pairs.clone(),
            diameter: Figure::exact(
                ap.eccentricity.iter().copied().max().unwrap_or(0) as f64,
                ALG,
            ),
            radius: Some(Figure::exact(
                ap.eccentricity.iter().copied().min().unwrap_or(0) as f64,
                ALG,
            )),
            effective_diameter: Figure::exact(effective_diameter(&cum, 0.9), ALG),
            effective_diameter_with_self: effective_diameter(&cum_self, 0.9),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::exact::bfs::naive_distances;

    #[test]
    fn agrees_with_one_bfs_per_source() {
        // 150 nodes (three batches, the last partial): a cycle with chords.
        let n = 150u32;
        let mut e: Vec<(u32, u32)> = (0..n).map(|i| (i, (i + 1) % n)).collect();
        e.extend((0..n).step_by(7).map(|i| (i, (i * 13 + 5) % n)));
        let g = Csr::from_edges(n as usize, &e);
        let ap = all_pairs(&g);
        let mut pairs = vec![0u64; 1];
        for s in 0..n {
            let d = naive_distances(&g, s);
            let ecc = *d.iter().max().unwrap();
            assert_eq!(ap.eccentricity[s as usize], ecc);
            for &x in &d {
                if x > 0 {
                    if pairs.len() <= x as usize {
                        pairs.resize(x as usize + 1, 0);
                    }
                    pairs[x as usize] += 1;
                }
            }
        }
        assert_eq!(ap.pairs, pairs);
    }

    /// The direction-optimizing batch equals its pull-only twin, word for word, on graphs of
    /// the three generators and a disconnected one, for full and partial batches.
    #[test]
    fn push_and_pull_agree_with_pull_only() {
        use crate::models::generate;
        let mut graphs = vec![
            generate::preferential_attachment(3000, 3, 7),
            generate::gnm(2500, 6000, 3),
            generate::watts_strogatz(2000, 6, 0.05, 5),
        ];
        // Two rings, so some sources never reach some nodes.
        let mut e: Vec<(u32, u32)> = (0..500).map(|i| (i, (i + 1) % 500)).collect();
        e.extend((500..900).map(|i| (i, if i == 899 { 500 } else { i + 1 })));
        graphs.push(Csr::from_edges(900, &e));
        for g in &graphs {
            let n = g.node_count() as u32;
            let mut fast = BatchBuffers::new(n as usize);
            let mut slow = BatchBuffers::new(n as usize);
            for (k, step) in [(64usize, 37u32), (5, 101), (1, 13)] {
                let sources: Vec<u32> = (0..k as u32).map(|i| (i * step + 11) % n).collect();
                let (mut a, mut b) = (Vec::new(), Vec::new());
                let got = batch::<true>(g, &sources, &mut fast, &mut a);
                let want = batch_pull::<true>(g, &sources, &mut slow, &mut b);
                assert_eq!(got, want, "{k} sources on {n} nodes");
                assert_eq!(a, b, "per-source counts, {k} sources on {n} nodes");
            }
        }
    }

    #[test]
    fn effective_diameter_interpolates() {
        // 10 pairs within 1, 100 within 2: 90% = 90 lies 80/90 of the way from 1 to 2.
        let e = effective_diameter(&[0.0, 10.0, 100.0], 0.9);
        assert!((e - (1.0 + 80.0 / 90.0)).abs() < 1e-12);
        assert_eq!(effective_diameter(&[0.0, 10.0], 0.9), 0.9);
    }
}

//! Exact distances between all pairs of a connected graph, by bit-parallel breadth-first search:
//! 64 sources advance together, one bit each per node, so a level costs one pass over the
//! adjacency for all 64 (multi-source BFS in the manner of Then et al., "The more the merrier:
//! efficient multi-source graph traversal", PVLDB 8(4), 2014). Batches run in parallel, and a
//! dense level's nodes are split over the threads too; the pair counts are integers, so results
//! do not depend on the thread count. The sampled-source estimator uses 128-bit words.

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::figure::Figure;
use crate::store::csr::Csr;
use crate::store::pages;

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

/// A node's word: one bit per source of a batch. `u64` for the all-pairs batches, which run
/// many at once; `u128` for the sampled batches, which share one pass over the adjacency among
/// 128 sources (a scattered read of 16 bytes costs about what one of 8 does).
pub(crate) trait Word:
    Copy
    + Send
    + Sync
    + PartialEq
    + bytemuck::Zeroable
    + std::ops::BitOr<Output = Self>
    + std::ops::BitOrAssign
    + std::ops::BitAnd<Output = Self>
    + std::ops::BitXor<Output = Self>
    + std::ops::BitXorAssign
    + std::ops::Not<Output = Self>
{
    /// Sources a word holds.
    const WIDTH: usize;
    const ZERO: Self;
    /// The word with bits `0..k` set.
    fn low(k: usize) -> Self;
    fn bit(i: usize) -> Self;
    fn ones(self) -> u64;
    /// Call `f` with the index of every set bit, lowest first.
    fn for_each_bit(self, f: impl FnMut(usize));
}

macro_rules! word {
    ($t:ty) => {
        impl Word for $t {
            const WIDTH: usize = <$t>::BITS as usize;
            const ZERO: Self = 0;
            #[inline]
            fn low(k: usize) -> Self {
                if k >= Self::WIDTH {
                    <$t>::MAX
                } else {
                    (1 << k) - 1
                }
            }
            #[inline]
            fn bit(i: usize) -> Self {
                1 << i
            }
            #[inline]
            fn ones(self) -> u64 {
                self.count_ones() as u64
            }
            #[inline]
            fn for_each_bit(self, mut f: impl FnMut(usize)) {
                let mut bits = self;
                while bits != 0 {
                    f(bits.trailing_zeros() as usize);
                    bits &= bits - 1;
                }
            }
        }
    };
}
word!(u64);
word!(u128);

/// Per-source counts by level, `[d - 1][i]` = nodes at distance d from source i (room for the
/// widest word).
pub(crate) type LevelCounts = Vec<[u64; 128]>;

/// The three word arrays a bit-parallel batch works in (one word per node), and a bit per node
/// saying which frontier (and next) words are nonzero, reused across batches by each worker.
/// On huge pages: the pull's reads of `frontier` are scattered.
pub(crate) struct BatchBuffers<W: Word> {
    seen: Vec<W>,
    frontier: Vec<W>,
    next: Vec<W>,
    front_bits: Vec<u64>,
    next_bits: Vec<u64>,
}

impl<W: Word> BatchBuffers<W> {
    /// Buffers for graphs of `n` nodes.
    pub(crate) fn new(n: usize) -> Self {
        BatchBuffers {
            seen: pages::zeroed(n),
            frontier: pages::zeroed(n),
            next: pages::zeroed(n),
            front_bits: vec![0; n.div_ceil(64)],
            next_bits: vec![0; n.div_ceil(64)],
        }
    }

    /// Bytes the buffers take for `n` nodes.
    pub(crate) fn bytes(n: usize) -> u64 {
        3 * n as u64 * std::mem::size_of::<W>() as u64 + 2 * n.div_ceil(64) as u64 * 8
    }
}

/// One batch of up to 64 sources (distinct): returns ordered-pair counts by distance from them
/// and their eccentricities.
pub(crate) fn sources_batch(
    g: &Csr,
    sources: &[u32],
    bufs: &mut BatchBuffers<u64>,
) -> (Vec<u64>, Vec<u32>) {
    batch::<u64, false>(g, sources, bufs, &mut Vec::new())
}

/// One batch of up to `W::WIDTH` sources, as [`sources_batch`], and also `per_source[d - 1][i]`
/// = nodes at distance d from `sources[i]`, for the estimators that need each source's own
/// distribution.
pub(crate) fn sources_batch_each<W: Word>(
    g: &Csr,
    sources: &[u32],
    bufs: &mut BatchBuffers<W>,
    per_source: &mut LevelCounts,
) -> (Vec<u64>, Vec<u32>) {
    per_source.clear();
    batch::<W, true>(g, sources, bufs, per_source)
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

/// Nodes per task of a pull level: the level's nodes are independent, so tasks run on every
/// thread and their tallies add up in task order, the same on any thread count.
const PULL_CHUNK: usize = 1 << 14;

/// Bit planes of the per-source counters: counts up to 2^16 - 1 between flushes.
const PLANES: usize = 16;

/// What one task of a pull level (or a push level) found.
struct Tally<W> {
    /// Sources that reached some node.
    any: W,
    /// (node, source) pairs reached.
    reached: u64,
    /// Nodes reached per source (only when asked for), less what `planes` holds.
    each: [u64; 128],
    /// Per-source counters, bit-sliced: plane p holds bit p of every source's count, so one
    /// node's word is added in a few word operations instead of one step per set bit (at a
    /// billion edges a level reaches 9e9 (node, source) pairs).
    planes: [W; PLANES],
    /// Words added to `planes` since they were last emptied into `each`.
    pending: u32,
    /// Edge entries of nodes now reached from every source.
    closed: u64,
    /// The nodes reached, while no longer than the cap.
    found: Option<Vec<u32>>,
    /// How many nodes were reached (the nonzero `next` words).
    nodes: usize,
}

impl<W: Word> Tally<W> {
    fn new() -> Self {
        Tally {
            any: W::ZERO,
            reached: 0,
            each: [0; 128],
            planes: [W::ZERO; PLANES],
            pending: 0,
            closed: 0,
            found: Some(Vec::new()),
            nodes: 0,
        }
    }

    /// Node `v` is newly reached from the sources of `new`; `degree` closes when `full`.
    #[inline]
    fn record<const EACH: bool>(&mut self, v: u32, new: W, full: bool, degree: u64, cap: usize) {
        self.reached += new.ones();
        self.any |= new;
        self.nodes += 1;
        if EACH {
            let mut carry = new;
            for p in self.planes.iter_mut() {
                let c = *p & carry;
                *p ^= carry;
                carry = c;
                if carry == W::ZERO {
                    break;
                }
            }
            self.pending += 1;
            if self.pending == (1 << PLANES) - 1 {
                self.flush();
            }
        }
        if full {
            self.closed += degree;
        }
        if let Some(l) = self.found.as_mut() {
            if l.len() < cap {
                l.push(v);
            } else {
                self.found = None;
            }
        }
    }

    /// Empty the bit-sliced counters into `each`.
    fn flush(&mut self) {
        for (p, plane) in self.planes.iter_mut().enumerate() {
            plane.for_each_bit(|i| self.each[i] += 1 << p);
            *plane = W::ZERO;
        }
        self.pending = 0;
    }

    /// Add a later task's tally.
    fn absorb(&mut self, mut other: Tally<W>, cap: usize) {
        self.flush();
        other.flush();
        self.any |= other.any;
        self.reached += other.reached;
        for (a, b) in self.each.iter_mut().zip(other.each) {
            *a += b;
        }
        self.closed += other.closed;
        self.nodes += other.nodes;
        self.found = match (self.found.take(), other.found) {
            (Some(mut a), Some(b)) if a.len() + b.len() <= cap => {
                a.extend(b);
                Some(a)
            }
            _ => None,
        };
    }
}

/// One batch, direction-optimizing: sparse levels (the first few, and the last) push from a list
/// of frontier nodes; dense ones pull over every node not yet reached from all sources, stopping
/// a node's scan once every missing source is found, in tasks over blocks of nodes on every
/// thread. Both directions give the same `next` words, so the results equal the pull-only
/// [`batch_pull`] (tested).
fn batch<W: Word, const EACH: bool>(
    g: &Csr,
    sources: &[u32],
    bufs: &mut BatchBuffers<W>,
    per_source: &mut LevelCounts,
) -> (Vec<u64>, Vec<u32>) {
    let BatchBuffers {
        seen,
        frontier,
        next,
        front_bits,
        next_bits,
    } = bufs;
    let n = seen.len();
    let k = sources.len();
    assert!(k <= W::WIDTH, "a batch holds at most {} sources", W::WIDTH);
    let full = W::low(k);
    seen.fill(W::ZERO);
    frontier.fill(W::ZERO);
    next.fill(W::ZERO);
    front_bits.fill(0);
    let o = g.offsets();
    let t = g.targets();
    let degree = |v: u32| o[v as usize + 1] - o[v as usize];
    let cap = (n / LIST_SHARE).max(1024);
    // Nodes whose frontier word is nonzero, while few enough to keep.
    let mut list: Option<Vec<u32>> = Some(Vec::with_capacity(k));
    for (i, &s) in sources.iter().enumerate() {
        if seen[s as usize] == W::ZERO
            && let Some(l) = list.as_mut()
        {
            l.push(s);
        }
        seen[s as usize] |= W::bit(i);
        frontier[s as usize] |= W::bit(i);
        front_bits[s as usize / 64] |= 1 << (s % 64);
    }
    // The list holds each source node once (pushed when first seen): the nonzero frontier words.
    let mut front_nodes = list.as_ref().map_or(0, Vec::len);
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
        let push = list.as_ref().is_some_and(|l| {
            let frontier_edges: u64 = l.iter().map(|&u| degree(u)).sum();
            frontier_edges.saturating_mul(PUSH_FACTOR) < open_edges
        });
        let mut tally = if push {
            // `next` must start at zero: clear what the last level left in it.
            match next_list.take() {
                Some(l) => l.iter().for_each(|&w| next[w as usize] = W::ZERO),
                None => next.fill(W::ZERO),
            }
            let mut touched = Vec::new();
            for &u in list.as_deref().unwrap_or_default() {
                let bits = frontier[u as usize];
                for &w in &t[o[u as usize] as usize..o[u as usize + 1] as usize] {
                    let new = bits & !seen[w as usize];
                    if new != W::ZERO {
                        if next[w as usize] == W::ZERO {
                            touched.push(w);
                        }
                        next[w as usize] |= new;
                    }
                }
            }
            // The touched list is the level's found list: the tally need not build another.
            let mut tally = Tally {
                found: None,
                ..Tally::new()
            };
            next_bits.fill(0);
            for &w in &touched {
                let new = next[w as usize];
                seen[w as usize] |= new;
                next_bits[w as usize / 64] |= 1 << (w % 64);
                let closes = seen[w as usize] == full;
                tally.record::<EACH>(w, new, closes, degree(w), 0);
            }
            tally.found = Some(touched);
            tally
        } else {
            let task = Pull {
                o,
                t,
                frontier,
                front_bits,
                full,
                cap,
            };
            // A sparse frontier's bitmap (n/8 bytes, cache-resident) answers most reads that
            // would otherwise miss memory for a zero word (Beamer et al. keep the bottom-up
            // frontier as a bitmap for the same reason).
            let sparse = front_nodes * 2 < n;
            seen.par_chunks_mut(PULL_CHUNK)
                .zip(next.par_chunks_mut(PULL_CHUNK))
                .zip(next_bits.par_chunks_mut(PULL_CHUNK / 64))
                .enumerate()
                .map(|(c, ((seen, next), bits))| {
                    if sparse {
                        task.run::<EACH, true>(c * PULL_CHUNK, seen, next, bits)
                    } else {
                        task.run::<EACH, false>(c * PULL_CHUNK, seen, next, bits)
                    }
                })
                .collect::<Vec<_>>()
                .into_iter()
                .reduce(|mut a, b| {
                    a.absorb(b, cap);
                    a
                })
                .unwrap_or_else(Tally::new)
        };
        if tally.any == W::ZERO {
            break;
        }
        open_edges -= tally.closed;
        counts.push(tally.reached);
        if EACH {
            tally.flush();
            per_source.push(tally.each);
        }
        tally.any.for_each_bit(|i| ecc[i] = level);
        std::mem::swap(frontier, next);
        std::mem::swap(front_bits, next_bits);
        front_nodes = tally.nodes;
        // `next` now holds the old frontier, whose nonzero words `list` names.
        next_list = list;
        list = tally.found;
    }
    (counts, ecc)
}

/// One pull level's view of the batch, shared by its tasks.
struct Pull<'a, W> {
    o: &'a [u64],
    t: &'a [u32],
    frontier: &'a [W],
    front_bits: &'a [u64],
    full: W,
    cap: usize,
}

impl<W: Word> Pull<'_, W> {
    /// Pull the nodes `base..base + seen.len()` (their words `seen`, `next`, and `bits`, the
    /// next bitmap's words for them); with `SPARSE`, a neighbour's frontier word is read only
    /// when the bitmap says it is nonzero.
    #[inline]
    fn run<const EACH: bool, const SPARSE: bool>(
        &self,
        base: usize,
        seen: &mut [W],
        next: &mut [W],
        bits: &mut [u64],
    ) -> Tally<W> {
        let (o, t, full) = (self.o, self.t, self.full);
        let mut tally = Tally::new();
        bits.fill(0);
        for (j, (sv, nv)) in seen.iter_mut().zip(next.iter_mut()).enumerate() {
            let s = *sv;
            if s == full {
                *nv = W::ZERO;
                continue;
            }
            let v = base + j;
            let mut acc = W::ZERO;
            for &w in &t[o[v] as usize..o[v + 1] as usize] {
                if SPARSE && self.front_bits[w as usize / 64] & (1 << (w % 64)) == 0 {
                    continue;
                }
                acc |= self.frontier[w as usize];
                if (acc | s) == full {
                    break;
                }
            }
            let new = acc & !s;
            *nv = new;
            if new != W::ZERO {
                *sv = s | new;
                bits[j / 64] |= 1 << (j % 64);
                tally.record::<EACH>(v as u32, new, *sv == full, o[v + 1] - o[v], self.cap);
            }
        }
        tally
    }
}

/// The pull-only batch: every level scans every node not yet reached from all sources, one
/// node after another. The simple twin the direction-optimizing [`batch`] is tested against.
#[cfg(test)]
fn batch_pull<W: Word, const EACH: bool>(
    g: &Csr,
    sources: &[u32],
    bufs: &mut BatchBuffers<W>,
    per_source: &mut LevelCounts,
) -> (Vec<u64>, Vec<u32>) {
    let BatchBuffers {
        seen,
        frontier,
        next,
        ..
    } = bufs;
    let k = sources.len();
    let full = W::low(k);
    seen.fill(W::ZERO);
    frontier.fill(W::ZERO);
    for (i, &s) in sources.iter().enumerate() {
        seen[s as usize] |= W::bit(i);
        frontier[s as usize] |= W::bit(i);
    }
    let o = g.offsets();
    let t = g.targets();
    let mut counts = vec![0u64];
    let mut ecc = vec![0u32; k];
    let mut level = 0u32;
    loop {
        level += 1;
        let mut any = W::ZERO;
        let mut reached = 0u64;
        let mut each = [0u64; 128];
        for v in 0..seen.len() {
            if seen[v] == full {
                next[v] = W::ZERO;
                continue;
            }
            let mut acc = W::ZERO;
            for &w in &t[o[v] as usize..o[v + 1] as usize] {
                acc |= frontier[w as usize];
            }
            let new = acc & !seen[v];
            next[v] = new;
            if new != W::ZERO {
                seen[v] |= new;
                reached += new.ones();
                any |= new;
                if EACH {
                    new.for_each_bit(|i| each[i] += 1);
                }
            }
        }
        if any == W::ZERO {
            break;
        }
        counts.push(reached);
        if EACH {
            per_source.push(each);
        }
        any.for_each_bit(|i| ecc[i] = level);
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
    /// the three generators and a disconnected one, for full and partial batches of both word
    /// widths.
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
        // Larger than a few pull tasks, so their tallies and lists are joined.
        graphs.push(generate::preferential_attachment(
            3 * PULL_CHUNK as u32 + 500,
            3,
            9,
        ));
        for g in &graphs {
            check::<u64>(g, &[64, 5, 1]);
            check::<u128>(g, &[128, 100, 64, 1]);
        }
    }

    fn check<W: Word>(g: &Csr, widths: &[usize]) {
        let n = g.node_count() as u32;
        let mut fast = BatchBuffers::<W>::new(n as usize);
        let mut slow = BatchBuffers::<W>::new(n as usize);
        for (&k, step) in widths.iter().zip([37u32, 101, 13, 7]) {
            let sources: Vec<u32> = (0..k as u32).map(|i| (i * step + 11) % n).collect();
            let (mut a, mut b) = (Vec::new(), Vec::new());
            let got = batch::<W, true>(g, &sources, &mut fast, &mut a);
            let want = batch_pull::<W, true>(g, &sources, &mut slow, &mut b);
            assert_eq!(got, want, "{k} sources on {n} nodes");
            assert_eq!(a, b, "per-source counts, {k} sources on {n} nodes");
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

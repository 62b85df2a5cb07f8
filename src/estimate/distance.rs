//! Distances of a connected graph from breadth-first searches at uniformly sampled sources
//! (Eppstein & Wang, "Fast approximation of centrality", J. Graph Algorithms Appl. 8(1), 2004):
//! each source's distances to all other nodes are exact, so the mean over sources estimates the
//! mean over all pairs. Intervals: finite-population corrected normal intervals over sources for
//! the mean distance and the distribution, and a seeded percentile bootstrap over sources (Efron,
//! "Bootstrap methods: another look at the jackknife", Ann. Statist. 7, 1979) for the effective
//! diameter, which is not a mean. Sources run 128 at a time in one bit-parallel search.

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use rustc_hash::FxHashMap;

use super::interval::z_for;
use super::sample::mean_interval;
use crate::exact::distances::{
    BatchBuffers, LevelCounts, Word, effective_diameter, sources_batch_each,
};
use crate::figure::{Figure, Interval};
use crate::numeric::{mean_variance, percentile_interval};
use crate::store::csr::Csr;

/// Bootstrap resamples for the effective diameter.
const RESAMPLES: usize = 1000;
/// Sources in the first stage of a precision-driven run (one bit-parallel batch).
pub const PILOT: usize = BATCH;

/// Distance figures estimated by BFS from sampled sources (Eppstein & Wang, J. Graph Algorithms
/// Appl. 8(1) 2004).
#[derive(Debug, Clone, PartialEq)]
pub struct SampledDistances {
    /// Nodes of the graph measured.
    pub nodes: u64,
    /// BFS sources used.
    pub sources: u64,
    /// Mean distance over reachable ordered pairs, with its interval.
    pub mean: Figure,
    /// 90th-percentile distance, interpolated, self pairs excluded.
    pub effective_diameter: Figure,
    /// Share of ordered pairs at distance d = 1, 2, … (index 0 is distance 1).
    pub distribution: Vec<Figure>,
    /// Ordered pairs at each distance from the sampled sources, summed (`[0]` = 0).
    pub sampled_pairs: Vec<u64>,
    /// The largest distance seen: a lower bound on the diameter.
    pub farthest: u32,
}

/// Nodes at each distance (`[d - 1]` = distance d) from each source.
type PerSource = Vec<Vec<u64>>;

/// A uniform sample of `k` of `0..n` whose every prefix is itself a uniform sample (partial
/// Fisher–Yates with the swaps kept in a map, so memory is O(k) however large n is).
pub fn prefix_sample(n: u32, k: usize, seed: u64) -> Vec<u32> {
    let k = k.min(n as usize);
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut swapped: FxHashMap<u32, u32> = FxHashMap::default();
    (0..k as u32)
        .map(|i| {
            let j = rng.random_range(i..n);
            let at_j = *swapped.get(&j).unwrap_or(&j);
            let at_i = *swapped.get(&i).unwrap_or(&i);
            swapped.insert(j, at_i);
            at_j
        })
        .collect()
}

/// Sources per bit-parallel batch on large graphs (small ones run two of 64 side by side): one
/// pass over the adjacency per level serves them all. The pilot and the sample grow by this many.
pub const BATCH: usize = 128;

/// Working memory for batches run side by side: more than this and batches run one after
/// another (each still on every thread, see [`crate::exact::distances`]). At 1e8 nodes one
/// 128-source batch's words take 4.8 GB.
const SIDE_BY_SIDE_BYTES: u64 = 1 << 30;

/// A 64-source batch whose words take no more than this (a last-level cache; 32 MiB on the
/// reference machine) runs as such: its scattered reads hit the cache, so sharing them buys
/// little, and two batches side by side also push their sparse levels in parallel.
const CACHED_WORDS_BYTES: u64 = 32 << 20;

/// Per-source distance counts for `sources`. Graphs whose words fit in cache run batches of 64
/// side by side, one per thread; larger ones batches of [`BATCH`], whose scattered reads serve
/// twice the sources, side by side while memory allows, else one at a time with their dense
/// levels spread over the threads. Either way each source's counts are exact, so the result
/// does not depend on the schedule.
fn search(g: &Csr, sources: &[u32]) -> PerSource {
    let n = g.node_count();
    fn run<W: Word>(
        g: &Csr,
        bufs: &mut BatchBuffers<W>,
        each: &mut LevelCounts,
        batch: &[u32],
    ) -> PerSource {
        sources_batch_each(g, batch, bufs, each);
        (0..batch.len())
            .map(|i| each.iter().map(|level| level[i]).collect())
            .collect()
    }
    fn side_by_side<W: Word>(g: &Csr, sources: &[u32], width: usize) -> Vec<PerSource> {
        let n = g.node_count();
        sources
            .par_chunks(width)
            .map_init(
                || (BatchBuffers::<W>::new(n), Vec::new()),
                |(bufs, each), batch| run(g, bufs, each, batch),
            )
            .collect()
    }
    let threads = rayon::current_num_threads() as u64;
    let batches: Vec<PerSource> = if BatchBuffers::<u64>::bytes(n) <= CACHED_WORDS_BYTES {
        side_by_side::<u64>(g, sources, 64)
    } else if BatchBuffers::<u128>::bytes(n) * threads <= SIDE_BY_SIDE_BYTES {
        side_by_side::<u128>(g, sources, BATCH)
    } else {
        let (mut bufs, mut each) = (BatchBuffers::<u128>::new(n), Vec::new());
        sources
            .chunks(BATCH)
            .map(|batch| run(g, &mut bufs, &mut each, batch))
            .collect()
    };
    batches.into_iter().flatten().collect()
}

/// Estimate from `sources` uniformly sampled sources. `g` must be connected (pass the giant
/// component).
pub fn estimate(g: &Csr, sources: usize, level: f64, seed: u64) -> SampledDistances {
    let picked = prefix_sample(g.node_count() as u32, sources, seed);
    summarise(g.node_count() as u64, &search(g, &picked), level, seed)
}

/// The first stage of a precision-driven estimate: [`PILOT`] sources of a seeded order.
pub struct Pilot {
    order: Vec<u32>,
    per: PerSource,
    /// The pilot's figures.
    pub summary: SampledDistances,
}

/// A pilot sample of sources ([`PILOT`], one bit-parallel batch) that sizes the full sample by Stein's
/// two-stage rule (Stein, Ann. Math. Statist. 16, 1945).
pub fn pilot(g: &Csr, level: f64, max_sources: usize, seed: u64) -> Pilot {
    let n = g.node_count();
    let order = prefix_sample(n as u32, max_sources.max(PILOT), seed);
    let per = search(g, &order[..PILOT.min(order.len())]);
    let summary = summarise(n as u64, &per, level, seed);
    Pilot {
        order,
        per,
        summary,
    }
}

impl Pilot {
    /// Sources the pilot searched from.
    pub fn sources_done(&self) -> usize {
        self.per.len()
    }

    /// Sources the whole estimate will use for ±`relative` (whole batches of [`BATCH`], at least the
    /// pilot's, at most the order's).
    pub fn sources_needed(&self, relative: f64, level: f64) -> usize {
        let need = sources_for(&self.summary.mean, relative, level, self.summary.nodes);
        need.div_ceil(BATCH)
            .saturating_mul(BATCH)
            .clamp(self.per.len(), self.order.len())
    }

    /// The second stage: the further sources that make ±`relative`.
    pub fn finish(mut self, g: &Csr, relative: f64, level: f64, seed: u64) -> SampledDistances {
        let end = self.sources_needed(relative, level);
        if end <= self.per.len() {
            return self.summary;
        }
        let more = search(g, &self.order[self.per.len()..end]);
        self.per.extend(more);
        summarise(g.node_count() as u64, &self.per, level, seed)
    }
}

/// Estimate with enough sources for the mean distance to lie within ±`relative` of its value at
/// `level` (Stein's two-stage procedure: a pilot of [`PILOT`] sources measures the spread, which
/// sizes the rest; C. Stein, Ann. Math. Statist. 16, 1945), never more than `max_sources`.
pub fn estimate_to_precision(
    g: &Csr,
    relative: f64,
    level: f64,
    max_sources: usize,
    seed: u64,
) -> SampledDistances {
    pilot(g, level, max_sources, seed).finish(g, relative, level, seed)
}

/// Sources that make the interval half-width `relative` × mean, from a pilot figure.
pub fn sources_for(pilot: &Figure, relative: f64, level: f64, population: u64) -> usize {
    let (Some(se), Some(k)) = (pilot.std_error(), pilot.sample_size()) else {
        return 0;
    };
    if pilot.value() <= 0.0 || k == 0 {
        return 0;
    }
    // Undo the pilot's finite-population correction to get the per-source spread.
    let fpc = (1.0 - k as f64 / population.max(1) as f64).max(1e-12);
    let sd = se * (k as f64 / fpc).sqrt();
    // A tenth more than the pilot asks for: the pilot's spread is itself an estimate.
    let k0 = 1.1 * (z_for(level) * sd / (relative * pilot.value())).powi(2);
    let k = k0 / (1.0 + k0 / population as f64);
    k.ceil() as usize
}

pub(crate) fn summarise(nodes: u64, per: &PerSource, level: f64, seed: u64) -> SampledDistances {
    const NAME: &str =
        "BFS from uniformly sampled sources (Eppstein & Wang 2004), normal interval (FPC)";
    let k = per.len();
    let others = nodes.saturating_sub(1).max(1) as f64;
    let longest = per.iter().map(Vec::len).max().unwrap_or(0);
    let means: Vec<f64> = per
        .iter()
        .map(|c| {
            let s: u64 = c.iter().enumerate().map(|(d, &x)| (d as u64 + 1) * x).sum();
            s as f64 / others
        })
        .collect();
    let (mean, se, iv) = mean_interval(&means, nodes, level, 1.0, f64::INFINITY);
    let distribution = (0..longest)
        .map(|d| {
            let shares: Vec<f64> = per
                .iter()
                .map(|c| c.get(d).copied().unwrap_or(0) as f64 / others)
                .collect();
            let (m, se, iv) = mean_interval(&shares, nodes, level, 0.0, 1.0);
            Figure::estimate(m, NAME, k as u64, se, iv)
        })
        .collect();
    let mut sampled_pairs = vec![0u64; longest + 1];
    for c in per {
        for (d, &x) in c.iter().enumerate() {
            sampled_pairs[d + 1] += x;
        }
    }
    let eff = effective_of(per.iter(), longest);
    let effective_diameter = if k as u64 >= nodes {
        // Every node was a source: a census has no sampling error.
        Figure::estimate(
            eff,
            "BFS from every node",
            k as u64,
            0.0,
            Interval {
                low: eff,
                high: eff,
                level,
            },
        )
    } else {
        bootstrap_effective(per, longest, eff, level, seed)
    };
    SampledDistances {
        nodes,
        sources: k as u64,
        mean: Figure::estimate(mean, NAME, k as u64, se, iv),
        effective_diameter,
        distribution,
        sampled_pairs,
        farthest: longest as u32,
    }
}

/// The effective diameter of the pairs from a collection of sources.
fn effective_of<'a>(sources: impl Iterator<Item = &'a Vec<u64>>, longest: usize) -> f64 {
    let mut at = vec![0u64; longest + 1];
    for c in sources {
        for (d, &x) in c.iter().enumerate() {
            at[d + 1] += x;
        }
    }
    let mut acc = 0u64;
    let cum: Vec<f64> = at
        .iter()
        .map(|&x| {
            acc += x;
            acc as f64
        })
        .collect();
    effective_diameter(&cum, 0.9)
}

fn bootstrap_effective(
    per: &PerSource,
    longest: usize,
    value: f64,
    level: f64,
    seed: u64,
) -> Figure {
    let k = per.len();
    // Resamples in parallel, each with its own stream: the same on any thread count.
    let mut reps: Vec<f64> = (0..RESAMPLES as u64)
        .into_par_iter()
        .map(|b| {
            let mut rng = ChaCha8Rng::seed_from_u64(seed ^ 0xB007_5742_u64.rotate_left(32));
            rng.set_stream(b);
            let pick: Vec<usize> = (0..k).map(|_| rng.random_range(0..k)).collect();
            effective_of(pick.iter().map(|&i| &per[i]), longest)
        })
        .collect();
    let se = mean_variance(&reps).1.sqrt();
    reps.sort_by(f64::total_cmp);
    Figure::estimate(
        value,
        &format!(
            "BFS from uniformly sampled sources (Eppstein & Wang 2004), percentile bootstrap \
             over sources ({RESAMPLES} resamples)"
        ),
        k as u64,
        se,
        percentile_interval(&reps, level, value),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn prefixes_are_samples_without_replacement() {
        let s = prefix_sample(1000, 300, 7);
        let mut t = s.clone();
        t.sort_unstable();
        t.dedup();
        assert_eq!(t.len(), 300);
        assert!(s.iter().all(|&v| v < 1000));
        assert_eq!(prefix_sample(1000, 100, 7), s[..100]);
        let mut all = prefix_sample(50, 80, 1);
        all.sort_unstable();
        assert_eq!(all, (0..50).collect::<Vec<_>>());
    }

    #[test]
    fn census_is_exact_and_threads_do_not_matter() {
        let g = crate::models::generate::watts_strogatz(500, 6, 0.1, 2);
        let ap = crate::exact::distances::all_pairs(&g);
        let e = estimate(&g, 500, 0.95, 3);
        assert_eq!(e.sampled_pairs, ap.pairs);
        let exact = crate::exact::distances::DistanceStats::from_all_pairs(&ap, "all", 0);
        assert!((e.mean.value() - exact.mean.value()).abs() < 1e-12);
        assert_eq!(e.mean.std_error(), Some(0.0));
        assert_eq!(
            e.effective_diameter.value(),
            exact.effective_diameter.value()
        );
        let g = crate::models::generate::watts_strogatz(3000, 6, 0.1, 2);
        let one = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap()
            .install(|| estimate_to_precision(&g, 0.01, 0.95, 2000, 9));
        assert_eq!(one, estimate_to_precision(&g, 0.01, 0.95, 2000, 9));
        let iv = one.mean.interval().unwrap();
        assert!(
            (iv.high - iv.low) / 2.0 <= 0.0101 * one.mean.value(),
            "{iv:?}"
        );
    }
}

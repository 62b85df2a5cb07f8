//! Transitivity and triangle count by wedge sampling: draw a wedge (a path of length two)
//! uniformly, i.e. a centre v with probability C(d_v, 2) / W and a uniform pair of its
//! neighbours, and test whether it closes. The closed fraction is unbiased for the transitivity.
//! Seshadhri, Pinar & Kolda, "Triadic measures on graphs: the power of wedge sampling", SDM 2013;
//! "Wedge sampling for computing clustering coefficients and triangle counts on large graphs",
//! Stat. Anal. Data Min. 7(4), 2014.

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;

use super::interval::{hoeffding_samples, wilson, z_for};
use crate::exact::clustering::{ClusteringStats, DegreeClustering};
use crate::figure::{Figure, Interval};
use crate::store::csr::Csr;

/// Samples per independently seeded block: blocks make the result the same on any thread count.
const BLOCK: u64 = 4096;

/// Transitivity and triangles estimated by uniform wedge sampling (Seshadhri, Pinar & Kolda,
/// SDM 2013).
#[derive(Debug, Clone, PartialEq)]
pub struct WedgeEstimate {
    /// Transitivity, the closed share of sampled wedges, with its Wilson interval.
    pub transitivity: Figure,
    /// Triangles, transitivity times wedges over three.
    pub triangles: Figure,
    /// Wedges sampled.
    pub samples: u64,
    /// Of them, closed.
    pub closed: u64,
}

/// The generator for block `b` of a run seeded with `seed`: one ChaCha stream per block.
fn block_rng(seed: u64, b: u64) -> ChaCha8Rng {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream(b);
    rng
}

/// Count the successes of `samples` Bernoulli draws, in blocks with streams of their own, so the
/// count does not depend on the thread count.
fn count_successes(
    samples: u64,
    seed: u64,
    g: &Csr,
    pick: impl Fn(&mut ChaCha8Rng) -> u32 + Sync,
) -> u64 {
    count_from_block(0, samples, seed, g, &pick)
}

/// As [`count_successes`], with the blocks numbered from `first` (a continuation's streams are
/// apart from the pilot's).
fn count_from_block(
    first: u64,
    samples: u64,
    seed: u64,
    g: &Csr,
    pick: &(impl Fn(&mut ChaCha8Rng) -> u32 + Sync),
) -> u64 {
    (0..samples.div_ceil(BLOCK))
        .into_par_iter()
        .map(|b| {
            let mut rng = block_rng(seed, first + b);
            let mut left = BLOCK.min(samples - b * BLOCK) as usize;
            let mut closed = 0;
            while left > 0 {
                let k = left.min(GROUP);
                closed += closes_group(g, &mut rng, k, pick);
                left -= k;
            }
            closed
        })
        .sum()
}

/// Wedges drawn together: their scattered reads are issued side by side (prefetched a step
/// ahead), so the misses overlap instead of each draw waiting on four of them in turn.
const GROUP: usize = 16;

/// Draw `k` (at most [`GROUP`]) wedges whose centres `pick` chooses, and count the closed ones.
/// The stream is read in a fixed order: the `k` centres, then each wedge's two neighbour
/// positions; the same order as [`closes_group_naive`], the plain twin it is tested against.
fn closes_group(
    g: &Csr,
    rng: &mut ChaCha8Rng,
    k: usize,
    pick: &impl Fn(&mut ChaCha8Rng) -> u32,
) -> u64 {
    use crate::store::pages::prefetch;
    let (off, tg) = (g.offsets(), g.targets());
    let mut c = [0u32; GROUP];
    for x in c.iter_mut().take(k) {
        *x = pick(rng);
        prefetch(&off[*x as usize]);
    }
    // The two ends' positions in the centre's list.
    let mut ends = [(0usize, 0usize); GROUP];
    for (e, &v) in ends.iter_mut().zip(&c).take(k) {
        let base = off[v as usize] as usize;
        let (i, j) = pair_below(rng, (off[v as usize + 1] as usize - base) as u32);
        *e = (base + i as usize, base + j as usize);
        prefetch(&tg[e.0]);
        prefetch(&tg[e.1]);
    }
    let mut pair = [(0u32, 0u32); GROUP];
    for (p, e) in pair.iter_mut().zip(&ends).take(k) {
        *p = (tg[e.0], tg[e.1]);
        prefetch(&off[p.0 as usize]);
        prefetch(&off[p.1 as usize]);
    }
    // Lists are symmetric, so search the shorter: a wedge's ends are often hubs (a neighbour is
    // drawn in proportion to degree), whose long lists cost a cache miss per search step.
    let mut search = [(0usize, 0usize, 0u32); GROUP];
    for (s, &(a, b)) in search.iter_mut().zip(&pair).take(k) {
        let (short, other) = if g.degree(a) <= g.degree(b) {
            (a, b)
        } else {
            (b, a)
        };
        let (lo, hi) = (
            off[short as usize] as usize,
            off[short as usize + 1] as usize,
        );
        *s = (lo, hi, other);
        prefetch(&tg[lo + (hi - lo) / 2]);
    }
    search
        .iter()
        .take(k)
        .filter(|&&(lo, hi, other)| tg[lo..hi].binary_search(&other).is_ok())
        .count() as u64
}

/// Two distinct uniform positions below `d` (at least 2).
#[inline]
pub(crate) fn pair_below(rng: &mut ChaCha8Rng, d: u32) -> (u32, u32) {
    let i = rng.random_range(0..d);
    let mut j = rng.random_range(0..d - 1);
    if j >= i {
        j += 1;
    }
    (i, j)
}

/// The plain twin of [`closes_group`]: the same draws from the same stream, one read at a time.
#[cfg(test)]
fn closes_group_naive(
    g: &Csr,
    rng: &mut ChaCha8Rng,
    k: usize,
    pick: &impl Fn(&mut ChaCha8Rng) -> u32,
) -> u64 {
    let centres: Vec<u32> = (0..k).map(|_| pick(rng)).collect();
    centres
        .iter()
        .filter(|&&v| {
            let nb = g.neighbors(v);
            let (i, j) = pair_below(rng, nb.len() as u32);
            g.neighbors(nb[i as usize]).contains(&nb[j as usize])
        })
        .count() as u64
}

/// How wide a sampled clustering figure's interval may be: the narrower of an absolute
/// half-width and one relative to the figure, so that a figure of 1e-5 is not reported as
/// `0.0000 ± 0.002`. Sample sizes come from a pilot (Stein's two-stage idea: C. Stein, "A
/// two-sample test for a linear hypothesis whose power is independent of the variance", Ann.
/// Math. Statist. 16, 1945), capped by `max_samples` so a vanishing figure cannot ask for
/// billions of draws; the interval reported is always the one the samples give.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Margin {
    /// Largest half-width, in the figure's units (0.002 by default for transitivity).
    pub absolute: f64,
    /// Largest half-width relative to the figure (0.05 = ±5%); 0 turns the relative rule off.
    pub relative: f64,
    /// Most samples one figure may draw.
    pub max_samples: u64,
}

impl Margin {
    /// Only an absolute half-width, with Hoeffding's sample size (no pilot needed).
    pub fn absolute(half_width: f64) -> Margin {
        Margin {
            absolute: half_width,
            relative: 0.0,
            max_samples: u64::MAX,
        }
    }

    /// The half-width wanted for a figure near `p`.
    pub fn target(&self, p: f64) -> f64 {
        if self.relative > 0.0 {
            self.absolute.min(self.relative * p)
        } else {
            self.absolute
        }
    }

    /// The pilot: Hoeffding's sample size for the absolute half-width (within the cap).
    pub fn pilot(&self, level: f64) -> u64 {
        hoeffding_samples(self.absolute, level).min(self.max_samples)
    }

    /// Samples to draw in all, given `closed` successes in a pilot of `pilot` draws: the pilot
    /// alone when its Wilson interval already meets the target, else the normal-approximation
    /// size n = z² p(1-p) / h² at the pilot's proportion (its upper Wilson bound when nothing
    /// closed), within the cap.
    pub fn samples_after_pilot(&self, closed: u64, pilot: u64, level: f64) -> u64 {
        if pilot == 0 || self.relative <= 0.0 {
            return pilot;
        }
        let iv = wilson(closed, pilot, level);
        let p = closed as f64 / pilot as f64;
        if (iv.high - iv.low) / 2.0 <= self.target(p) {
            return pilot;
        }
        let plan = if closed == 0 { iv.high } else { p };
        let h = self.target(plan);
        let z = z_for(level);
        let n = (z * z * plan * (1.0 - plan) / (h * h)).ceil();
        if n.is_finite() {
            (n as u64).clamp(pilot, self.max_samples.max(pilot))
        } else {
            self.max_samples.max(pilot)
        }
    }
}

/// Successes and draws of a proportion sampled to `margin`: a pilot, then as many more draws as
/// the pilot says the margin needs.
fn sample_to(
    margin: &Margin,
    level: f64,
    seed: u64,
    g: &Csr,
    pick: impl Fn(&mut ChaCha8Rng) -> u32 + Sync,
) -> (u64, u64) {
    let pilot = margin.pilot(level);
    let mut closed = count_from_block(0, pilot, seed, g, &pick);
    let total = margin.samples_after_pilot(closed, pilot, level);
    if total > pilot {
        closed += count_from_block(pilot.div_ceil(BLOCK), total - pilot, seed, g, &pick);
    }
    (closed, total)
}

/// A sampled proportion as a figure (Wilson interval), and the same figure scaled by `scale`.
pub(crate) fn proportion(
    closed: u64,
    samples: u64,
    level: f64,
    name: &str,
    scale: f64,
) -> (Figure, Figure) {
    let p = if samples == 0 {
        0.0
    } else {
        closed as f64 / samples as f64
    };
    let se = (p * (1.0 - p) / samples.max(1) as f64).sqrt();
    let iv = wilson(closed, samples, level);
    let scaled = Figure::estimate(
        p * scale,
        name,
        samples,
        se * scale,
        Interval {
            low: iv.low * scale,
            high: iv.high * scale,
            level,
        },
    );
    (Figure::estimate(p, name, samples, se, iv), scaled)
}

/// How many draws: a fixed count, or as many as a margin needs (see [`Margin`]).
#[derive(Debug, Clone, Copy)]
enum Draws<'a> {
    Fixed(u64),
    To(&'a Margin),
}

/// Closed wedges among those drawn (centres from `pick`), and how many were drawn.
fn run_draws(
    draws: Draws,
    level: f64,
    seed: u64,
    g: &Csr,
    pick: impl Fn(&mut ChaCha8Rng) -> u32 + Sync,
) -> (u64, u64) {
    match draws {
        Draws::Fixed(k) => (count_successes(k, seed, g, pick), k),
        Draws::To(m) => sample_to(m, level, seed, g, pick),
    }
}

/// Uniform wedges: cumulative wedge counts pick a centre in proportion to its wedges.
struct WedgeSampler {
    cum: Vec<u128>,
    /// The last cumulative count of each block of [`CENTRE_BLOCK`] nodes: a search of this small
    /// table, then of one block, finds the same centre as a search of `cum`, with a few cache
    /// misses instead of one per level (at 1e8 nodes `cum` is 1.6 GB).
    coarse: Vec<u128>,
    wedges: u128,
}

/// Nodes per block of the two-level search (a block of counts is 1 KiB).
const CENTRE_BLOCK: usize = 64;

impl WedgeSampler {
    fn new(g: &Csr) -> Self {
        let mut cum = crate::store::pages::with_capacity(g.node_count());
        let mut acc: u128 = 0;
        for v in 0..g.node_count() as u32 {
            acc += crate::exact::clustering::wedges_at(g.degree(v));
            cum.push(acc);
        }
        let coarse = cum.chunks(CENTRE_BLOCK).map(|b| b[b.len() - 1]).collect();
        WedgeSampler {
            cum,
            coarse,
            wedges: acc,
        }
    }

    /// The centre of wedge number `x`: the first node whose cumulative count exceeds it.
    fn centre(&self, x: u128) -> usize {
        // The first block whose last count exceeds x holds that node (counts never decrease).
        let b = self.coarse.partition_point(|&w| w <= x);
        let lo = b * CENTRE_BLOCK;
        let hi = (lo + CENTRE_BLOCK).min(self.cum.len());
        lo + self.cum[lo..hi].partition_point(|&w| w <= x)
    }

    /// A centre in proportion to its wedges.
    fn pick(&self, rng: &mut ChaCha8Rng) -> u32 {
        self.centre(random_below(rng, self.wedges)) as u32
    }
}

const WEDGE_NAME: &str = "wedge sampling (Seshadhri, Pinar & Kolda 2013), Wilson interval";

fn estimate_with(g: &Csr, draws: Draws, level: f64, seed: u64) -> WedgeEstimate {
    let s = WedgeSampler::new(g);
    let (closed, samples) = if s.wedges == 0 {
        (0, draws_without_sampling(draws, level))
    } else {
        run_draws(draws, level, seed, g, |rng| s.pick(rng))
    };
    let (transitivity, triangles) =
        proportion(closed, samples, level, WEDGE_NAME, s.wedges as f64 / 3.0);
    WedgeEstimate {
        transitivity,
        triangles,
        samples,
        closed,
    }
}

/// The sample size reported when there is nothing to draw (no wedges at all).
fn draws_without_sampling(draws: Draws, level: f64) -> u64 {
    match draws {
        Draws::Fixed(k) => k,
        Draws::To(m) => m.pilot(level),
    }
}

/// Estimate transitivity from `samples` wedges, with a Wilson interval at `level`.
pub fn estimate(g: &Csr, samples: u64, level: f64, seed: u64) -> WedgeEstimate {
    estimate_with(g, Draws::Fixed(samples), level, seed)
}

/// Estimate transitivity to `margin` at `level`: a pilot sizes the sample (see [`Margin`]).
pub fn estimate_to(g: &Csr, margin: &Margin, level: f64, seed: u64) -> WedgeEstimate {
    estimate_with(g, Draws::To(margin), level, seed)
}

/// Wedge draws that transitivity to `margin` would take on `g`: its pilot is drawn (the same
/// draws [`estimate_to`] starts with) and the rest predicted from it.
pub fn planned_draws(g: &Csr, margin: &Margin, level: f64, seed: u64) -> u64 {
    let s = WedgeSampler::new(g);
    if s.wedges == 0 {
        return 0;
    }
    let pilot = margin.pilot(level);
    let closed = count_successes(pilot, seed, g, |rng| s.pick(rng));
    margin.samples_after_pilot(closed, pilot, level)
}

/// Both averages of local clustering by node-then-wedge sampling: a uniform node of degree >= 2,
/// then a uniform pair of its neighbours; the closed fraction is unbiased for the average
/// clustering over nodes of degree >= 2 (Seshadhri, Pinar & Kolda 2014, "uniform vertex"
/// wedge sampling). Each sample is a Bernoulli trial, so the Wilson interval holds however
/// skewed the local clustering is — unlike a normal interval on sampled exact values, which
/// under-covered on random graphs in this project's coverage test. The other convention (degree
/// < 2 counted as 0) is the same figure times n₂/n, both counts exact.
#[derive(Debug, Clone, PartialEq)]
pub struct AverageClusteringEstimate {
    /// Average local clustering with degree < 2 counted as 0.
    pub average_zeros: Figure,
    /// Average local clustering over nodes of degree ≥ 2.
    pub average_deg2: Figure,
}

fn average_with(g: &Csr, draws: Draws, level: f64, seed: u64) -> AverageClusteringEstimate {
    const NAME: &str =
        "uniform node then uniform wedge (Seshadhri, Pinar & Kolda 2014), Wilson interval";
    let n = g.node_count();
    let deg2: Vec<u32> = (0..n as u32).filter(|&v| g.degree(v) >= 2).collect();
    // Streams of their own, apart from the transitivity estimator's.
    let (closed, samples) = if deg2.is_empty() {
        (0, draws_without_sampling(draws, level))
    } else {
        run_draws(draws, level, seed ^ 0xC1u64.rotate_left(56), g, |rng| {
            deg2[rng.random_range(0..deg2.len())]
        })
    };
    let share = if n == 0 {
        0.0
    } else {
        deg2.len() as f64 / n as f64
    };
    let (average_deg2, average_zeros) = proportion(closed, samples, level, NAME, share);
    AverageClusteringEstimate {
        average_zeros,
        average_deg2,
    }
}

/// Average local clustering by uniform node sampling (then a wedge per node), from `samples`
/// draws, with Wilson intervals (Seshadhri, Pinar & Kolda, SDM 2013).
pub fn average_clustering(
    g: &Csr,
    samples: u64,
    level: f64,
    seed: u64,
) -> AverageClusteringEstimate {
    average_with(g, Draws::Fixed(samples), level, seed)
}

/// As [`average_clustering`], sampled to `margin` (see [`Margin`]).
pub fn average_clustering_to(
    g: &Csr,
    margin: &Margin,
    level: f64,
    seed: u64,
) -> AverageClusteringEstimate {
    average_with(g, Draws::To(margin), level, seed)
}

fn by_degree_with(g: &Csr, draws: Draws, level: f64, seed: u64) -> Vec<DegreeClustering> {
    const NAME: &str = "uniform node in the bin then uniform wedge (Seshadhri, Pinar & Kolda 2014), Wilson interval";
    let mut bins: Vec<Vec<u32>> = Vec::new();
    for v in 0..g.node_count() as u32 {
        let d = g.degree(v);
        if d >= 2 {
            let b = (31 - d.leading_zeros()) as usize - 1;
            if bins.len() <= b {
                bins.resize(b + 1, Vec::new());
            }
            bins[b].push(v);
        }
    }
    let max = (0..g.node_count() as u32)
        .map(|v| g.degree(v))
        .max()
        .unwrap_or(0);
    bins.iter()
        .enumerate()
        .filter(|(_, members)| !members.is_empty())
        .map(|(b, members)| {
            let low = 2u32 << b;
            let high = (low.saturating_mul(2) - 1).min(max);
            let (closed, samples) = run_draws(
                draws,
                level,
                seed ^ (0xB1u64 + b as u64).rotate_left(48),
                g,
                |rng| members[rng.random_range(0..members.len())],
            );
            let (mean, _) = proportion(closed, samples, level, NAME, 1.0);
            DegreeClustering {
                low,
                high,
                nodes: members.len() as u64,
                mean,
            }
        })
        .collect()
}

/// C(k), the average local clustering of the nodes in each degree bin `[2,3]`, `[4,7]`, `[8,15]`, …
/// (the exact profile's bins), each estimated from `samples_per_bin` draws of uniform node then
/// uniform wedge within the bin, with its own Wilson interval (Seshadhri, Pinar & Kolda 2014).
pub fn clustering_by_degree(
    g: &Csr,
    samples_per_bin: u64,
    level: f64,
    seed: u64,
) -> Vec<DegreeClustering> {
    by_degree_with(g, Draws::Fixed(samples_per_bin), level, seed)
}

/// As [`clustering_by_degree`], each bin sampled to `margin` (see [`Margin`]).
pub fn clustering_by_degree_to(
    g: &Csr,
    margin: &Margin,
    level: f64,
    seed: u64,
) -> Vec<DegreeClustering> {
    by_degree_with(g, Draws::To(margin), level, seed)
}

/// Every clustering figure estimated: transitivity and triangles and both averages to `margin`,
/// C(k) to `bin_margin` per bin, at `level` (see [`Margin`]).
pub fn sampled_stats(
    g: &Csr,
    margin: &Margin,
    bin_margin: &Margin,
    level: f64,
    seed: u64,
) -> ClusteringStats {
    let w = estimate_to(g, margin, level, seed);
    let a = average_clustering_to(g, margin, level, seed);
    ClusteringStats {
        triangles: w.triangles,
        wedges: crate::exact::clustering::wedge_total(g),
        transitivity: w.transitivity,
        average_zeros: a.average_zeros,
        average_deg2: a.average_deg2,
        by_degree: clustering_by_degree_to(g, bin_margin, level, seed),
    }
}

/// Samples needed for transitivity within ±`eps` at `level` (Hoeffding).
pub fn samples_for(eps: f64, level: f64) -> u64 {
    hoeffding_samples(eps, level)
}

/// Uniform integer in [0, bound) without modulo bias, for bounds beyond u64.
fn random_below(rng: &mut ChaCha8Rng, bound: u128) -> u128 {
    if bound <= u64::MAX as u128 {
        rng.random_range(0..bound as u64) as u128
    } else {
        loop {
            let x = ((rng.random::<u64>() as u128) << 64) | rng.random::<u64>() as u128;
            let zone = u128::MAX - u128::MAX % bound;
            if x < zone {
                return x % bound;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn grouped_draws_equal_their_plain_twin() {
        // A small-world ring and an attachment graph: short lists, hubs, closed and open wedges.
        for g in [
            crate::models::generate::watts_strogatz(400, 6, 0.2, 3),
            crate::models::generate::preferential_attachment(500, 4, 9),
        ] {
            let s = WedgeSampler::new(&g);
            for seed in 0..40u64 {
                let k = 1 + (seed as usize % GROUP);
                let (mut r1, mut r2) = (block_rng(seed, 0), block_rng(seed, 0));
                let pick = |rng: &mut ChaCha8Rng| s.pick(rng);
                assert_eq!(
                    closes_group(&g, &mut r1, k, &pick),
                    closes_group_naive(&g, &mut r2, k, &pick)
                );
            }
        }
    }

    use super::*;

    #[test]
    fn exact_on_extremes_and_same_on_any_thread_count() {
        // Complete graph: every wedge closes; a star: none does.
        let k: Vec<(u32, u32)> = (0..8)
            .flat_map(|a| (a + 1..8).map(move |b| (a, b)))
            .collect();
        let e = estimate(&Csr::from_edges(8, &k), 5000, 0.95, 1);
        assert_eq!(e.transitivity.value(), 1.0);
        assert!((e.triangles.value() - 56.0).abs() < 1e-9);
        let star: Vec<(u32, u32)> = (1..9).map(|i| (0, i)).collect();
        assert_eq!(
            estimate(&Csr::from_edges(9, &star), 5000, 0.95, 1).closed,
            0
        );
        let g = crate::models::generate::watts_strogatz(2000, 8, 0.1, 4);
        let one = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap()
            .install(|| estimate(&g, 50_000, 0.95, 9));
        assert_eq!(one, estimate(&g, 50_000, 0.95, 9));
    }

    #[test]
    fn degree_bins_match_the_exact_bins() {
        let g = crate::models::generate::preferential_attachment(3000, 3, 5);
        let t = crate::exact::triangles::count(&g);
        let exact =
            crate::exact::clustering::stats(&g, &t, &crate::exact::clustering::local(&g, &t))
                .by_degree;
        let est = clustering_by_degree(&g, 40_000, 0.95, 3);
        assert_eq!(exact.len(), est.len());
        for (x, e) in exact.iter().zip(&est) {
            assert_eq!((x.low, x.high, x.nodes), (e.low, e.high, e.nodes));
            // Hoeffding: 40,000 samples put each bin within ±0.0068 at 95%; allow 0.01.
            assert!(
                (x.mean.value() - e.mean.value()).abs() < 0.01,
                "{x:?} {e:?}"
            );
        }
    }

    /// The two-level search finds the centre a search of all the counts finds, for every
    /// wedge number at block edges and between them.
    #[test]
    fn two_level_search_equals_one_search() {
        let g = crate::models::generate::preferential_attachment(1000, 3, 2);
        let s = WedgeSampler::new(&g);
        let mut xs: Vec<u128> = s
            .cum
            .iter()
            .flat_map(|&c| [c.saturating_sub(1), c])
            .collect();
        xs.extend((0..5000u128).map(|i| i * s.wedges / 5000));
        for x in xs.into_iter().filter(|&x| x < s.wedges) {
            assert_eq!(s.centre(x), s.cum.partition_point(|&w| w <= x), "wedge {x}");
        }
    }
}

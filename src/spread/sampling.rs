//! Sampled clustering on the distributed profile: wedge sampling for transitivity (Seshadhri,
//! Pinar & Kolda, "Triadic measures on graphs: the power of wedge sampling", SDM 2013), uniform
//! node then uniform wedge for the average local clustering and each C(k) bin (the same
//! authors, Stat. Anal. Data Min. 7(4), 2014), with the single-machine profile's interval rules:
//! a Hoeffding-sized pilot, a second stage sized from the pilot to the margin, Wilson intervals.
//!
//! A uniform draw over all wedges needs one global order of the nodes, which no worker has.
//! Instead every node draws its own number of samples, Poisson with mean λ·w(v) (w its weight:
//! its wedges, or 1), from a generator seeded by its id: by Poisson splitting, the draws are
//! then independent uniform draws, Poisson(λ·W) in number, and given their number they are
//! exactly the single-machine sample's law, so the Wilson interval holds as it stands. Each
//! node's draws depend on its id and the seed only, so the figures are the same on any number
//! of processes.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Poisson};
use serde::{Deserialize, Serialize};

use super::exchange::{Parcel, Rounds};
use super::owned::{Owned, mix, owner};
use crate::estimate::wedges::{Margin, pair_below};
use crate::exact::clustering::wedges_at;

/// What a target's draws are spread over.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub(crate) enum Aim {
    /// Wedges: a node in proportion to C(d, 2) (transitivity).
    Wedges,
    /// Nodes of degree 2 and up, uniformly (average local clustering).
    Nodes,
    /// Nodes of the degree bin [2^(b+1), 2^(b+2) − 1], uniformly (C(k)).
    Bin(u8),
}

/// One sampled figure: over what, and on which nodes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub(crate) struct Target {
    pub(crate) aim: Aim,
    /// Only the giant component's nodes (for the small-world comparison).
    pub(crate) giant_only: bool,
}

/// A target's totals over all workers (the same on each).
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub(crate) struct Count {
    /// Total weight: wedges, or nodes.
    pub(crate) weight: u128,
    pub(crate) closed: u64,
    pub(crate) samples: u64,
}

/// Every target's totals, in `targets` order.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub(crate) struct Sampled {
    pub(crate) targets: Vec<Target>,
    pub(crate) counts: Vec<Count>,
    pub(crate) rounds: u64,
}

impl Target {
    fn weight(&self, d: u32, in_giant: bool) -> u128 {
        if d < 2 || (self.giant_only && !in_giant) {
            return 0;
        }
        match self.aim {
            Aim::Wedges => wedges_at(d),
            Aim::Nodes => 1,
            Aim::Bin(b) => u128::from(bin_of(d) == b),
        }
    }
}

/// The C(k) bin of degree `d` >= 2, as the single-machine estimator numbers them.
pub(crate) fn bin_of(d: u32) -> u8 {
    (31 - d.leading_zeros()) as u8 - 1
}

/// Draws of node `id` for one target and stage: Poisson with mean `mu`. Small means invert a
/// hash of the id (no generator is set up for the many nodes that draw nothing); large ones
/// use the node's own generator.
fn draws(mu: f64, id: u64, stream: u64, seed: u64, rng: &mut Option<ChaCha8Rng>) -> u64 {
    if mu <= 0.0 {
        return 0;
    }
    if mu < 30.0 {
        let u = (mix(mix(seed ^ stream.rotate_left(32)) ^ id) >> 11) as f64 / (1u64 << 53) as f64;
        let mut p = (-mu).exp();
        let (mut k, mut cdf) = (0u64, p);
        while u >= cdf && p > 0.0 {
            k += 1;
            p *= mu / k as f64;
            cdf += p;
        }
        return k;
    }
    let r = rng.get_or_insert_with(|| node_rng(id, stream, seed));
    Poisson::new(mu).map_or(0, |d| d.sample(r) as u64)
}

fn node_rng(id: u64, stream: u64, seed: u64) -> ChaCha8Rng {
    let mut r = ChaCha8Rng::seed_from_u64(mix(seed) ^ mix(id.wrapping_add(0x5EED)));
    r.set_stream(stream);
    r
}

/// One stage: every node draws, for each target with a positive rate `rate[t]` (samples per
/// unit weight), its Poisson share of pairs of its neighbours, sent to the owner of the pair's
/// first end to check the closing edge. Returns (closed, samples) per target, summed over all.
#[allow(clippy::too_many_arguments)]
fn stage(
    x: &mut Rounds,
    owned: &Owned,
    in_giant: &[bool],
    targets: &[Target],
    rate: &[f64],
    stage: u64,
    seed: u64,
) -> Vec<(u64, u64)> {
    let peers = x.peers();
    let mut out: Vec<Vec<(u32, u64, u16)>> = vec![Vec::new(); peers];
    let mut samples = vec![0u64; targets.len()];
    for (i, &giant) in in_giant.iter().enumerate() {
        let d = owned.degree(i);
        if d < 2 {
            continue;
        }
        let id = owned.nodes[i];
        let base = owned.offsets[i];
        for (t, target) in targets.iter().enumerate() {
            let w = target.weight(d, giant);
            if w == 0 || rate[t] <= 0.0 {
                continue;
            }
            let stream = (t as u64) << 2 | stage;
            let mut rng = None;
            let k = draws(rate[t] * w as f64, id, stream, seed, &mut rng);
            if k == 0 {
                continue;
            }
            let r = rng.get_or_insert_with(|| node_rng(id, stream, seed));
            for _ in 0..k {
                let (a, b) = pair_below(r, d);
                let (a, b) = (base + a as usize, base + b as usize);
                let first = owned.targets[a];
                out[owner(first, peers)].push((owned.target_slots[a], owned.targets[b], t as u16));
            }
            samples[t] += k;
        }
    }
    let mut closed = vec![0u64; targets.len()];
    for p in x.round(out, Parcel::Queries) {
        if let Parcel::Queries(v) = p {
            for (slot, far, t) in v {
                if owned.neighbours(slot as usize).binary_search(&far).is_ok() {
                    closed[t as usize] += 1;
                }
            }
        }
    }
    let mine: Vec<u128> = closed
        .iter()
        .zip(&samples)
        .flat_map(|(&c, &s)| [c as u128, s as u128])
        .collect();
    x.all_sum(mine)
        .chunks(2)
        .map(|c| (c[0] as u64, c[1] as u64))
        .collect()
}

/// Sample every target to its margin (`bin_margin` for the C(k) bins): a pilot, then the
/// draws the pilot says the margin needs. Every worker returns the same totals.
#[allow(clippy::too_many_arguments)]
pub(crate) fn run(
    x: &mut Rounds,
    owned: &Owned,
    in_giant: &[bool],
    targets: Vec<Target>,
    margin: &Margin,
    bin_margin: &Margin,
    level: f64,
    seed: u64,
) -> Sampled {
    let mut weight = vec![0u128; targets.len()];
    for (i, &giant) in in_giant.iter().enumerate() {
        let d = owned.degree(i);
        for (t, target) in targets.iter().enumerate() {
            weight[t] += target.weight(d, giant);
        }
    }
    let weight = x.all_sum(weight);
    let margin_of = |t: &Target| match t.aim {
        Aim::Bin(_) => bin_margin,
        _ => margin,
    };
    let pilot: Vec<u64> = targets.iter().map(|t| margin_of(t).pilot(level)).collect();
    let rate: Vec<f64> = pilot
        .iter()
        .zip(&weight)
        .map(|(&p, &w)| if w == 0 { 0.0 } else { p as f64 / w as f64 })
        .collect();
    let first = stage(x, owned, in_giant, &targets, &rate, 0, seed);
    let more: Vec<f64> = targets
        .iter()
        .enumerate()
        .map(|(t, target)| {
            let (closed, drawn) = first[t];
            let want = margin_of(target).samples_after_pilot(closed, drawn, level);
            if weight[t] == 0 || want <= drawn {
                0.0
            } else {
                (want - drawn) as f64 / weight[t] as f64
            }
        })
        .collect();
    // The weights' sum, then each stage's draws and their sum.
    let mut rounds = 3;
    let second = if more.iter().any(|&r| r > 0.0) {
        rounds += 2;
        stage(x, owned, in_giant, &targets, &more, 1, seed)
    } else {
        vec![(0, 0); targets.len()]
    };
    let counts = (0..targets.len())
        .map(|t| {
            if weight[t] == 0 {
                // Nothing to draw from: the sample size the single-machine profile reports.
                Count {
                    weight: 0,
                    closed: 0,
                    samples: pilot[t],
                }
            } else {
                Count {
                    weight: weight[t],
                    closed: first[t].0 + second[t].0,
                    samples: first[t].1 + second[t].1,
                }
            }
        })
        .collect();
    Sampled {
        targets,
        counts,
        rounds,
    }
}

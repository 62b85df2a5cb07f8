//! The distance group: on the giant component, the diameter (double sweep, then iFUB within its
//! own budget, or exact from all-pairs distances), and the mean distance, distribution and
//! effective diameter, exact by bit-parallel all-pairs BFS when the planner predicts it fits the
//! budget, else estimated by BFS from sampled sources (Eppstein & Wang, J. Graph Algorithms
//! Appl. 8(1) 2004) or HyperBall (Boldi, Rosa & Vigna, WWW 2011), whichever is predicted cheaper.
//! Diameter bounds: Magnien, Latapy & Habib (ACM JEA 2009); iFUB: Crescenzi, Grossi, Habib,
//! Lanzi & Marino (Theor. Comput. Sci. 514, 2013).

use crate::error::ParamError;
use crate::estimate::distance as sampled;
use crate::estimate::hyperball::{self, BallOptions};
use crate::exact::components::{self, Components};
use crate::exact::cost::{all_pairs_work, ball_work, bfs_work, seconds};
use crate::exact::diameter;
use crate::exact::distances::{self, DistanceStats};
use crate::figure::Figure;
use crate::profile::clock::Clock;
use crate::profile::plan::{Choice, Decision, DistanceEstimator, Group, decide, secs, why};
use crate::profile::{DiameterFigures, Distances, EstimatedDistances, ProfileOptions};
use crate::store::csr::Csr;
use crate::store::intake::StageName;

/// The giant component as a graph of its own, with its nodes' own dense indices.
pub(crate) struct GiantComponent<'a> {
    /// The subgraph, indexed 0..k.
    pub(crate) csr: SubGraph<'a>,
}

/// The whole graph when it is connected (no copy: at a billion edges a copy is 8.8 GB, and the
/// indices are the whole graph's), else the induced subgraph and its nodes' whole-graph indices.
pub(crate) enum SubGraph<'a> {
    Whole(&'a Csr),
    Induced {
        csr: Csr,
        /// `whole_index[local]` is that node's index in the whole graph.
        whole_index: Vec<u32>,
    },
}

impl std::ops::Deref for SubGraph<'_> {
    type Target = Csr;
    fn deref(&self) -> &Csr {
        match self {
            SubGraph::Whole(c) => c,
            SubGraph::Induced { csr, .. } => csr,
        }
    }
}

impl GiantComponent<'_> {
    /// The whole graph's index of the giant component's node `local`.
    pub(crate) fn whole(&self, local: u32) -> usize {
        match &self.csr {
            SubGraph::Whole(_) => local as usize,
            SubGraph::Induced { whole_index, .. } => whole_index[local as usize] as usize,
        }
    }
}

/// What the distance group found.
pub(crate) struct DistanceOutcome<'a> {
    pub(crate) node_set: String,
    pub(crate) diameter: Option<DiameterFigures>,
    pub(crate) distances: Distances,
    pub(crate) decision: Option<Decision>,
    /// The giant component, when it has a pair to measure.
    pub(crate) giant: Option<GiantComponent<'a>>,
}

/// Which nodes the distance figures are on, in words.
pub(crate) fn node_set(comps: &Components, n: usize, giant: usize) -> String {
    if comps.sizes.len() <= 1 {
        "whole graph (connected)".to_string()
    } else {
        format!("giant component ({giant} of {n} nodes)")
    }
}

/// Ordered pairs of distinct nodes in different components.
fn unreachable_pairs(comps: &Components, n: usize) -> u64 {
    let all = n as u128 * (n as u128).saturating_sub(1);
    let within: u128 = comps
        .sizes
        .iter()
        .map(|&(_, s)| s as u128 * (s as u128).saturating_sub(1))
        .sum();
    (all - within) as u64
}

/// The distance group's one entry point: decides exact or estimated and returns the figures;
/// eccentricities found on the way are written into `eccentricity` (whole-graph indices).
pub(crate) fn run<'a>(
    csr: &'a Csr,
    comps: &Components,
    opts: &ProfileOptions,
    clock: &mut Clock,
    eccentricity: &mut [Option<u32>],
) -> DistanceOutcome<'a> {
    let n = csr.node_count();
    let giant_size = comps.giant_size();
    let node_set = node_set(comps, n, giant_size);
    if giant_size < 2 {
        return DistanceOutcome {
            node_set,
            diameter: None,
            distances: Distances::Empty,
            decision: None,
            giant: None,
        };
    }
    let giant = GiantComponent {
        csr: if giant_size == n {
            SubGraph::Whole(csr)
        } else {
            let whole_index = comps.giant_nodes();
            SubGraph::Induced {
                csr: components::induced(csr, &whole_index),
                whole_index,
            }
        },
    };
    let unreachable = unreachable_pairs(comps, n);
    let sub = &giant.csr;
    let (sn, sm) = (sub.node_count() as u64, sub.edge_count());
    clock.start(StageName::Diameter);
    let sweep = diameter::sweep(sub);
    let sweep_bound = sweep.lower;
    let levels = sweep.lower as u64;
    let ap_secs = seconds(
        all_pairs_work(sn, sm, levels),
        opts.rates.bfs_words,
        opts.threads,
    );
    let all = decide(opts.distances, ap_secs, opts.exact_seconds);
    // The diameter search has its own, smaller budget: on real-world graphs iFUB needs a few
    // searches, and where it needs many (homogeneous random graphs) certain bounds serve.
    let word_budget = opts.diameter_seconds * opts.rates.bfs_words * opts.threads as f64;
    let search = (!all).then(|| diameter::ifub(sub, sweep, word_budget));
    clock.done(StageName::Diameter);
    let (distances, decision) = if all {
        clock.start(StageName::AllPairsDistances);
        let ap = distances::all_pairs(sub);
        for (local, &e) in ap.eccentricity.iter().enumerate() {
            eccentricity[giant.whole(local as u32)] = Some(e);
        }
        let stats = DistanceStats::from_all_pairs(&ap, &node_set, unreachable);
        clock.done(StageName::AllPairsDistances);
        let decision = Decision {
            group: Group::Distances,
            method: "exact: all-pairs bit-parallel BFS".into(),
            exact_seconds: ap_secs,
            predicted_seconds: Some(ap_secs),
            budget_seconds: (opts.distances == Choice::Auto).then_some(opts.exact_seconds),
            reason: why(
                opts.distances,
                true,
                "all-pairs BFS",
                ap_secs,
                opts.exact_seconds,
            ),
        };
        (Distances::Exact(Box::new(stats)), decision)
    } else {
        let on = Giant {
            csr: sub,
            node_set: &node_set,
            unreachable,
            levels,
        };
        let (est, decision) = estimate_distances(&on, opts, clock, ap_secs);
        (Distances::Estimated(Box::new(est)), decision)
    };
    let diameter = match (&distances, search) {
        (Distances::Exact(s), _) => DiameterFigures {
            diameter: s.diameter.clone(),
            double_sweep_bound: sweep_bound,
            bfs_runs: 3 + s.nodes,
        },
        (_, Some(mut d)) => {
            for &(local, e) in &d.known {
                eccentricity[giant.whole(local)] = Some(e);
            }
            // The sampled sources' farthest distance is an eccentricity too: a lower bound.
            if let Distances::Estimated(e) = &distances {
                d.lower = d.lower.max(e.distribution.len() as u32).min(d.upper);
            }
            DiameterFigures {
                diameter: if d.is_exact() {
                    Figure::exact(
                        d.lower as f64,
                        "double sweep + iFUB (Crescenzi et al. 2013)",
                    )
                } else {
                    Figure::bounds(
                        d.lower as f64,
                        d.upper as f64,
                        "double sweep, iFUB stopped at the time budget, and the sampled \
                         sources' eccentricities",
                    )
                },
                double_sweep_bound: d.double_sweep_bound,
                bfs_runs: d.bfs_runs,
            }
        }
        (_, None) => unreachable!("iFUB runs whenever all-pairs does not"),
    };
    DistanceOutcome {
        node_set,
        diameter: Some(diameter),
        distances,
        decision: Some(decision),
        giant: Some(giant),
    }
}

/// The connected node set distances are measured on, for the estimators.
struct Giant<'a> {
    csr: &'a Csr,
    node_set: &'a str,
    /// Ordered pairs of the whole graph in different components.
    unreachable: u64,
    /// BFS levels to expect (the double-sweep bound).
    levels: u64,
}

/// How an estimator ran: the figures it gives and how it describes itself.
struct Estimated {
    mean: Figure,
    effective_diameter: Figure,
    distribution: Vec<Figure>,
    sources: Option<u64>,
    registers: Option<u32>,
    counter_rse: Option<f64>,
    method: String,
}

/// Bytes a HyperBall run holds: its two register arrays plus about 10 bytes per node of
/// per-node state (estimates, change flags).
fn ball_memory(n: u64, log2_registers: u8) -> u64 {
    crate::estimate::hyperball::memory_bytes(n as usize, log2_registers) + 10 * n
}

/// Whether `bytes` fit in 90% of the memory available now (unknown availability: assume so).
fn fits(bytes: u64, available: Option<u64>) -> bool {
    available.is_none_or(|a| bytes <= a / 10 * 9)
}

/// Distances of the connected `sub` by the sampled-source or HyperBall estimator, whichever the
/// options ask for or is predicted cheaper for the requested precision.
fn estimate_distances(
    giant: &Giant,
    opts: &ProfileOptions,
    clock: &mut Clock,
    ap_secs: f64,
) -> (EstimatedDistances, Decision) {
    let sub = giant.csr;
    let (sn, sm) = (sub.node_count() as u64, sub.edge_count());
    let registers = 1u64 << opts.ball.log2_registers;
    // HyperBall runs about as many rounds as the diameter, of which the sweep gives a bound.
    let ball_secs = seconds(
        ball_work(
            sn,
            sm,
            registers,
            giant.levels + 1,
            opts.ball.repeats as u64,
        ),
        opts.rates.ball_bytes,
        opts.threads,
    );
    // HyperBall's two register arrays must fit beside the graph: the planner never picks it
    // into an out-of-memory kill (at 1e8 nodes they take 12.8 GB).
    let ball_bytes = ball_memory(sn, opts.ball.log2_registers);
    let available = crate::store::limits::available_memory();
    let ball_fits = fits(ball_bytes, available);
    let mut pilot = None;
    let use_ball = match opts.distance_estimator {
        DistanceEstimator::Ball => true,
        DistanceEstimator::Sources => false,
        DistanceEstimator::Cheaper => {
            clock.start(StageName::SampledDistances);
            let started = std::time::Instant::now();
            let p = sampled::pilot(sub, opts.level, opts.max_sources, opts.seed);
            // The pilot is the probe: its own time, scaled by the sources still to come, predicts
            // this machine and graph better than any constant rate (the levels each batch walks
            // vary with the sources drawn).
            let pilot_time = started.elapsed().as_secs_f64();
            let k = p.sources_needed(opts.distance_tolerance, opts.level) as u64;
            let done = p.sources_done() as u64;
            let src_secs = if pilot_time > 0.0 && done > 0 {
                pilot_time * k.div_ceil(sampled::BATCH as u64) as f64
                    / done.div_ceil(sampled::BATCH as u64) as f64
            } else {
                seconds(
                    bfs_work(k, sn, sm, giant.levels),
                    opts.rates.bfs_words,
                    opts.threads,
                )
            };
            pilot = Some((p, src_secs));
            ball_secs < src_secs && ball_fits
        }
    };
    let mut reason = why(
        opts.distances,
        false,
        "all-pairs BFS",
        ap_secs,
        opts.exact_seconds,
    );
    if let Some((_, src_secs)) = &pilot {
        let ((chosen, chosen_secs), (rival, rival_secs)) = if use_ball {
            (("HyperBall", ball_secs), ("sampled sources", *src_secs))
        } else {
            (("sampled sources", *src_secs), ("HyperBall", ball_secs))
        };
        reason += &format!(
            "; {chosen} predicted {} against {} for {rival}",
            secs(chosen_secs),
            secs(rival_secs)
        );
        if !ball_fits {
            reason += &format!(
                " (HyperBall's registers, {:.1} GiB, would not fit the {:.1} GiB of memory \
                 available)",
                ball_bytes as f64 / (1u64 << 30) as f64,
                available.unwrap_or(0) as f64 / (1u64 << 30) as f64
            );
        }
    }
    let pilot_secs = pilot.as_ref().map(|(_, s)| *s);
    let ball = if use_ball {
        by_ball(sub, opts, clock)
    } else {
        Ok(None)
    };
    let e = match ball {
        Ok(Some(e)) => e,
        Ok(None) => by_sources(sub, pilot.map(|(p, _)| p), opts, clock),
        Err(refused) => {
            // Options a library caller set out of range: say so and measure another way.
            clock.done(StageName::HyperBall);
            reason += &format!("; HyperBall refused its options ({refused}), sampled sources ran");
            by_sources(sub, None, opts, clock)
        }
    };
    let est = EstimatedDistances {
        node_set: giant.node_set.to_string(),
        nodes: sn,
        mean: e.mean,
        effective_diameter: e.effective_diameter,
        distribution: e.distribution,
        unreachable_pairs_in_graph: giant.unreachable,
        sources: e.sources,
        registers: e.registers,
        counter_rse: e.counter_rse,
    };
    let decision = Decision {
        group: Group::Distances,
        method: e.method,
        exact_seconds: ap_secs,
        predicted_seconds: match (&pilot_secs, use_ball) {
            (_, true) => Some(ball_secs),
            (Some(s), false) => Some(*s),
            (None, false) => None,
        },
        budget_seconds: (opts.distances == Choice::Auto).then_some(opts.exact_seconds),
        reason,
    };
    (est, decision)
}

/// HyperBall with independent hash seeds, jackknife intervals; an error when the options are
/// out of range.
fn by_ball(
    sub: &Csr,
    opts: &ProfileOptions,
    clock: &mut Clock,
) -> Result<Option<Estimated>, ParamError> {
    clock.start(StageName::HyperBall);
    let ball = BallOptions {
        level: opts.level,
        seed: opts.seed,
        ..opts.ball
    };
    let e = hyperball::estimate(sub, &ball, &|_| clock.progress.advance(1))?;
    clock.done(StageName::HyperBall);
    Ok(Some(Estimated {
        method: format!(
            "HyperBall, {} registers per node × {} hash seeds (each counter ±{:.1}% relative \
             standard error)",
            e.registers,
            opts.ball.repeats,
            100.0 * e.counter_rse
        ),
        mean: e.mean,
        effective_diameter: e.effective_diameter,
        distribution: e.distribution,
        sources: None,
        registers: Some(e.registers),
        counter_rse: Some(e.counter_rse),
    }))
}

/// BFS from sampled sources to the requested margin, finishing the planner's pilot if it ran.
fn by_sources(
    sub: &Csr,
    pilot: Option<sampled::Pilot>,
    opts: &ProfileOptions,
    clock: &mut Clock,
) -> Estimated {
    let e = match pilot {
        Some(p) => p.finish(sub, opts.distance_tolerance, opts.level, opts.seed),
        None => {
            clock.start(StageName::SampledDistances);
            sampled::estimate_to_precision(
                sub,
                opts.distance_tolerance,
                opts.level,
                opts.max_sources,
                opts.seed,
            )
        }
    };
    clock.done(StageName::SampledDistances);
    Estimated {
        method: format!(
            "BFS from {} sampled sources, to ±{}% of the mean at {}%",
            e.sources,
            100.0 * opts.distance_tolerance,
            100.0 * opts.level
        ),
        mean: e.mean,
        effective_diameter: e.effective_diameter,
        distribution: e.distribution,
        sources: Some(e.sources),
        registers: None,
        counter_rse: None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hyperball_is_not_planned_beyond_the_memory_available() {
        // 1e8 nodes with 64 registers: two arrays of 6.4 GB plus per-node state (arithmetic).
        let bytes = ball_memory(100_000_000, 6);
        assert_eq!(bytes, 13_800_000_000);
        assert!(!fits(bytes, Some(8 << 30)));
        assert!(fits(bytes, Some(24 << 30)));
        assert!(fits(bytes, None));
    }
}

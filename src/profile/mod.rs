//! The structure profile of a loaded graph: degrees and components (always exact), clustering
//! and distances on the giant component, each exact when the planner predicts it fits the time
//! budget and estimated with intervals otherwise.

pub mod plan;
pub mod report;

use std::time::Instant;

use serde::{Deserialize, Serialize};

use crate::estimate::hyperball::{self, BallOptions};
use crate::estimate::{distance as sampled, wedges};
use crate::exact::clustering::{self, ClusteringStats};
use crate::exact::components::{self, ComponentStats};
use crate::exact::cost::{
    self, REFERENCE_RATES, Rates, all_pairs_work, ball_work, bfs_work, seconds,
};
use crate::exact::degrees::{self, DegreeStats};
use crate::exact::diameter;
use crate::exact::distances::{self, DistanceStats};
use crate::exact::triangles;
use crate::figure::Figure;
use crate::models::measure::{Measure, measure_reference};
use crate::models::smallworld::{self, Observed, SmallWorld};
pub use crate::profile::plan::{Choice, Decision, DistanceEstimator};
use crate::progress::{Progress, Unit};
use crate::store::csr::Csr;
use crate::store::graph::Graph;
use crate::store::intake::{Intake, Stage};

#[derive(Debug, Clone)]
pub struct ProfileOptions {
    /// Seconds an exact method may be predicted to take before the planner estimates instead.
    pub exact_seconds: f64,
    /// Seconds the exact diameter search (iFUB) may take when all-pairs distances do not run;
    /// beyond it the diameter is given as certain bounds.
    pub diameter_seconds: f64,
    /// Exact or estimated clustering (auto: by the budget).
    pub clustering: Choice,
    /// Exact or estimated distances (auto: by the budget).
    pub distances: Choice,
    /// Which estimator estimates distances.
    pub distance_estimator: DistanceEstimator,
    /// Half-width of the transitivity and average-clustering intervals when estimated.
    pub clustering_tolerance: f64,
    /// Half-width of each C(k) bin's interval when estimated.
    pub bin_tolerance: f64,
    /// Half-width of the mean-distance interval, relative to the mean, when estimated.
    pub distance_tolerance: f64,
    /// Most BFS sources the distance estimate may use.
    pub max_sources: usize,
    /// HyperBall registers (log2) and repetitions, when it runs.
    pub ball: BallOptions,
    /// Confidence level of every interval.
    pub level: f64,
    /// Seed of every random choice.
    pub seed: u64,
    /// Sampled reference graphs of each kind (random G(n,m), degree-preserving) for the
    /// small-world comparison; `None` = as many as fit the time budget (4 or none).
    pub reference_graphs: Option<usize>,
    /// Attempted double-edge swaps per edge when making degree-preserving references.
    pub swaps_per_edge: f64,
    /// Which figure groups to compute.
    pub groups: Groups,
    /// Threads the cost predictions assume (default: the pool's).
    pub threads: usize,
    pub rates: Rates,
}

impl ProfileOptions {
    /// The settings reference graphs are measured with.
    pub fn measure(&self) -> Measure {
        Measure {
            threads: self.threads,
            rates: self.rates,
            exact_seconds: self.exact_seconds,
            clustering_tolerance: self.clustering_tolerance,
            distance_tolerance: self.distance_tolerance,
            level: self.level,
            max_sources: self.max_sources,
        }
    }
}

impl Default for ProfileOptions {
    fn default() -> Self {
        ProfileOptions {
            exact_seconds: DEFAULT_EXACT_SECONDS,
            diameter_seconds: DEFAULT_DIAMETER_SECONDS,
            clustering: Choice::Auto,
            distances: Choice::Auto,
            distance_estimator: DistanceEstimator::Cheaper,
            clustering_tolerance: 0.002,
            bin_tolerance: 0.01,
            distance_tolerance: 0.01,
            max_sources: 4096,
            ball: BallOptions::default(),
            level: 0.95,
            seed: 1,
            reference_graphs: None,
            swaps_per_edge: 2.0,
            groups: Groups::default(),
            threads: rayon::current_num_threads(),
            rates: REFERENCE_RATES,
        }
    }
}

/// The figure groups beyond size, degrees and components (which are always computed: they cost a
/// pass over the adjacency). The small-world comparison needs clustering and distances, so asking
/// for it computes them too.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Groups {
    pub clustering: bool,
    pub distances: bool,
    pub small_world: bool,
}

impl Default for Groups {
    fn default() -> Self {
        Groups {
            clustering: true,
            distances: true,
            small_world: true,
        }
    }
}

impl Groups {
    /// The groups actually run: small-world brings in what it needs.
    pub fn effective(self) -> Groups {
        Groups {
            clustering: self.clustering || self.small_world,
            distances: self.distances || self.small_world,
            small_world: self.small_world,
        }
    }
}

/// Default time for the exact diameter search.
pub const DEFAULT_DIAMETER_SECONDS: f64 = 1.0;

/// Default time for each exact figure group.
pub const DEFAULT_EXACT_SECONDS: f64 = 20.0;

/// The diameter of the node set distances are reported on.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct DiameterFigures {
    pub diameter: Figure,
    /// The double-sweep lower bound.
    pub double_sweep_bound: u32,
    /// Breadth-first searches behind the figure (all-pairs: one per node, plus the sweep).
    pub bfs_runs: u64,
}

/// Distance figures estimated on a connected node set.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct EstimatedDistances {
    pub node_set: String,
    pub nodes: u64,
    pub mean: Figure,
    /// 90th-percentile distance, interpolated, self pairs excluded.
    pub effective_diameter: Figure,
    /// Share of ordered pairs at distance d = 1, 2, … (index 0 is distance 1).
    pub distribution: Vec<Figure>,
    /// Ordered pairs of distinct nodes of the whole graph that cannot reach each other (exact,
    /// from the components).
    pub unreachable_pairs_in_graph: u64,
    /// BFS sources used (sampled sources), if that estimator ran.
    pub sources: Option<u64>,
    /// Registers per counter and each counter's relative standard error, if HyperBall ran.
    pub registers: Option<u32>,
    pub counter_rse: Option<f64>,
}

/// The distance figures, exact or estimated.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(tag = "status", rename_all = "kebab-case")]
pub enum Distances {
    Exact(Box<DistanceStats>),
    Estimated(Box<EstimatedDistances>),
    /// No pairs to measure (no edges).
    Empty,
    /// Distances were not asked for.
    NotRequested,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Profile {
    pub intake: Intake,
    pub degrees: DegreeStats,
    pub components: ComponentStats,
    /// `None` when clustering was not asked for.
    pub clustering: Option<ClusteringStats>,
    /// Node set for the distance figures.
    pub distance_node_set: String,
    pub diameter: Option<DiameterFigures>,
    pub distances: Distances,
    /// sigma, omega and small-world propensity against random and lattice references.
    pub small_world: Option<SmallWorld>,
    /// Which method ran for each figure group, and why.
    pub plan: Vec<Decision>,
    pub stages: Vec<Stage>,
}

/// Per-node results, indexed by dense node index.
#[derive(Debug, Clone)]
pub struct NodeTable {
    /// Per-node triangles and local clustering, when clustering was exact.
    pub triangles: Option<Vec<u64>>,
    pub clustering: Option<Vec<f64>>,
    /// Component rank: 1 = the giant component, then by size.
    pub component: Vec<u32>,
    /// Eccentricity within the component, where it was computed.
    pub eccentricity: Vec<Option<u32>>,
}

struct Clock<'a> {
    at: Instant,
    stages: Vec<Stage>,
    progress: &'a dyn Progress,
}

impl Clock<'_> {
    fn start(&mut self, name: &str) {
        self.progress.stage(name, None, Unit::Items);
        self.at = Instant::now();
    }
    fn done(&mut self, name: &str) {
        self.stages.push(Stage {
            name: name.to_string(),
            seconds: self.at.elapsed().as_secs_f64(),
        });
        self.progress.finish();
    }
}

/// Decide exact or estimate for one group: the user's choice, or exact when its predicted time
/// fits the budget.
fn decide(choice: Choice, predicted: f64, budget: f64) -> bool {
    match choice {
        Choice::Exact => true,
        Choice::Estimate => false,
        Choice::Auto => predicted <= budget,
    }
}

fn why(choice: Choice, exact: bool, what: &str, predicted: f64, budget: f64) -> String {
    match (choice, exact) {
        (Choice::Auto, true) => format!(
            "exact {what} predicted {} on this machine, within the {} budget",
            secs(predicted),
            secs(budget)
        ),
        (Choice::Auto, false) => format!(
            "exact {what} predicted {}, over the {} budget",
            secs(predicted),
            secs(budget)
        ),
        _ => format!(
            "chosen by the user (exact {what} predicted {})",
            secs(predicted)
        ),
    }
}

fn secs(s: f64) -> String {
    if s < 1.0 {
        format!("{s:.2} s")
    } else if s < 100.0 {
        format!("{s:.1} s")
    } else {
        format!("{s:.2e} s")
    }
}

pub fn profile(g: &Graph, opts: &ProfileOptions, progress: &dyn Progress) -> (Profile, NodeTable) {
    let csr = &g.csr;
    let n = csr.node_count();
    let threads = opts.threads;
    let budget = opts.exact_seconds;
    let groups = opts.groups.effective();
    let user_budget = |c: Choice| (c == Choice::Auto).then_some(budget);
    let mut plan = Vec::new();
    let mut clock = Clock {
        at: Instant::now(),
        stages: Vec::new(),
        progress,
    };
    clock.start("degrees");
    let degrees = degrees::degree_stats(csr);
    clock.done("degrees");

    clock.start("components");
    let comps = components::components(csr);
    let component_stats = comps.stats(csr);
    let mut rank = vec![0u32; n];
    for (r, &(label, _)) in comps.sizes.iter().enumerate() {
        rank[label as usize] = r as u32 + 1;
    }
    let component: Vec<u32> = comps.label.iter().map(|&l| rank[l as usize]).collect();
    clock.done("components");

    let tri_secs = seconds(cost::triangle_work(csr), opts.rates.triangle, threads);
    let exact_clustering = decide(opts.clustering, tri_secs, budget);
    let (clustering, tri_per_node, local) = if !groups.clustering {
        (None, None, None)
    } else if exact_clustering {
        clock.start("triangles");
        let tri = triangles::count(csr);
        let local = clustering::local(csr, &tri);
        let stats = clustering::stats(csr, &tri, &local);
        clock.done("triangles");
        (Some(stats), Some(tri.per_node), Some(local))
    } else {
        clock.start("sampled clustering");
        let stats = wedges::sampled_stats(
            csr,
            opts.clustering_tolerance,
            opts.bin_tolerance,
            opts.level,
            opts.seed,
        );
        clock.done("sampled clustering");
        (Some(stats), None, None)
    };
    if groups.clustering {
        plan.push(Decision {
            group: "clustering".into(),
            method: if exact_clustering {
                "exact: forward triangle listing".into()
            } else {
                format!(
                    "wedge sampling to ±{} (C(k) bins to ±{}) at {}%",
                    opts.clustering_tolerance,
                    opts.bin_tolerance,
                    100.0 * opts.level
                )
            },
            exact_seconds: tri_secs,
            budget_seconds: user_budget(opts.clustering),
            reason: why(
                opts.clustering,
                exact_clustering,
                "triangle listing",
                tri_secs,
                budget,
            ),
        });
    }

    let mut eccentricity = vec![None; n];
    let giant = comps.giant_nodes();
    let node_set = if comps.sizes.len() <= 1 {
        "whole graph (connected)".to_string()
    } else {
        format!("giant component ({} of {} nodes)", giant.len(), n)
    };
    let unreachable: u64 = {
        let all = n as u128 * (n as u128).saturating_sub(1);
        let within: u128 = comps
            .sizes
            .iter()
            .map(|&(_, s)| s as u128 * (s as u128).saturating_sub(1))
            .sum();
        (all - within) as u64
    };
    let (diameter, distances, sub) = if !groups.distances {
        (None, Distances::NotRequested, None)
    } else if giant.len() < 2 {
        (None, Distances::Empty, None)
    } else {
        let sub = components::induced(csr, &giant);
        let (sn, sm) = (sub.node_count() as u64, sub.edge_count());
        clock.start("diameter");
        let sweep = diameter::sweep(&sub);
        let sweep_bound = sweep.lower;
        let levels = sweep.lower as u64;
        let ap_secs = seconds(
            all_pairs_work(sn, sm, levels),
            opts.rates.bfs_words,
            threads,
        );
        let all = decide(opts.distances, ap_secs, budget);
        // The diameter search has its own, smaller budget: on real-world graphs iFUB needs a few
        // searches, and where it needs many (homogeneous random graphs) certain bounds serve.
        let word_budget = opts.diameter_seconds * opts.rates.bfs_words * threads as f64;
        let d = if all {
            None
        } else {
            Some(diameter::ifub(&sub, sweep, word_budget))
        };
        clock.done("diameter");
        let dist = if all {
            clock.start("all-pairs distances");
            let ap = distances::all_pairs(&sub);
            for (i, &e) in ap.eccentricity.iter().enumerate() {
                eccentricity[giant[i] as usize] = Some(e);
            }
            let stats = DistanceStats::from_all_pairs(&ap, &node_set, unreachable);
            clock.done("all-pairs distances");
            plan.push(Decision {
                group: "distances".into(),
                method: "exact: all-pairs bit-parallel BFS".into(),
                exact_seconds: ap_secs,
                budget_seconds: user_budget(opts.distances),
                reason: why(opts.distances, true, "all-pairs BFS", ap_secs, budget),
            });
            Distances::Exact(Box::new(stats))
        } else {
            let (est, decision) = estimate_distances(
                &Giant {
                    csr: &sub,
                    node_set: &node_set,
                    unreachable,
                    levels,
                },
                opts,
                progress,
                &mut clock,
                ap_secs,
            );
            plan.push(decision);
            Distances::Estimated(Box::new(est))
        };
        let figures = match (&dist, d) {
            (Distances::Exact(s), _) => DiameterFigures {
                diameter: s.diameter.clone(),
                double_sweep_bound: sweep_bound,
                bfs_runs: 3 + s.nodes,
            },
            (dist, Some(mut d)) => {
                for &(v, e) in &d.known {
                    eccentricity[giant[v as usize] as usize] = Some(e);
                }
                // The sampled sources' farthest distance is an eccentricity too: a lower bound.
                if let Distances::Estimated(e) = dist {
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
            _ => unreachable!("iFUB runs whenever all-pairs does not"),
        };
        (Some(figures), dist, Some(sub))
    };
    let small_world = match (&sub, &distances, &clustering) {
        (Some(sub), Distances::Exact(_) | Distances::Estimated(_), Some(clustering))
            if groups.small_world && sub.edge_count() > 0 =>
        {
            let observed = observed_on_giant(
                sub,
                &giant,
                n,
                clustering,
                tri_per_node.as_deref().zip(local.as_deref()),
                &distances,
                opts,
            );
            Some(small_world(
                sub, observed, opts, &mut clock, &mut plan, &node_set,
            ))
        }
        _ => None,
    };
    let profile = Profile {
        intake: g.intake.clone(),
        degrees,
        components: component_stats,
        clustering,
        distance_node_set: node_set,
        diameter,
        distances,
        small_world,
        plan,
        stages: clock.stages,
    };
    let table = NodeTable {
        triangles: tri_per_node,
        clustering: local,
        component,
        eccentricity,
    };
    (profile, table)
}

/// Distances of the connected `sub` by the sampled-source or HyperBall estimator, whichever the
/// options ask for or is predicted cheaper for the requested precision.
/// The connected node set distances are measured on.
struct Giant<'a> {
    csr: &'a Csr,
    node_set: &'a str,
    /// Ordered pairs of the whole graph in different components.
    unreachable: u64,
    /// BFS levels to expect (the double-sweep bound).
    levels: u64,
}

fn estimate_distances(
    giant: &Giant,
    opts: &ProfileOptions,
    progress: &dyn Progress,
    clock: &mut Clock,
    ap_secs: f64,
) -> (EstimatedDistances, Decision) {
    let Giant {
        csr: sub,
        node_set,
        unreachable,
        levels,
    } = *giant;
    let (sn, sm) = (sub.node_count() as u64, sub.edge_count());
    let threads = opts.threads;
    let registers = 1u64 << opts.ball.log2_registers;
    // HyperBall runs about as many rounds as the diameter, of which the sweep gives a bound.
    let ball_secs = seconds(
        ball_work(sn, sm, registers, levels + 1, opts.ball.repeats as u64),
        opts.rates.ball_bytes,
        threads,
    );
    let mut pilot = None;
    let use_ball = match opts.distance_estimator {
        DistanceEstimator::Ball => true,
        DistanceEstimator::Sources => false,
        DistanceEstimator::Cheaper => {
            clock.start("sampled distances");
            let p = sampled::pilot(sub, opts.level, opts.max_sources, opts.seed);
            let k = p.sources_needed(opts.distance_tolerance, opts.level) as u64;
            let src_secs = seconds(bfs_work(k, sn, sm, levels), opts.rates.bfs_words, threads);
            pilot = Some((p, src_secs));
            ball_secs < src_secs
        }
    };
    let what = why(
        opts.distances,
        false,
        "all-pairs BFS",
        ap_secs,
        opts.exact_seconds,
    );
    // Each estimator gives its figures and how it describes itself; the result is built once.
    let (est, method, reason) = if use_ball {
        clock.start("HyperBall");
        let ball = BallOptions {
            level: opts.level,
            seed: opts.seed,
            ..opts.ball
        };
        let e = hyperball::estimate(sub, &ball, &|_| progress.advance(1));
        clock.done("HyperBall");
        let mut reason = what;
        if let Some((_, src)) = &pilot {
            reason += &format!(
                "; HyperBall predicted {} against {} for sampled sources",
                secs(ball_secs),
                secs(*src)
            );
        }
        let method = format!(
            "HyperBall, {} registers per node × {} hash seeds (each counter ±{:.1}% relative \
             standard error)",
            e.registers,
            opts.ball.repeats,
            100.0 * e.counter_rse
        );
        let est = EstimatedDistances {
            node_set: node_set.to_string(),
            nodes: sn,
            mean: e.mean,
            effective_diameter: e.effective_diameter,
            distribution: e.distribution,
            unreachable_pairs_in_graph: unreachable,
            sources: None,
            registers: Some(e.registers),
            counter_rse: Some(e.counter_rse),
        };
        (est, method, reason)
    } else {
        let (e, reason) = match pilot {
            Some((p, src_secs)) => {
                let e = p.finish(sub, opts.distance_tolerance, opts.level, opts.seed);
                let reason = format!(
                    "{what}; sampled sources predicted {} against {} for HyperBall",
                    secs(src_secs),
                    secs(ball_secs)
                );
                (e, reason)
            }
            None => {
                clock.start("sampled distances");
                let e = sampled::estimate_to_precision(
                    sub,
                    opts.distance_tolerance,
                    opts.level,
                    opts.max_sources,
                    opts.seed,
                );
                (e, what)
            }
        };
        clock.done("sampled distances");
        let method = format!(
            "BFS from {} sampled sources, to ±{}% of the mean at {}%",
            e.sources,
            100.0 * opts.distance_tolerance,
            100.0 * opts.level
        );
        let est = EstimatedDistances {
            node_set: node_set.to_string(),
            nodes: sn,
            mean: e.mean,
            effective_diameter: e.effective_diameter,
            distribution: e.distribution,
            unreachable_pairs_in_graph: unreachable,
            sources: Some(e.sources),
            registers: None,
            counter_rse: None,
        };
        (est, method, reason)
    };
    let decision = Decision {
        group: "distances".into(),
        method,
        exact_seconds: ap_secs,
        budget_seconds: (opts.distances == Choice::Auto).then_some(opts.exact_seconds),
        reason,
    };
    (est, decision)
}

/// The observed figures of the giant component `sub` (nodes `giant` of the whole graph).
fn observed_on_giant(
    sub: &Csr,
    giant: &[u32],
    whole_n: usize,
    whole: &ClusteringStats,
    per_node: Option<(&[u64], &[f64])>,
    distances: &Distances,
    opts: &ProfileOptions,
) -> Observed {
    let n = sub.node_count();
    let degree_sum: f64 = (0..n as u32).map(|v| sub.degree(v) as f64).sum();
    let square_sum: f64 = (0..n as u32).map(|v| (sub.degree(v) as f64).powi(2)).sum();
    let connected = giant.len() == whole_n;
    let (transitivity, average_clustering) = match per_node {
        _ if connected => (whole.transitivity.clone(), whole.average_zeros.clone()),
        Some((t, c)) => {
            // Triangles never cross components, so the whole graph's per-node counts serve.
            let closed: u64 = giant.iter().map(|&v| t[v as usize]).sum();
            let wedges = clustering::wedge_total(sub);
            let tr = if wedges == 0 {
                0.0
            } else {
                closed as f64 / wedges as f64
            };
            let avg = crate::numeric::det_sum(giant.len(), |i| c[giant[i] as usize]) / n as f64;
            const ALG: &str = "forward triangle listing, on the giant component";
            (
                Figure::exact(tr, ALG),
                Figure::exact_over(avg, ALG, n as u64),
            )
        }
        _ => {
            let s = wedges::sampled_stats(
                sub,
                opts.clustering_tolerance,
                opts.bin_tolerance,
                opts.level,
                opts.seed,
            );
            (s.transitivity, s.average_zeros)
        }
    };
    let mean_distance = match distances {
        Distances::Exact(d) => d.mean.clone(),
        Distances::Estimated(d) => d.mean.clone(),
        Distances::Empty | Distances::NotRequested => Figure::exact(0.0, "no pairs"),
    };
    Observed {
        nodes: n as u64,
        edges: sub.edge_count(),
        mean_degree: degree_sum / n as f64,
        second_moment: square_sum / n as f64,
        transitivity,
        average_clustering,
        mean_distance,
    }
}

/// The small-world comparison of the giant component, with sampled references when asked for
/// or when they fit the time budget.
fn small_world(
    sub: &Csr,
    o: Observed,
    opts: &ProfileOptions,
    clock: &mut Clock,
    plan: &mut Vec<Decision>,
    node_set: &str,
) -> SmallWorld {
    // One reference costs its generation, its clustering (as the input's did) and its distances
    // from sampled sources (a pilot of 128 usually suffices for references; about twice the
    // mean distance in levels).
    let clustering_secs: f64 = clock
        .stages
        .iter()
        .filter(|s| s.name.contains("clustering") || s.name == "triangles")
        .map(|s| s.seconds)
        .sum();
    let (n, m) = (sub.node_count() as u64, sub.edge_count());
    let levels = (2.0 * o.mean_distance.value()).ceil() as u64 + 2;
    let per_reference = clustering_secs
        + seconds(
            bfs_work(256, n, m, levels),
            opts.rates.bfs_words,
            opts.threads,
        )
        + m as f64 * (1.0 + opts.swaps_per_edge) / 5e6;
    let (r, reason) = match opts.reference_graphs {
        Some(r) => (r, "chosen by the user".to_string()),
        None => {
            let predicted = 2.0 * 4.0 * per_reference;
            if predicted <= opts.exact_seconds {
                (
                    4,
                    format!(
                        "4 of each kind predicted {}, within the {} budget",
                        secs(predicted),
                        secs(opts.exact_seconds)
                    ),
                )
            } else {
                (
                    0,
                    format!(
                        "4 sampled references of each kind predicted {}, over the {} budget: \
                         analytic references only",
                        secs(predicted),
                        secs(opts.exact_seconds)
                    ),
                )
            }
        }
    };
    let mut references = Vec::new();
    if r > 0 {
        clock.start("reference graphs");
        let random: Vec<(f64, f64, f64)> = (0..r as u64)
            .map(|i| {
                let seed = opts.seed.wrapping_add(1000 + i);
                let g = crate::models::generate::gnm(n as u32, m, seed);
                measure_reference(&g, &opts.measure(), seed)
            })
            .collect();
        let shuffled: Vec<(f64, f64, f64)> = (0..r as u64)
            .map(|i| {
                let seed = opts.seed.wrapping_add(2000 + i);
                let (g, _) =
                    crate::models::randomize::degree_preserving(sub, opts.swaps_per_edge, seed);
                measure_reference(&g, &opts.measure(), seed)
            })
            .collect();
        clock.done("reference graphs");
        references.push(smallworld::empirical_reference(
            &format!("random, {r} sampled G(n, m) graphs"),
            "Erdős–Rényi graphs with the same n and m, measured like the input (distances on \
             each one's giant component)",
            &random,
            opts.level,
        ));
        references.push(smallworld::empirical_reference(
            &format!("random with the same degrees, {r} sampled graphs"),
            &format!(
                "double-edge swaps of the input, {} attempted per edge (Maslov & Sneppen 2002)",
                opts.swaps_per_edge
            ),
            &shuffled,
            opts.level,
        ));
    }
    references.extend(smallworld::analytic_references(&o));
    plan.push(Decision {
        group: "references".into(),
        method: if r > 0 {
            format!("{r} sampled graphs of each kind, plus the analytic references")
        } else {
            "analytic references".into()
        },
        exact_seconds: 0.0,
        budget_seconds: opts
            .reference_graphs
            .is_none()
            .then_some(opts.exact_seconds),
        reason,
    });
    let mut sw = smallworld::compare(&o, references, opts.level, opts.seed);
    sw.node_set = node_set.to_string();
    sw
}

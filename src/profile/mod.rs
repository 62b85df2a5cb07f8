//! The structure profile of a loaded graph: degrees and components (always exact), clustering
//! and distances on the giant component, each exact when the planner predicts it fits the time
//! budget and estimated with intervals otherwise.

mod clock;
mod clustering;
mod distances;
pub mod plan;
pub mod report;
pub mod settings;
mod small_world;

use serde::{Deserialize, Serialize};

use crate::estimate::hyperball::BallOptions;
pub use crate::estimate::wedges::Margin;
use crate::exact::clustering::ClusteringStats;
use crate::exact::components::{self, ComponentStats};
use crate::exact::cost::{REFERENCE_RATES, Rates};
use crate::exact::degrees::{self, DegreeStats};
use crate::exact::directed::DirectedStats;
use crate::exact::distances::DistanceStats;
use crate::figure::Figure;
use crate::models::measure::Measure;
use crate::models::smallworld::SmallWorld;
use crate::profile::clock::Clock;
pub use crate::profile::plan::{Choice, Decision, DistanceEstimator};
use crate::progress::Progress;
use crate::store::graph::Graph;
use crate::store::intake::{Intake, Stage, StageName};

/// What the profile computes and how: time budgets, methods, margins, level and seed.
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
    pub clustering_margin: Margin,
    /// Half-width of each C(k) bin's interval when estimated.
    pub bin_margin: Margin,
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
    /// Per-thread rates of the cost model.
    pub rates: Rates,
}

impl ProfileOptions {
    /// The settings reference graphs are measured with.
    pub fn measure(&self) -> Measure {
        Measure {
            threads: self.threads,
            rates: self.rates,
            exact_seconds: self.exact_seconds,
            clustering_margin: self.clustering_margin,
            distance_tolerance: self.distance_tolerance,
            level: self.level,
            max_sources: self.max_sources,
        }
    }
}

/// Sampled transitivity and average clustering: ±0.002 or ±5% of the figure, whichever is
/// narrower, from at most 2^25 draws (about 15 s on the reference machine). The absolute value is
/// common practice (no source); the relative one keeps figures near 1e-5 readable.
pub const DEFAULT_CLUSTERING_MARGIN: Margin = Margin {
    absolute: 0.002,
    relative: 0.05,
    max_samples: 1 << 25,
};

/// Sampled C(k) bins: ±0.01 or ±10% of the bin's figure, whichever is narrower, from at most 2^21
/// draws per bin (common practice, no source).
pub const DEFAULT_BIN_MARGIN: Margin = Margin {
    absolute: 0.01,
    relative: 0.10,
    max_samples: 1 << 21,
};

impl Default for ProfileOptions {
    fn default() -> Self {
        ProfileOptions {
            exact_seconds: DEFAULT_EXACT_SECONDS,
            diameter_seconds: DEFAULT_DIAMETER_SECONDS,
            clustering: Choice::Auto,
            distances: Choice::Auto,
            distance_estimator: DistanceEstimator::Cheaper,
            clustering_margin: DEFAULT_CLUSTERING_MARGIN,
            bin_margin: DEFAULT_BIN_MARGIN,
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
    /// Triangles, transitivity and local clustering.
    pub clustering: bool,
    /// Mean distance, distribution, diameter.
    pub distances: bool,
    /// sigma, omega and propensity against references.
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
    /// The diameter, exact or as certain bounds.
    pub diameter: Figure,
    /// The double-sweep lower bound.
    pub double_sweep_bound: u32,
    /// Breadth-first searches behind the figure (all-pairs: one per node, plus the sweep).
    pub bfs_runs: u64,
}

/// Distance figures estimated on a connected node set.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct EstimatedDistances {
    /// Which nodes, in words.
    pub node_set: String,
    /// How many.
    pub nodes: u64,
    /// Mean distance over reachable ordered pairs, with its interval.
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
    /// Relative standard error of each HyperBall counter, if HyperBall ran.
    pub counter_rse: Option<f64>,
}

/// The distance figures, exact or estimated.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(tag = "status", rename_all = "kebab-case")]
pub enum Distances {
    /// Computed exactly by all-pairs BFS.
    Exact(Box<DistanceStats>),
    /// Estimated with intervals.
    Estimated(Box<EstimatedDistances>),
    /// No pairs to measure (no edges).
    Empty,
    /// Distances were not asked for.
    NotRequested,
}

/// A graph's structure profile: every figure with its method and, for estimates, its interval.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Profile {
    /// What was read.
    pub intake: Intake,
    /// Degree statistics (exact).
    pub degrees: DegreeStats,
    /// Components (exact).
    pub components: ComponentStats,
    /// `None` when clustering was not asked for.
    pub clustering: Option<ClusteringStats>,
    /// Node set for the distance figures.
    pub distance_node_set: String,
    /// The diameter of the distance node set, when distances were asked for.
    pub diameter: Option<DiameterFigures>,
    /// Distance figures.
    pub distances: Distances,
    /// sigma, omega and small-world propensity against random and lattice references.
    pub small_world: Option<SmallWorld>,
    /// For a directed input (`--directed`): reciprocity, in- and out-degrees, weak and strong
    /// components, Fagiolo's directed clustering. Every other figure is computed on the
    /// symmetrised graph.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub directed: Option<DirectedStats>,
    /// Which method ran for each figure group, and why.
    pub plan: Vec<Decision>,
    /// Wall time of each stage.
    pub stages: Vec<Stage>,
}

/// Per-node results, indexed by dense node index.
#[derive(Debug, Clone)]
pub struct NodeTable {
    /// Per-node triangles and local clustering, when clustering was exact.
    pub triangles: Option<Vec<u64>>,
    /// Per-node local clustering, when clustering was exact.
    pub clustering: Option<Vec<f64>>,
    /// Component rank: 1 = the giant component, then by size.
    pub component: Vec<u32>,
    /// Eccentricity within the component, where it was computed.
    pub eccentricity: Vec<Option<u32>>,
}

/// Profile `g`: degrees and components always (exact), then each requested figure group by its
/// own unit, which decides exact or estimated within the options' budget. Progress goes to
/// `progress`; nothing is printed.
///
/// ```
/// use plumb::profile::{ProfileOptions, profile};
/// use plumb::progress::Quiet;
/// use plumb::read::source::InputBytes;
/// use plumb::store::load::{LoadOptions, load_input};
///
/// // A triangle with a tail: one triangle, transitivity 3·1/5 = 0.6.
/// let text = b"a b\nb c\nc a\nc d\n".to_vec();
/// let g = load_input(InputBytes::from_vec("toy", text), &LoadOptions::default(), &Quiet)?;
/// let (p, _per_node) = profile(&g, &ProfileOptions::default(), &Quiet);
/// let c = p.clustering.unwrap();
/// assert_eq!(c.triangles.value(), 1.0);
/// assert!((c.transitivity.value() - 0.6).abs() < 1e-12);
/// # Ok::<(), plumb::Error>(())
/// ```
pub fn profile(g: &Graph, opts: &ProfileOptions, progress: &dyn Progress) -> (Profile, NodeTable) {
    let csr = &g.csr;
    let n = csr.node_count();
    let groups = opts.groups.effective();
    let mut plan = Vec::new();
    let mut clock = Clock::new(progress);
    clock.start(StageName::Degrees);
    let degrees = degrees::degree_stats(csr);
    clock.done(StageName::Degrees);

    clock.start(StageName::Components);
    let comps = components::components(csr);
    let component_stats = comps.stats(csr);
    let component = comps.ranks();
    clock.done(StageName::Components);

    let clustering = groups.clustering.then(|| {
        let directed = g.directions.is_some();
        clustering::run(csr, opts, g.intake.total_seconds(), directed, &mut clock)
    });
    if let Some(c) = &clustering {
        plan.push(c.decision.clone());
    }
    let mut eccentricity = vec![None; n];
    let distance = groups
        .distances
        .then(|| distances::run(csr, &comps, opts, &mut clock, &mut eccentricity));
    if let Some(d) = distance.as_ref().and_then(|d| d.decision.clone()) {
        plan.push(d);
    }
    let small_world = match (&distance, &clustering) {
        (Some(d), Some(c)) if groups.small_world => small_world::run(d, c, n, opts, &mut clock)
            .map(|(sw, decision)| {
                plan.push(decision);
                sw
            }),
        _ => None,
    };
    let directed = g.directions.as_deref().map(|dir| {
        clock.start(StageName::Directed);
        // Directed triangles cost what triangle listing does: only when that ran exactly.
        let exact = clustering.as_ref().is_some_and(|c| c.per_node.is_some());
        let d = crate::exact::directed::directed_stats(csr, dir, &component_stats, exact);
        clock.done(StageName::Directed);
        d
    });
    let (clustering, per_node) = match clustering {
        Some(c) => (Some(c.stats), c.per_node),
        None => (None, None),
    };
    let (triangles, local) = per_node.unzip();
    let (distance_node_set, diameter, distances) = match distance {
        Some(d) => (d.node_set, d.diameter, d.distances),
        None => (
            distances::node_set(&comps, n, comps.giant_size()),
            None,
            Distances::NotRequested,
        ),
    };
    let profile = Profile {
        intake: g.intake.clone(),
        degrees,
        components: component_stats,
        clustering,
        distance_node_set,
        diameter,
        distances,
        small_world,
        directed,
        plan,
        stages: clock.stages,
    };
    let table = NodeTable {
        triangles,
        clustering: local,
        component,
        eccentricity,
    };
    (profile, table)
}

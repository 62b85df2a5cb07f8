//! The exact structure profile of a loaded graph: degrees, components, triangles and clustering,
//! and distances on the giant component when their cost fits the budget.

use std::time::Instant;

use serde::{Deserialize, Serialize};

use crate::clustering::{self, ClusteringStats};
use crate::components::{self, ComponentStats};
use crate::degrees::{self, DegreeStats};
use crate::diameter;
use crate::distances::{self, DistanceStats};
use crate::figure::Figure;
use crate::graph::Graph;
use crate::intake::{Intake, Stage};
use crate::progress::{Progress, Unit};
use crate::triangles;

#[derive(Debug, Clone)]
pub struct ProfileOptions {
    /// Most work units (64-bit word operations of the all-pairs search) exact distances may cost.
    pub exact_budget: f64,
    /// BFS sources for the mean-distance estimate when exact distances are over budget.
    pub sources: usize,
    /// Confidence level of every interval.
    pub level: f64,
    /// Seed of every random choice.
    pub seed: u64,
}

impl Default for ProfileOptions {
    fn default() -> Self {
        ProfileOptions {
            exact_budget: DEFAULT_EXACT_BUDGET,
            sources: 256,
            level: 0.95,
            seed: 1,
        }
    }
}

/// About half a minute of all-pairs work on two cores of the reference machine (the bench
/// `exact` measures the rate; see the README).
pub const DEFAULT_EXACT_BUDGET: f64 = 6e10;

/// The diameter of the node set distances are reported on.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DiameterFigures {
    pub diameter: Figure,
    /// The double-sweep lower bound.
    pub double_sweep_bound: u32,
    /// Breadth-first searches behind the figure (all-pairs: one per node, plus the sweep).
    pub bfs_runs: u64,
}

/// What became of the all-pairs distance figures.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "status", rename_all = "kebab-case")]
pub enum Distances {
    Exact(Box<DistanceStats>),
    /// Exact all-pairs exceeds the budget: the mean distance is estimated from sampled sources.
    OverBudget {
        estimated_cost: f64,
        budget: f64,
        /// The estimate (an interval always comes with it).
        mean: Figure,
    },
    /// No pairs to measure (no edges).
    Empty,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Profile {
    pub intake: Intake,
    pub degrees: DegreeStats,
    pub components: ComponentStats,
    pub clustering: ClusteringStats,
    /// Node set for the distance figures.
    pub distance_node_set: String,
    pub diameter: Option<DiameterFigures>,
    pub distances: Distances,
    pub stages: Vec<Stage>,
}

/// Per-node results, indexed by dense node index.
#[derive(Debug, Clone)]
pub struct NodeTable {
    pub triangles: Vec<u64>,
    pub clustering: Vec<f64>,
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

/// Estimated work of exact all-pairs distances on a connected graph of `n` nodes, `m` edges and
/// (at most) `levels` BFS levels: one pass over nodes and adjacency per level per 64 sources.
pub fn all_pairs_cost(n: u64, m: u64, levels: u64) -> f64 {
    n.div_ceil(64) as f64 * (levels + 1) as f64 * (n + 2 * m) as f64
}

pub fn profile(g: &Graph, opts: &ProfileOptions, progress: &dyn Progress) -> (Profile, NodeTable) {
    let csr = &g.csr;
    let n = csr.node_count();
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

    clock.start("triangles");
    let tri = triangles::count(csr);
    let local = clustering::local(csr, &tri);
    let clustering = clustering::stats(csr, &tri, &local);
    clock.done("triangles");

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
    let (diameter, distances) = if giant.len() < 2 {
        (None, Distances::Empty)
    } else {
        let sub = components::induced(csr, &giant);
        clock.start("diameter");
        let sweep = diameter::sweep(&sub);
        let sweep_bound = sweep.lower;
        // All-pairs gives the exact diameter too; when it fits the budget it replaces iFUB.
        let cost = all_pairs_cost(
            sub.node_count() as u64,
            sub.edge_count(),
            sweep.lower as u64,
        );
        let all = cost <= opts.exact_budget;
        let d = if all {
            None
        } else {
            Some(diameter::ifub(&sub, sweep, opts.exact_budget))
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
            Distances::Exact(Box::new(stats))
        } else {
            clock.start("sampled distances");
            let e = crate::estimate::distance::estimate(&sub, opts.sources, opts.level, opts.seed);
            clock.done("sampled distances");
            Distances::OverBudget {
                estimated_cost: cost,
                budget: opts.exact_budget,
                mean: e.mean,
            }
        };
        let figures = match (&dist, d) {
            (Distances::Exact(s), _) => DiameterFigures {
                diameter: s.diameter.clone(),
                double_sweep_bound: sweep_bound,
                bfs_runs: 3 + s.nodes,
            },
            (_, Some(d)) => {
                for &(v, e) in &d.known {
                    eccentricity[giant[v as usize] as usize] = Some(e);
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
                            "double sweep + iFUB stopped at the work budget",
                        )
                    },
                    double_sweep_bound: d.double_sweep_bound,
                    bfs_runs: d.bfs_runs,
                }
            }
            _ => unreachable!("iFUB runs whenever all-pairs does not"),
        };
        (Some(figures), dist)
    };
    let profile = Profile {
        intake: g.intake.clone(),
        degrees,
        components: component_stats,
        clustering,
        distance_node_set: node_set,
        diameter,
        distances,
        stages: clock.stages,
    };
    let table = NodeTable {
        triangles: tri.per_node,
        clustering: local,
        component,
        eccentricity,
    };
    (profile, table)
}

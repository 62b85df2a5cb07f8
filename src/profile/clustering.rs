//! The clustering group: triangles, transitivity, local clustering (both conventions for
//! degree < 2) and C(k), exact by forward triangle listing (Schank & Wagner, WEA 2005; Latapy,
//! Theor. Comput. Sci. 407, 2008) when the planner predicts it fits the budget, else by wedge
//! sampling (Seshadhri, Pinar & Kolda, SDM 2013) to the requested margins.

use crate::estimate::wedges;
use crate::exact::clustering::{self, ClusteringStats};
use crate::exact::cost::{self, seconds};
use crate::exact::triangles;
use crate::profile::ProfileOptions;
use crate::profile::clock::Clock;
use crate::profile::plan::{Choice, Decision, Group, decide, why};
use crate::store::csr::Csr;
use crate::store::intake::StageName;

/// What the clustering group found.
pub(crate) struct ClusteringOutcome {
    pub(crate) stats: ClusteringStats,
    /// Per-node triangles and local clustering, when they were computed exactly.
    pub(crate) per_node: Option<(Vec<u64>, Vec<f64>)>,
    pub(crate) decision: Decision,
}

/// The clustering group's one entry point: decides exact or sampled and returns the figures.
pub(crate) fn run(csr: &Csr, opts: &ProfileOptions, clock: &mut Clock) -> ClusteringOutcome {
    let predicted = seconds(cost::triangle_work(csr), opts.rates.triangle, opts.threads);
    let exact = decide(opts.clustering, predicted, opts.exact_seconds);
    let (stats, per_node) = if exact {
        clock.start(StageName::Triangles);
        let tri = triangles::count(csr);
        let local = clustering::local(csr, &tri);
        let stats = clustering::stats(csr, &tri, &local);
        clock.done(StageName::Triangles);
        (stats, Some((tri.per_node, local)))
    } else {
        clock.start(StageName::SampledClustering);
        let stats = wedges::sampled_stats(
            csr,
            opts.clustering_tolerance,
            opts.bin_tolerance,
            opts.level,
            opts.seed,
        );
        clock.done(StageName::SampledClustering);
        (stats, None)
    };
    let method = if exact {
        "exact: forward triangle listing".into()
    } else {
        format!(
            "wedge sampling to ±{} (C(k) bins to ±{}) at {}%",
            opts.clustering_tolerance,
            opts.bin_tolerance,
            100.0 * opts.level
        )
    };
    ClusteringOutcome {
        stats,
        per_node,
        decision: Decision {
            group: Group::Clustering,
            method,
            exact_seconds: predicted,
            budget_seconds: (opts.clustering == Choice::Auto).then_some(opts.exact_seconds),
            reason: why(
                opts.clustering,
                exact,
                "triangle listing",
                predicted,
                opts.exact_seconds,
            ),
        },
    }
}

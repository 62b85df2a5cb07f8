//! The clustering group: triangles, transitivity, local clustering (both conventions for
//! degree < 2) and C(k), exact by forward triangle listing (Schank & Wagner, WEA 2005; Latapy,
//! Theor. Comput. Sci. 407, 2008) when the planner predicts it fits the budget, else by wedge
//! sampling (Seshadhri, Pinar & Kolda, SDM 2013) to the requested margins.

use crate::estimate::wedges;
use crate::estimate::wedges::Margin;
use crate::exact::clustering::{self, ClusteringStats};
use crate::exact::cost;
use crate::exact::triangles;
use crate::profile::ProfileOptions;
use crate::profile::clock::Clock;
use crate::profile::plan::{Choice, Decision, Group, decide, secs, why};
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
/// `read_seconds` is what reading the input took: an exact count predicted to cost no more is
/// worth its certainty even over the budget. With `directed`, exact clustering also brings
/// Fagiolo's directed triangles, so the prediction counts them too.
pub(crate) fn run(
    csr: &Csr,
    opts: &ProfileOptions,
    read_seconds: f64,
    directed: bool,
    clock: &mut Clock,
) -> ClusteringOutcome {
    // A listing step's cost depends on the machine, the graph's size and its locality: measure.
    let probe = cost::listing_probe_seconds(csr, opts.threads);
    let listing = cost::triangle_seconds(csr, &opts.rates, opts.threads, probe);
    let predicted = if directed {
        listing * (1.0 + cost::DIRECTED_TRIANGLES_PER_LISTING)
    } else {
        listing
    };
    let allowance = opts.exact_seconds.max(read_seconds);
    let mut sampling = None;
    let exact = match opts.clustering {
        Choice::Auto if predicted > allowance => {
            // Small figures need large samples: the pilot tells how large, and exact wins
            // whenever it is predicted no dearer.
            let s = sampling_seconds(csr, opts);
            sampling = Some(s);
            predicted <= s
        }
        choice => decide(choice, predicted, allowance),
    };
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
            &opts.clustering_margin,
            &opts.bin_margin,
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
            "wedge sampling to {} (C(k) bins to {}) at {}%",
            margin_text(&opts.clustering_margin),
            margin_text(&opts.bin_margin),
            100.0 * opts.level
        )
    };
    let listing_words = if directed {
        "triangle listing with directed triangles"
    } else {
        "triangle listing"
    };
    let reason = match (opts.clustering, exact, sampling) {
        (Choice::Auto, true, Some(s)) => format!(
            "exact {listing_words} predicted {}, over the {} budget but no dearer than the {} \
             sampling to the margins would take",
            secs(predicted),
            secs(allowance),
            secs(s)
        ),
        (Choice::Auto, false, Some(s)) => format!(
            "exact {listing_words} predicted {}, over the {} budget; sampling to the margins \
             predicted {}",
            secs(predicted),
            secs(allowance),
            secs(s)
        ),
        (Choice::Auto, true, None) if read_seconds > opts.exact_seconds => format!(
            "exact {listing_words} predicted {}, within the {} reading the input took",
            secs(predicted),
            secs(read_seconds)
        ),
        _ => why(
            opts.clustering,
            exact,
            listing_words,
            predicted,
            opts.exact_seconds,
        ),
    };
    ClusteringOutcome {
        stats,
        per_node,
        decision: Decision {
            group: Group::Clustering,
            method,
            exact_seconds: predicted,
            predicted_seconds: if exact { Some(predicted) } else { sampling },
            budget_seconds: (opts.clustering == Choice::Auto).then_some(allowance),
            reason,
        },
    }
}

/// "±0.002 or ±5% of the value, whichever is narrower", or just the absolute half-width.
pub(crate) fn margin_text(m: &Margin) -> String {
    if m.relative > 0.0 {
        format!(
            "±{} or ±{}% of the value, whichever is narrower",
            m.absolute,
            100.0 * m.relative
        )
    } else {
        format!("±{}", m.absolute)
    }
}

/// Predicted seconds of the sampled figures: transitivity's draws from its pilot, as many again
/// for the averages, and each C(k) bin's pilot.
fn sampling_seconds(csr: &Csr, opts: &ProfileOptions) -> f64 {
    let m = &opts.clustering_margin;
    let draws = wedges::planned_draws(csr, m, opts.level, opts.seed);
    let max_degree = (0..csr.node_count() as u32)
        .map(|v| csr.degree(v))
        .max()
        .unwrap_or(0);
    let bins = 32 - max_degree.leading_zeros() as u64;
    let work = 2 * draws + bins * opts.bin_margin.pilot(opts.level);
    cost::draw_seconds(csr, work as f64, &opts.rates, opts.threads)
}

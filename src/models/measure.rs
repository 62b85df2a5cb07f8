//! Measuring a reference graph the way the profile measures its input: exact when the cost model
//! predicts it cheap, else estimated to the same margins. Shared by the small-world references
//! and the Watts–Strogatz sweep.

use crate::estimate::{distance as sampled, wedges};
use crate::exact::cost::{self, Rates, all_pairs_work, seconds};
use crate::exact::distances::{self, DistanceStats};
use crate::exact::{clustering, components, diameter, triangles};
use crate::store::csr::Csr;

/// The settings a reference measurement takes from the profile's options.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Measure {
    /// Threads the cost predictions assume.
    pub threads: usize,
    /// Per-thread rates of the cost model.
    pub rates: Rates,
    /// Seconds an exact method may be predicted to take.
    pub exact_seconds: f64,
    /// Half-width of the clustering intervals when sampled.
    pub clustering_margin: wedges::Margin,
    /// Half-width of the mean-distance interval when estimated, relative to the mean.
    pub distance_tolerance: f64,
    /// Confidence level of the estimates.
    pub level: f64,
    /// Most BFS sources a distance estimate may use.
    pub max_sources: usize,
}

/// Transitivity, average clustering and mean distance of one connected reference graph, exact
/// when cheap, else estimated to the profile's margins (its giant component for the distance).
pub fn measure_reference(g: &Csr, opts: &Measure, seed: u64) -> (f64, f64, f64) {
    let threads = opts.threads;
    let tri_secs = seconds(cost::triangle_work(g), opts.rates.triangle, threads);
    let (t, c) = if tri_secs <= opts.exact_seconds {
        let tri = triangles::count(g);
        let local = clustering::local(g, &tri);
        let s = clustering::stats(g, &tri, &local);
        (s.transitivity.value(), s.average_zeros.value())
    } else {
        let s = wedges::sampled_stats(
            g,
            &opts.clustering_margin,
            &wedges::Margin::absolute(1.0),
            opts.level,
            seed,
        );
        (s.transitivity.value(), s.average_zeros.value())
    };
    let comps = components::components(g);
    let sub = components::induced(g, &comps.giant_nodes());
    let (sn, sm) = (sub.node_count() as u64, sub.edge_count());
    let levels = diameter::sweep(&sub).lower as u64;
    let ap_secs = seconds(
        all_pairs_work(sn, sm, levels),
        opts.rates.bfs_words,
        threads,
    );
    // A reference's own measurement error joins the spread across references, so a sampled
    // estimate serves unless exact is nearly free.
    let l = if ap_secs <= 0.05 * opts.exact_seconds {
        let ap = distances::all_pairs(&sub);
        DistanceStats::from_all_pairs(&ap, "", 0).mean.value()
    } else {
        sampled::estimate_to_precision(
            &sub,
            opts.distance_tolerance,
            opts.level,
            opts.max_sources,
            seed,
        )
        .mean
        .value()
    };
    (t, c, l)
}

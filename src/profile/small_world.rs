//! The small-world group: the giant component against random and lattice references, with
//! sigma (Humphries & Gurney, PLoS ONE 3, 2008), omega (Telesford et al., Brain Connectivity 1,
//! 2011) and small-world propensity (Muldoon, Bridgeford & Bassett, Sci. Rep. 6, 2016); sampled
//! G(n,m) and degree-preserving references (Maslov & Sneppen, Science 296, 2002) when they fit
//! the budget, analytic ones always.

use crate::estimate::wedges;
use crate::exact::clustering::{self, ClusteringStats};
use crate::exact::cost::{bfs_work, seconds};
use crate::figure::Figure;
use crate::models::measure::measure_reference;
use crate::models::smallworld::{self, Observed, SmallWorld};
use crate::models::{generate, randomize};
use crate::profile::clock::Clock;
use crate::profile::clustering::ClusteringOutcome;
use crate::profile::distances::{DistanceOutcome, GiantComponent};
use crate::profile::plan::{Decision, Group, secs};
use crate::profile::{Distances, ProfileOptions};
use crate::store::csr::Csr;
use crate::store::intake::StageName;

/// The small-world group's one entry point: the comparison of the giant component and the
/// planner's decision about sampled references (none when the giant component has no edge).
pub(crate) fn run(
    distance: &DistanceOutcome,
    clustering: &ClusteringOutcome,
    whole_n: usize,
    opts: &ProfileOptions,
    clock: &mut Clock,
) -> Option<(SmallWorld, Decision)> {
    let giant = distance.giant.as_ref().filter(|g| g.csr.edge_count() > 0)?;
    let per_node = clustering
        .per_node
        .as_ref()
        .map(|(t, l)| (t.as_slice(), l.as_slice()));
    let observed = observed_on_giant(
        giant,
        whole_n,
        &clustering.stats,
        per_node,
        &distance.distances,
        opts,
    );
    Some(compare(
        &giant.csr,
        observed,
        opts,
        clock,
        &distance.node_set,
    ))
}

/// The observed figures of the giant component, from the whole graph's clustering (and its
/// per-node counts when exact) and the distance figures.
fn observed_on_giant(
    giant: &GiantComponent,
    whole_n: usize,
    whole: &ClusteringStats,
    per_node: Option<(&[u64], &[f64])>,
    distances: &Distances,
    opts: &ProfileOptions,
) -> Observed {
    let sub = &giant.csr;
    let n = sub.node_count();
    let degree_sum: f64 = (0..n as u32).map(|v| sub.degree(v) as f64).sum();
    let square_sum: f64 = (0..n as u32).map(|v| (sub.degree(v) as f64).powi(2)).sum();
    let connected = n == whole_n;
    let (transitivity, average_clustering) = match per_node {
        _ if connected => (whole.transitivity.clone(), whole.average_zeros.clone()),
        Some((t, c)) => {
            // Triangles never cross components, so the whole graph's per-node counts serve;
            // the sums are exact, as the distributed profile's.
            let mut parts = clustering::ClusteringParts::default();
            let mut closed = 0u64;
            for v in 0..n as u32 {
                parts.add(sub.degree(v), c[giant.whole(v)]);
                closed += t[giant.whole(v)];
            }
            parts.giant_figures(closed)
        }
        _ => {
            let s = wedges::sampled_stats(
                sub,
                &opts.clustering_margin,
                &opts.bin_margin,
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
fn compare(
    sub: &Csr,
    o: Observed,
    opts: &ProfileOptions,
    clock: &mut Clock,
    node_set: &str,
) -> (SmallWorld, Decision) {
    // One reference costs its generation, its clustering (as the input's did) and its distances
    // from sampled sources (a pilot of 128 usually suffices for references; about twice the
    // mean distance in levels).
    let clustering_secs = clock.seconds_of(StageName::is_clustering);
    let (n, m) = (sub.node_count() as u64, sub.edge_count());
    let levels = (2.0 * o.mean_distance.value()).ceil() as u64 + 2;
    let per_reference = clustering_secs
        + seconds(
            bfs_work(256, n, m, levels),
            opts.rates.bfs_words,
            opts.threads,
        )
        + m as f64 * (1.0 + opts.swaps_per_edge) / 5e6;
    let reference_secs = |r: usize| 2.0 * r as f64 * per_reference;
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
        clock.start(StageName::ReferenceGraphs);
        let random: Vec<(f64, f64, f64)> = (0..r as u64)
            .map(|i| {
                let seed = opts.seed.wrapping_add(1000 + i);
                let g = generate::gnm(n as u32, m, seed);
                measure_reference(&g, &opts.measure(), seed)
            })
            .collect();
        let shuffled: Vec<(f64, f64, f64)> = (0..r as u64)
            .map(|i| {
                let seed = opts.seed.wrapping_add(2000 + i);
                let (g, _) = randomize::degree_preserving(sub, opts.swaps_per_edge, seed);
                measure_reference(&g, &opts.measure(), seed)
            })
            .collect();
        clock.done(StageName::ReferenceGraphs);
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
    let decision = Decision {
        group: Group::References,
        method: if r > 0 {
            format!("{r} sampled graphs of each kind, plus the analytic references")
        } else {
            "analytic references".into()
        },
        exact_seconds: 0.0,
        predicted_seconds: (r > 0).then(|| reference_secs(r)),
        budget_seconds: opts
            .reference_graphs
            .is_none()
            .then_some(opts.exact_seconds),
        reason,
    };
    let mut sw = smallworld::compare(&o, references, opts.level, opts.seed);
    sw.node_set = node_set.to_string();
    (sw, decision)
}

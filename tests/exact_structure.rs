//! Exact structure figures against outside sources: published values, closed forms from the
//! literature, and NetworkX on seeded graphs (values committed with the script that made them).

mod common;

use common::*;
use plumb::Graph;
use plumb::models::generate;
use plumb::profile::{Distances, Profile, ProfileOptions, profile};
use plumb::store::csr::Csr;

fn graph(csr: Csr) -> Graph {
    graph_of(csr)
}

fn prof(g: &Graph) -> Profile {
    profile(g, &ProfileOptions::default(), &plumb::progress::Quiet).0
}

fn exact(p: &Profile) -> &plumb::exact::distances::DistanceStats {
    match &p.distances {
        Distances::Exact(s) => s,
        other => panic!("distances not exact: {other:?}"),
    }
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol
}

#[test]
fn karate_club_published_figures() {
    // Zachary (1977), J. Anthropol. Res. 33:452, 78-edge version. The values are the ones
    // NetworkX 3.6.1 gives for this graph (checked when the fixture was made, script in
    // tests/data/make_reference.py): 45 triangles, transitivity 0.255682, average clustering 0.570638 (degree
    // < 2 as 0), mean distance 2.408200, diameter 5, pairs at distance 1..5 = 78, 265, 137, 73, 8.
    let g = load_fixture("karate.mtx");
    let p = prof(&g);
    assert_eq!(p.clustering.as_ref().unwrap().triangles.value(), 45.0);
    assert!(close(
        p.clustering.as_ref().unwrap().transitivity.value(),
        0.255682,
        5e-7
    ));
    assert!(close(
        p.clustering.as_ref().unwrap().average_zeros.value(),
        0.570638,
        5e-7
    ));
    let d = exact(&p);
    assert!(close(d.mean.value(), 2.408200, 5e-7));
    assert_eq!(d.diameter.value(), 5.0);
    let unordered: Vec<u64> = d.distribution[1..].iter().map(|c| c / 2).collect();
    assert_eq!(unordered, vec![78, 265, 137, 73, 8]);
    assert_eq!(p.diameter.as_ref().unwrap().diameter.value(), 5.0);
}

/// Mean distance of a ring lattice, by summing ring distances: with K = k/2 neighbours per side,
/// a node at ring offset h is ceil(h / K) hops away. (Direct summation; the closed form in the
/// project's methods notes was checked numerically against a reference library.)
fn lattice_mean_distance(n: u64, k: u64) -> f64 {
    let kk = k / 2;
    let total: u64 = (1..n).map(|h| h.min(n - h).div_ceil(kk)).sum();
    total as f64 / (n - 1) as f64
}

#[test]
fn ring_lattice_closed_forms() {
    // Watts & Strogatz (1998), Nature 393:440: C = 3(k-2) / (4(k-1)) for the ring lattice,
    // both as transitivity and as average local clustering (every node is alike).
    for (n, k) in [(100u32, 10u32), (1000, 10), (999, 6), (64, 4)] {
        let g = graph(generate::ring_lattice(n, k));
        let p = prof(&g);
        let c = 3.0 * (k as f64 - 2.0) / (4.0 * (k as f64 - 1.0));
        assert!(
            close(
                p.clustering.as_ref().unwrap().transitivity.value(),
                c,
                1e-12
            ),
            "n={n} k={k}"
        );
        assert!(close(
            p.clustering.as_ref().unwrap().average_zeros.value(),
            c,
            1e-12
        ));
        let d = exact(&p);
        let l = lattice_mean_distance(n as u64, k as u64);
        assert!(
            close(d.mean.value(), l, 1e-9),
            "n={n} k={k}: {} vs {l}",
            d.mean.value()
        );
        // Diameter ceil(floor(n/2) / (k/2)).
        assert_eq!(d.diameter.value() as u32, (n / 2).div_ceil(k / 2));
        assert_eq!(d.radius.as_ref().unwrap().value(), d.diameter.value());
    }
    // The two values the methods notes list: n=100 -> 5.454545..., n=1000 -> 50.45045...
    assert!(close(lattice_mean_distance(100, 10), 5.454545, 1e-6));
    assert!(close(lattice_mean_distance(1000, 10), 50.45045, 1e-5));
}

#[test]
fn complete_star_cycle_path() {
    // Textbook values (common practice, no single source): K_n has C = 1 and diameter 1; a star
    // and a cycle (n > 3) have no triangles, C = 0; a path on n nodes has diameter n - 1.
    let k: Vec<(u32, u32)> = (0..12)
        .flat_map(|a| (a + 1..12).map(move |b| (a, b)))
        .collect();
    let p = prof(&graph(Csr::from_edges(12, &k)));
    assert_eq!(p.clustering.as_ref().unwrap().transitivity.value(), 1.0);
    assert_eq!(p.clustering.as_ref().unwrap().average_zeros.value(), 1.0);
    assert_eq!(exact(&p).diameter.value(), 1.0);
    let star: Vec<(u32, u32)> = (1..20).map(|i| (0, i)).collect();
    let p = prof(&graph(Csr::from_edges(20, &star)));
    assert_eq!(p.clustering.as_ref().unwrap().transitivity.value(), 0.0);
    assert_eq!(exact(&p).diameter.value(), 2.0);
    assert_eq!(exact(&p).radius.as_ref().unwrap().value(), 1.0);
    assert_eq!(p.degrees.assortativity, Some(-1.0));
    let cycle: Vec<(u32, u32)> = (0..30).map(|i| (i, (i + 1) % 30)).collect();
    let p = prof(&graph(Csr::from_edges(30, &cycle)));
    assert_eq!(p.clustering.as_ref().unwrap().triangles.value(), 0.0);
    assert_eq!(exact(&p).diameter.value(), 15.0);
    let path: Vec<(u32, u32)> = (0..40).map(|i| (i, i + 1)).collect();
    let p = prof(&graph(Csr::from_edges(41, &path)));
    assert_eq!(exact(&p).diameter.value(), 40.0);
    assert_eq!(p.diameter.as_ref().unwrap().diameter.value(), 40.0);
}

#[test]
fn networkx_reference_values() {
    // NetworkX (Hagberg, Schult & Swart 2008) on graphs it generated with fixed seeds; made by
    // tests/data/make_reference.py, version in each JSON file.
    for name in [
        "gnm_2000_5000",
        "ba_3000_3",
        "ws_2000_10_0.1",
        "gnp_1500_0.0012",
    ] {
        let r: serde_json::Value = serde_json::from_str(
            &std::fs::read_to_string(data(&format!("reference/{name}.json"))).unwrap(),
        )
        .unwrap();
        let g = load_fixture(&format!("reference/{name}.tsv.zst"));
        let (p, table) = profile(&g, &ProfileOptions::default(), &plumb::progress::Quiet);
        let f = |k: &str| r[k].as_f64().unwrap();
        let u = |k: &str| r[k].as_u64().unwrap();
        assert_eq!(p.degrees.nodes, u("nodes"), "{name}");
        assert_eq!(p.degrees.edges, u("edges"), "{name}");
        assert_eq!(
            p.clustering.as_ref().unwrap().triangles.value() as u64,
            u("triangles"),
            "{name}"
        );
        assert!(
            close(
                p.clustering.as_ref().unwrap().transitivity.value(),
                f("transitivity"),
                1e-9
            ),
            "{name}"
        );
        assert!(close(
            p.clustering.as_ref().unwrap().average_zeros.value(),
            f("average_clustering_zeros"),
            1e-9
        ));
        assert!(close(
            p.clustering.as_ref().unwrap().average_deg2.value(),
            f("average_clustering_degree2"),
            1e-9
        ));
        assert_eq!(p.components.count, u("components"), "{name}");
        assert_eq!(p.components.giant_nodes, u("giant_nodes"), "{name}");
        assert!(
            close(p.degrees.assortativity.unwrap(), f("assortativity"), 1e-9),
            "{name}"
        );
        let d = exact(&p);
        assert!(
            close(d.mean.value(), f("giant_mean_distance"), 1e-9),
            "{name}"
        );
        assert_eq!(d.diameter.value() as u64, u("giant_diameter"), "{name}");
        assert_eq!(d.radius.as_ref().unwrap().value() as u64, u("giant_radius"));
        assert_eq!(
            p.diameter.as_ref().unwrap().diameter.value() as u64,
            u("giant_diameter")
        );
        let mut by_d: Vec<(usize, u64)> = r["ordered_pairs_by_distance"]
            .as_object()
            .unwrap()
            .iter()
            .map(|(k, v)| (k.parse().unwrap(), v.as_u64().unwrap()))
            .collect();
        by_d.sort();
        let pairs: Vec<u64> = by_d.into_iter().map(|(_, c)| c).collect();
        assert_eq!(&d.distribution[1..], &pairs[..], "{name}");
        // Node "0" by original id.
        let zero = (0..g.node_count() as u32)
            .find(|&v| g.ids.label(v) == "0")
            .unwrap();
        assert_eq!(
            table.triangles.as_ref().unwrap()[zero as usize],
            u("triangles_of_node_0"),
            "{name}"
        );
    }
}

#[test]
fn identical_results_on_any_thread_count() {
    let g = graph(generate::watts_strogatz(3000, 8, 0.1, 99));
    let run = |threads: usize| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        let (mut p, t) = pool.install(|| prof_with_table(&g));
        // Timings and the planner's time predictions depend on the machine; the figures and
        // the methods chosen must not.
        p.stages.clear();
        for d in &mut p.plan {
            d.exact_seconds = 0.0;
            d.predicted_seconds = None;
            d.reason.clear();
        }
        (
            serde_json::to_string(&p).unwrap(),
            t.triangles,
            t.eccentricity,
        )
    };
    let one = run(1);
    assert_eq!(one, run(2));
    assert_eq!(one, run(3));
}

fn prof_with_table(g: &Graph) -> (Profile, plumb::profile::NodeTable) {
    profile(g, &ProfileOptions::default(), &plumb::progress::Quiet)
}

#[test]
fn disconnected_input_reports_the_giant_component_and_never_errors() {
    // Two triangles and a path, plus isolated nodes.
    let g = graph(Csr::from_edges(
        10,
        &[
            (0, 1),
            (1, 2),
            (2, 0),
            (3, 4),
            (4, 5),
            (5, 3),
            (6, 7),
            (7, 8),
        ],
    ));
    let p = prof(&g);
    assert_eq!(p.components.count, 4);
    let d = exact(&p);
    assert_eq!(d.nodes, 3);
    // Ordered pairs of distinct nodes not in the same component: 90 - (6 + 6 + 6 + 0).
    assert_eq!(d.unreachable_pairs_in_graph, 72);
    assert!(p.distance_node_set.starts_with("giant component (3 of 10"));
    let empty = graph(Csr::from_edges(5, &[]));
    assert!(matches!(prof(&empty).distances, Distances::Empty));
}

#[test]
fn over_budget_distances_are_skipped_and_said() {
    let g = graph(generate::ring_lattice(2000, 10));
    // A budget of about a million BFS words at the reference rate, on one thread.
    let opts = ProfileOptions {
        exact_seconds: 1e6 / plumb::exact::cost::REFERENCE_RATES.bfs_words,
        threads: 1,
        ..ProfileOptions::default()
    };
    let (p, _) = profile(&g, &opts, &plumb::progress::Quiet);
    // The mean distance is then estimated, with an interval, from sampled sources.
    let Distances::Estimated(e) = &p.distances else {
        panic!("expected the estimated path")
    };
    assert!(p.plan[1].reason.contains("over the"), "{:?}", p.plan);
    let mean = &e.mean;
    let iv = mean.interval().unwrap();
    let exact = lattice_mean_distance(2000, 10);
    assert!(iv.low < iv.high && (mean.value() - exact).abs() < 0.1 * exact);
    // The diameter is still exact (a handful of BFS runs): ceil(1000 / 5).
    assert_eq!(p.diameter.unwrap().diameter.value(), 200.0);
}

#[test]
fn diameter_under_a_small_budget_is_bounded_never_guessed() {
    // A random graph has fat outer BFS levels, where iFUB needs many searches.
    let g = graph(generate::gnm(3000, 9000, 5));
    let truth = {
        let c = plumb::exact::components::components(&g.csr);
        let sub = plumb::exact::components::induced(&g.csr, &c.giant_nodes());
        plumb::exact::diameter::diameter(&sub).lower as f64
    };
    let (p, _) = profile(
        &g,
        &ProfileOptions {
            exact_seconds: 2e7 / plumb::exact::cost::REFERENCE_RATES.bfs_words,
            diameter_seconds: 2e7 / plumb::exact::cost::REFERENCE_RATES.bfs_words,
            threads: 1,
            ..ProfileOptions::default()
        },
        &plumb::progress::Quiet,
    );
    let f = p.diameter.unwrap().diameter;
    match f.method() {
        plumb::figure::Method::Bounds { .. } => {
            let iv = f.interval().unwrap();
            assert!(iv.low <= truth && truth <= iv.high && iv.level == 1.0);
            assert!(iv.low < iv.high);
        }
        _ => assert_eq!(f.value(), truth),
    }
}

#[test]
fn les_miserables_both_clustering_conventions() {
    // Knuth (1993), The Stanford GraphBase, co-appearances as shipped by NetworkX 3.6.1:
    // average clustering 0.573137 with degree < 2 counted as 0 (NetworkX average_clustering),
    // 0.735525 over the 60 nodes of degree >= 2 (computed with NetworkX's per-node clustering).
    // NetworkX's count_zeros=False gives yet another value (0.774237, zero-clustering nodes left
    // out), which is why plumb names its two conventions by degree.
    let g = load_fixture("lesmis.csv");
    let p = prof(&g);
    assert!(close(
        p.clustering.as_ref().unwrap().average_zeros.value(),
        0.573137,
        5e-7
    ));
    assert!(close(
        p.clustering.as_ref().unwrap().average_deg2.value(),
        0.735525,
        5e-7
    ));
    assert_eq!(
        p.clustering.as_ref().unwrap().average_deg2.sample_size(),
        Some(60)
    );
}

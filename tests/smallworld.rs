//! Reference-model generators and small-world coefficients against the literature: the
//! Barrat–Weigt clustering of Watts–Strogatz graphs, the Erdős–Rényi clustering, the Fronczak
//! mean-distance formula, and sigma/omega on graphs whose answer is known.

mod common;

use common::*;
use plumb::Graph;
use plumb::models::generate;
use plumb::models::smallworld::{self, Coefficients};
use plumb::profile::{Profile, ProfileOptions, profile};
use plumb::store::csr::Csr;

fn graph(csr: Csr) -> Graph {
    graph_of(csr)
}

fn prof(g: &Graph, references: usize) -> Profile {
    prof_seeded(g, references, 1)
}

fn prof_seeded(g: &Graph, references: usize, seed: u64) -> Profile {
    let opts = ProfileOptions {
        reference_graphs: Some(references),
        seed,
        ..ProfileOptions::default()
    };
    profile(g, &opts, &plumb::progress::Quiet).0
}

fn coefficients<'a>(p: &'a Profile, clustering: &str) -> &'a Coefficients {
    p.small_world
        .as_ref()
        .unwrap()
        .coefficients
        .iter()
        .find(|c| c.clustering == clustering)
        .unwrap()
}

fn span(f: &plumb::figure::Figure) -> (f64, f64) {
    f.interval()
        .map_or((f.value(), f.value()), |iv| (iv.low, iv.high))
}

fn transitivity(g: &Csr) -> f64 {
    3.0 * plumb::exact::triangles::total(g) as f64 / plumb::exact::clustering::wedge_total(g) as f64
}

#[test]
fn watts_strogatz_clustering_follows_barrat_weigt() {
    // Barrat & Weigt, Eur. Phys. J. B 13 (2000) 547: C(p) ≈ C(0)(1-p)^3, C(0) = 3(k-2)/(4(k-1)).
    let (n, k) = (20_000u32, 10u32);
    let c0 = smallworld::lattice_clustering(k);
    for p in [0.0, 0.01, 0.1] {
        let g = generate::watts_strogatz(n, k, p, 11);
        g.verify().unwrap();
        assert_eq!(g.node_count(), n as usize);
        assert_eq!(g.edge_count(), (n * k / 2) as u64, "rewiring keeps m");
        let c = transitivity(&g);
        let expected = c0 * (1.0 - p).powi(3);
        println!("WS p={p}: C {c:.5}, Barrat-Weigt {expected:.5}");
        assert!((c - expected).abs() < 0.01, "p={p}: {c} vs {expected}");
    }
}

#[test]
fn erdos_renyi_clustering_is_mean_degree_over_n() {
    // C_r = <k>/(n-1) (any random-graph text; e.g. Newman 2003, SIAM Review 45, §4.1).
    let (n, m) = (4000u32, 40_000u64);
    let g = generate::gnm(n, m, 5);
    g.verify().unwrap();
    assert_eq!(g.edge_count(), m);
    let k = 2.0 * m as f64 / n as f64;
    let expected = smallworld::er_clustering(n as f64, k);
    let c = transitivity(&g);
    assert!((c / expected - 1.0).abs() < 0.1, "{c} vs {expected}");
    // G(n, p) likewise, and its edge count is binomial: mean p n(n-1)/2.
    let p = k / (n as f64 - 1.0);
    let g = generate::gnp(n, p, 5);
    let mean = p * n as f64 * (n as f64 - 1.0) / 2.0;
    assert!((g.edge_count() as f64 - mean).abs() < 4.0 * mean.sqrt());
    assert!((transitivity(&g) / expected - 1.0).abs() < 0.1);
}

#[test]
fn degree_preserving_swaps_keep_the_sequence_exactly() {
    let g = generate::preferential_attachment(20_000, 4, 2);
    let (r, rep) = plumb::models::randomize::degree_preserving(&g, 5.0, 9);
    r.verify().unwrap(); // sorted, symmetric, no loops, no repeats
    assert_eq!(r.edge_count(), g.edge_count());
    assert!((0..20_000).all(|v| r.degree(v) == g.degree(v)));
    assert!(rep.accepted as f64 > 0.9 * rep.attempted as f64);
    assert_ne!(r.targets(), g.targets(), "randomised");
}

#[test]
fn fronczak_formula_matches_simulation_within_two_percent() {
    // Fronczak, Fronczak & Hołyst, PRE 70, 056110 (2004): L = (ln n - γ)/ln<k> + 1/2, tested in
    // their regime n = 10,000, <k> = 10, against the exact mean distance of the giant component.
    let (n, m) = (10_000u32, 50_000u64);
    for seed in [1, 2] {
        let g = generate::gnm(n, m, seed);
        let c = plumb::exact::components::components(&g);
        let sub = plumb::exact::components::induced(&g, &c.giant_nodes());
        let ap = plumb::exact::distances::all_pairs(&sub);
        let l = plumb::exact::distances::DistanceStats::from_all_pairs(&ap, "", 0)
            .mean
            .value();
        let f = smallworld::er_mean_distance(n as f64, 10.0);
        println!("G(10^4, 5x10^4) seed {seed}: exact L {l:.4}, Fronczak {f:.4}");
        assert!((l / f - 1.0).abs() < 0.02, "{l} vs {f}");
    }
}

#[test]
fn sigma_is_about_one_for_random_graphs() {
    // A G(n, m) graph is a draw from its own random reference, so its sigma should lie near 1
    // and, with the ensemble's spread in the interval, the interval should contain 1 in about
    // 95% of inputs: here at least 4 of 5 seeds. One random graph's sigma varies by about 0.1
    // (transitivity of G(3000, 15000) has a relative spread of about 8%), so the mean of five
    // must lie within 0.15 of 1 (three of its standard deviations).
    for kind in ["transitivity", "average local clustering"] {
        let mut contains = 0;
        let mut sum = 0.0;
        for seed in 1..=5 {
            let g = graph(generate::gnm(3000, 15_000, seed));
            // Independent trials: the reference graphs are seeded from the profile's seed.
            let p = prof_seeded(&g, 6, 100 + seed);
            let c = coefficients(&p, kind);
            let (lo, hi) = span(c.sigma.as_ref().unwrap());
            println!(
                "G(n,m) seed {seed} {kind}: sigma {:.3} [{lo:.3}, {hi:.3}]",
                c.sigma.as_ref().unwrap().value()
            );
            contains += (lo <= 1.0 && 1.0 <= hi) as u32;
            sum += c.sigma.as_ref().unwrap().value();
        }
        assert!(contains >= 4, "{kind}: {contains} of 5");
        assert!((sum / 5.0 - 1.0).abs() < 0.15, "{kind}: mean {}", sum / 5.0);
    }
}

#[test]
fn omega_is_about_minus_one_for_a_ring_lattice() {
    // The lattice is its own lattice reference (C = C_l) and far from random (L >> L_r).
    let g = graph(generate::ring_lattice(2000, 10));
    let p = prof(&g, 0);
    let c = coefficients(&p, "transitivity");
    println!(
        "ring lattice: omega {:.4}",
        c.omega.as_ref().unwrap().value()
    );
    assert!(
        c.omega.as_ref().unwrap().value() < -0.9 && c.omega.as_ref().unwrap().value() > -1.0,
        "{:?}",
        c.omega.as_ref().unwrap()
    );
    assert!(c.verdicts[1].contains("lattice-like"));
}

#[test]
fn watts_strogatz_small_world_regime_is_recognised() {
    // Watts & Strogatz (1998), n = 1000, k = 10: for p in 0.01-0.1 clustering stays near the
    // lattice's while distances fall towards the random graph's.
    for p in [0.01, 0.05, 0.1] {
        let g = graph(generate::watts_strogatz(1000, 10, p, 3));
        let prof = prof(&g, 4);
        let c = coefficients(&prof, "transitivity");
        let (s_lo, _) = span(c.sigma.as_ref().unwrap());
        let (o_lo, o_hi) = span(c.omega.as_ref().unwrap());
        let (f_lo, _) = span(c.propensity.as_ref().unwrap());
        println!(
            "WS p={p}: sigma {:.2} (low {s_lo:.2}), omega {:.3} [{o_lo:.3}, {o_hi:.3}], propensity {:.3}",
            c.sigma.as_ref().unwrap().value(),
            c.omega.as_ref().unwrap().value(),
            c.propensity.as_ref().unwrap().value()
        );
        assert!(s_lo > 2.0, "sigma clearly above 1");
        assert!(f_lo > 0.6, "propensity above its 0.6 threshold");
        if p >= 0.05 {
            assert!(o_lo > -0.5 && o_hi < 0.5, "omega in the small-world band");
        } else {
            // At p = 0.01 the mean distance is still about three times the random graph's,
            // which omega reads as lattice-leaning (L_r/L ~ 0.3 against C/C_l ~ 0.97).
            assert!(c.omega.as_ref().unwrap().value() < 0.0);
        }
    }
}

#[test]
fn karate_club_coefficients_by_hand() {
    // Zachary (1977): n = 34, m = 78, transitivity 0.255682 (exactly 3·45/528 = 135/528),
    // average clustering 0.570638, mean distance 2.408200 (the exact tests pin these).
    // References by the published formulas: <k> = 156/34; C_r = <k>/33;
    // L_r = (ln 34 - γ)/ln<k> + 1/2 (Fronczak et al. 2004); lattice degree 4 (nearest even):
    // C_l = 3·2/(4·3) = 1/2 (Watts & Strogatz 1998); L_l of the ring lattice n = 34, k = 4:
    // K = 2, S(h) = K q(q+1)/2 + r(q+1); n even: L_l = (2 S(16) + ceil(17/2)) / 33
    // = (2·(2·8·9/2) + 9)/33 = 153/33.
    let g = load_fixture("karate.mtx");
    let p = prof(&g, 0);
    let k: f64 = 156.0 / 34.0;
    let gamma = 0.577_215_664_901_532_9;
    let c_r = k / 33.0;
    let l_r = ((34f64).ln() - gamma) / k.ln() + 0.5;
    let c_l = 0.5;
    let l_l = 153.0 / 33.0;
    let l = match &p.distances {
        plumb::profile::Distances::Exact(d) => d.mean.value(),
        _ => panic!("karate distances are exact"),
    };
    assert!((l - 2.408200).abs() < 5e-7);
    for (kind, c) in [
        ("transitivity", 135.0 / 528.0),
        (
            "average local clustering",
            p.clustering.as_ref().unwrap().average_zeros.value(),
        ),
    ] {
        let got = coefficients(&p, kind);
        let sigma = (c / c_r) / (l / l_r);
        let omega = l_r / l - c / c_l;
        let dc = ((c_l - c) / (c_l - c_r)).clamp(0.0, 1.0);
        let dl = ((l - l_r) / (l_l - l_r)).clamp(0.0, 1.0);
        let phi = 1.0 - ((dc * dc + dl * dl) / 2.0).sqrt();
        println!("karate {kind}: sigma {sigma:.6} omega {omega:.6} propensity {phi:.6}");
        assert!(
            (got.sigma.as_ref().unwrap().value() - sigma).abs() < 1e-9,
            "{kind}"
        );
        assert!(
            (got.omega.as_ref().unwrap().value() - omega).abs() < 1e-9,
            "{kind}"
        );
        assert!(
            (got.propensity.as_ref().unwrap().value() - phi).abs() < 1e-9,
            "{kind}"
        );
        assert!(
            got.sigma.as_ref().unwrap().is_exact(),
            "exact inputs and analytic references: no interval"
        );
    }
    // The published average clustering agrees with the one used above.
    assert!((p.clustering.as_ref().unwrap().average_zeros.value() - 0.570638).abs() < 5e-7);
}

#[test]
fn synth_files_are_byte_identical_for_a_seed() {
    let dir = tempfile::tempdir().unwrap();
    let run = |name: &str, seed: &str| {
        let path = dir.path().join(name);
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_plumb"))
            .args([
                "synth",
                "rewired-lattice",
                "--nodes",
                "5000",
                "--degree",
                "6",
                "--rewire",
                "0.1",
            ])
            .args(["--seed", seed, "-o"])
            .arg(&path)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        std::fs::read(path).unwrap()
    };
    let a = run("a.tsv.zst", "5");
    assert_eq!(a, run("b.tsv.zst", "5"));
    assert_ne!(a, run("c.tsv.zst", "6"));
    // And plumb reads back what it wrote: n, m and no cleaning needed.
    let g = load_bytes("a.tsv.zst", &a, &Default::default()).unwrap();
    assert_eq!((g.node_count(), g.edge_count()), (5000, 15_000));
    assert_eq!(g.intake.repeated_lines + g.intake.self_loops, 0);
}

#[test]
fn coefficients_that_divide_by_a_zero_clustering_are_undefined_not_invented() {
    // A cycle (ring lattice of degree 2): its lattice reference has C_l = 3(k-2)/(4(k-1)) = 0
    // (Watts & Strogatz 1998), so omega = L_r/L − C/C_l has no value. It used to come out as
    // NaN, written as null where the schema wants a number, with a "lattice-like" verdict.
    let g = graph(generate::ring_lattice(200, 2));
    for references in [0, 4] {
        let p = prof(&g, references);
        let c = coefficients(&p, "transitivity");
        assert!(c.omega.is_none(), "{:?}", c.omega);
        assert!(
            c.verdicts[1].starts_with("omega undefined"),
            "{:?}",
            c.verdicts
        );
        // sigma = (0/C_r)/(L/L_r) is defined (0) whenever the random reference clusters.
        if let Some(s) = &c.sigma {
            assert!(s.value().is_finite());
        }
        let report =
            plumb::profile::report::Report::new(p, None, &ProfileOptions::default()).unwrap();
        let doc = serde_json::to_value(&report).unwrap();
        common::assert_valid_profile(&doc);
    }
}

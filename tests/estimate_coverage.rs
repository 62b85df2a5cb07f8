//! Statistical honesty of the estimators: nominal 95% intervals must cover the exact value in
//! about 95% of seeded runs (92% to 98.5% over 200 seeds), and a requested precision is met.

mod common;

use plumb::estimate::wedges;
use plumb::models::generate;
use plumb::store::csr::Csr;

fn exact_transitivity(g: &Csr) -> f64 {
    let t = plumb::exact::triangles::total(g);
    let w = plumb::exact::clustering::wedge_total(g);
    3.0 * t as f64 / w as f64
}

fn graphs() -> Vec<(&'static str, Csr)> {
    vec![
        (
            "Watts-Strogatz n=3000 k=10 p=0.1",
            generate::watts_strogatz(3000, 10, 0.1, 1),
        ),
        ("Erdos-Renyi G(3000, 15000)", generate::gnm(3000, 15_000, 2)),
        (
            "preferential attachment n=3000 d=4",
            generate::preferential_attachment(3000, 4, 3),
        ),
    ]
}

#[test]
fn wedge_sampling_intervals_cover_at_the_nominal_rate() {
    for (name, g) in graphs() {
        let exact = exact_transitivity(&g);
        let runs = 1000;
        let covered = (0..runs)
            .filter(|&seed| {
                let e = wedges::estimate(&g, 2000, 0.95, seed);
                let iv = e.transitivity.interval().unwrap();
                iv.low <= exact && exact <= iv.high
            })
            .count();
        let rate = covered as f64 / runs as f64;
        println!("{name}: exact transitivity {exact:.6}, 95% Wilson interval covered {rate:.3}");
        assert!((0.92..=0.985).contains(&rate), "{name}: coverage {rate}");
    }
}

#[test]
fn requested_precision_is_met() {
    // Hoeffding: ±0.002 at 95% needs ln(40) / (2 · 0.002²) = 461,110 wedges.
    let k = wedges::samples_for(0.002, 0.95);
    assert_eq!(k, 461_110);
    for (name, g) in graphs() {
        let exact = exact_transitivity(&g);
        let e = wedges::estimate(&g, k, 0.95, 77);
        assert!((e.transitivity.value() - exact).abs() <= 0.002, "{name}");
        let iv = e.transitivity.interval().unwrap();
        assert!(
            iv.high - iv.low <= 0.004,
            "{name}: interval wider than requested"
        );
    }
}

#[test]
fn karate_club_estimates_converge_to_the_published_values() {
    // Zachary (1977), figures as in the exact tests (NetworkX 3.6.1 on the same edge list):
    // 45 triangles, transitivity 0.255682, average clustering 0.570638, mean distance 2.408200.
    let g = common::load_fixture("karate.mtx");
    let e = wedges::estimate(&g.csr, 2_000_000, 0.95, 5);
    assert!((e.transitivity.value() - 0.255682).abs() < 0.002);
    assert!((e.triangles.value() - 45.0).abs() < 0.5);
    let a = wedges::average_clustering(&g.csr, 2_000_000, 0.95, 5);
    assert!((a.average_zeros.value() - 0.570638).abs() < 0.002);
    // All 34 sources: the sampled estimator becomes a census and must equal the exact value.
    let d = plumb::estimate::distance::estimate(&g.csr, 34, 0.95, 5);
    assert!((d.mean.value() - 2.408200).abs() < 5e-7);
    // HyperBall with 4096 registers and 20 hash seeds lands close. Its interval is not asked to
    // cover here: with 34 nodes and 4096 registers there are no register collisions, every hash
    // seed gives nearly the same value, and the counter estimator's own small bias (0.07%)
    // exceeds the seed-to-seed spread. The planner never picks HyperBall for graphs this small.
    let b = plumb::estimate::hyperball::estimate(
        &g.csr,
        &plumb::estimate::hyperball::BallOptions {
            log2_registers: 12,
            repeats: 20,
            ..Default::default()
        },
        &|_| {},
    )
    .expect("valid options");
    assert!((b.mean.value() - 2.408200).abs() < 0.01, "{:?}", b.mean);
}

#[test]
fn ring_lattice_estimates_converge_to_the_closed_forms() {
    // Watts & Strogatz (1998): C = 3(k-2)/(4(k-1)) = 2/3 for k = 10; the mean distance of the
    // ring lattice in closed form: sum over h of ceil(min(h, n-h) / (k/2)) / (n - 1).
    let (n, k) = (1000u32, 10u32);
    let g = generate::ring_lattice(n, k);
    let c = 3.0 * (k as f64 - 2.0) / (4.0 * (k as f64 - 1.0));
    let l = (1..n as u64)
        .map(|h| h.min(n as u64 - h).div_ceil(k as u64 / 2))
        .sum::<u64>() as f64
        / (n - 1) as f64;
    // Five seeds: every estimate within 0.002, and at least four of the five 95% intervals
    // cover (a correct interval misses twice or more with probability 2.3%; one seed alone
    // misses one time in twenty, as seed 8 does with wedges drawn sixteen at a time).
    let mut covered = 0;
    for seed in 8..13 {
        let e = wedges::estimate(&g, 2_000_000, 0.95, seed);
        assert!(
            (e.transitivity.value() - c).abs() < 0.002,
            "{:?}",
            e.transitivity
        );
        covered += covers(&e.transitivity, c) as u32;
    }
    assert!(covered >= 4, "{covered} of 5 intervals cover {c}");
    let a = wedges::average_clustering(&g, 2_000_000, 0.95, 8);
    assert!((a.average_zeros.value() - c).abs() < 0.002);
    // Every node of a ring lattice is alike, so even a few sources give the exact mean.
    let d = plumb::estimate::distance::estimate(&g, 64, 0.95, 8);
    assert!(
        (d.mean.value() - l).abs() < 1e-9,
        "{} vs {l}",
        d.mean.value()
    );
    let b = plumb::estimate::hyperball::estimate(
        &g,
        &plumb::estimate::hyperball::BallOptions {
            log2_registers: 10,
            repeats: 10,
            ..Default::default()
        },
        &|_| {},
    )
    .expect("valid options");
    assert!((b.mean.value() - l).abs() < 0.03 * l, "{:?} vs {l}", b.mean);
}

fn covers(f: &plumb::figure::Figure, exact: f64) -> bool {
    let iv = f.interval().expect("an estimate carries an interval");
    iv.low <= exact && exact <= iv.high
}

#[test]
fn sampled_bfs_distance_intervals_cover_at_the_nominal_rate() {
    for (name, g) in graphs() {
        let (sub, mean, eff, shares) = exact_distances(&g);
        // The most common distance: its share's interval is checked too.
        let mode = (0..shares.len())
            .max_by(|&a, &b| shares[a].total_cmp(&shares[b]))
            .unwrap();
        let runs = 1000;
        let (mut cm, mut ce, mut cs) = (0, 0, 0);
        for seed in 0..runs {
            let e = plumb::estimate::distance::estimate(&sub, 40, 0.95, seed);
            cm += covers(&e.mean, mean) as u32;
            ce += covers(&e.effective_diameter, eff) as u32;
            cs += covers(&e.distribution[mode], shares[mode]) as u32;
        }
        let rate = |c: u32| c as f64 / runs as f64;
        println!(
            "{name}: mean distance {mean:.6} covered {:.3}; effective diameter {eff:.4} \
             (bootstrap) covered {:.3}; share at distance {} {:.4} covered {:.3}",
            rate(cm),
            rate(ce),
            mode + 1,
            shares[mode],
            rate(cs)
        );
        for c in [cm, ce, cs] {
            assert!(
                (0.92..=0.985).contains(&rate(c)),
                "{name}: coverage {}",
                rate(c)
            );
        }
    }
}

#[test]
fn node_wedge_clustering_intervals_cover_at_the_nominal_rate() {
    for (name, g) in graphs() {
        let t = plumb::exact::triangles::count(&g);
        let s = plumb::exact::clustering::stats(&g, &t, &plumb::exact::clustering::local(&g, &t));
        let (z, d2) = (s.average_zeros.value(), s.average_deg2.value());
        let runs = 1000;
        let (mut cz, mut cd) = (0, 0);
        for seed in 0..runs {
            let e = wedges::average_clustering(&g, 2000, 0.95, seed);
            cz += covers(&e.average_zeros, z) as u32;
            cd += covers(&e.average_deg2, d2) as u32;
        }
        let (rz, rd) = (cz as f64 / runs as f64, cd as f64 / runs as f64);
        println!(
            "{name}: average clustering {z:.6} covered {rz:.3}; degree>=2 {d2:.6} covered {rd:.3}"
        );
        assert!(
            (0.92..=0.985).contains(&rz) && (0.92..=0.985).contains(&rd),
            "{name}"
        );
    }
}

/// Exact mean distance and effective diameter of the giant component, by all-pairs BFS.
fn exact_distances(g: &Csr) -> (Csr, f64, f64, Vec<f64>) {
    let c = plumb::exact::components::components(g);
    let sub = plumb::exact::components::induced(g, &c.giant_nodes());
    let ap = plumb::exact::distances::all_pairs(&sub);
    let s = plumb::exact::distances::DistanceStats::from_all_pairs(&ap, "giant", 0);
    let pairs = s.pairs as f64;
    let shares = ap.pairs[1..].iter().map(|&c| c as f64 / pairs).collect();
    (sub, s.mean.value(), s.effective_diameter.value(), shares)
}

#[test]
fn hyperball_intervals_cover_and_land_within_three_standard_errors() {
    use plumb::estimate::hyperball::{BallOptions, estimate};
    for (name, g) in graphs() {
        let (sub, mean, eff, _) = exact_distances(&g);
        let runs = 200;
        let (mut cm, mut ce, mut within3) = (0, 0, 0);
        for seed in 0..runs {
            let opts = BallOptions {
                seed,
                ..Default::default()
            };
            let e = estimate(&sub, &opts, &|_| {}).expect("valid options");
            cm += covers(&e.mean, mean) as u32;
            ce += covers(&e.effective_diameter, eff) as u32;
            within3 += ((e.mean.value() - mean).abs() <= 3.0 * e.mean.std_error().unwrap()) as u32;
        }
        let (rm, re) = (cm as f64 / runs as f64, ce as f64 / runs as f64);
        println!(
            "{name}: HyperBall mean distance {mean:.6} covered {rm:.3}, within 3 s.e. {within3}/{runs}; \
             effective diameter {eff:.4} covered {re:.3}"
        );
        assert!((0.92..=0.985).contains(&rm), "{name}: mean coverage {rm}");
        assert!((0.92..=0.985).contains(&re), "{name}: eff. diameter {re}");
        // The acceptance check proper: the default run (seed 1) within 3 standard errors.
        let e = estimate(&sub, &BallOptions::default(), &|_| {}).expect("valid options");
        assert!(
            (e.mean.value() - mean).abs() <= 3.0 * e.mean.std_error().unwrap(),
            "{name}: {:?} vs {mean}",
            e.mean
        );
    }
}

#[test]
fn degree_bin_clustering_intervals_cover_at_the_nominal_rate() {
    // C(k) by degree bin: every bin's interval, over 300 seeds, pooled per graph.
    for (name, g) in graphs() {
        let t = plumb::exact::triangles::count(&g);
        let exact =
            plumb::exact::clustering::stats(&g, &t, &plumb::exact::clustering::local(&g, &t))
                .by_degree;
        let runs = 300;
        let mut covered = 0;
        for seed in 0..runs {
            let est = wedges::clustering_by_degree(&g, 2000, 0.95, seed);
            for (x, e) in exact.iter().zip(&est) {
                covered += covers(&e.mean, x.mean.value()) as u32;
            }
        }
        let rate = covered as f64 / (runs as usize * exact.len()) as f64;
        println!("{name}: C(k) over {} bins covered {rate:.3}", exact.len());
        assert!((0.92..=0.985).contains(&rate), "{name}: {rate}");
    }
}

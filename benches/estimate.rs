//! Estimators on a generated graph of 50 million edges (Watts–Strogatz, n = 5,000,000, k = 20,
//! p = 0.1): transitivity by wedge sampling to ±0.002 at 95%, the mean distance to ±1% at 95%
//! from sampled sources, one HyperBall round, and the per-thread rates the planner's cost model
//! uses (`cost::REFERENCE_RATES`).
//!
//! Run: `cargo bench --bench estimate` (add `-- --quick` for a 10x smaller graph). Answers are
//! checked: the wedge estimate against exact triangle counting, the interval widths against the
//! requested margins, and the sampled mean distance against HyperBall's.

use std::time::Instant;

use plumb::estimate::{distance, hyperball, wedges};
use plumb::exact::clustering;
use plumb::exact::cost;
use plumb::exact::triangles;
use plumb::models::generate;

fn main() {
    let quick = std::env::args().any(|a| a == "--quick");
    let (n, k) = if quick {
        (500_000, 20)
    } else {
        (5_000_000, 20)
    };
    let threads = rayon::current_num_threads();
    let t = Instant::now();
    let g = generate::watts_strogatz(n, k, 0.1, 7);
    let m = g.edge_count();
    println!(
        "Watts-Strogatz n={n} k={k} p=0.1: {m} edges, generated in {:.1} s, {threads} threads",
        t.elapsed().as_secs_f64()
    );

    // Transitivity: exact for the answer check, then wedge sampling at the Hoeffding size.
    let t = Instant::now();
    let exact = {
        let tri = triangles::total(&g);
        3.0 * tri as f64 / clustering::wedge_total(&g) as f64
    };
    let t_exact = t.elapsed().as_secs_f64();
    let samples = wedges::samples_for(0.002, 0.95);
    let t = Instant::now();
    let e = wedges::estimate(&g, samples, 0.95, 1);
    let t_wedge = t.elapsed().as_secs_f64();
    let iv = e.transitivity.interval().unwrap();
    assert!(
        (e.transitivity.value() - exact).abs() <= 0.002,
        "missed ±0.002"
    );
    assert!(iv.high - iv.low <= 0.004);
    println!(
        "transitivity: exact {exact:.6} in {t_exact:.2} s; wedge sampling {:.6} ± {:.6} \
         ({samples} wedges) in {t_wedge:.3} s",
        e.transitivity.value(),
        (iv.high - iv.low) / 2.0
    );

    // Mean distance to ±1% from sampled sources.
    let t = Instant::now();
    let d = distance::estimate_to_precision(&g, 0.01, 0.95, 4096, 1);
    let t_dist = t.elapsed().as_secs_f64();
    let iv = d.mean.interval().unwrap();
    let half = (iv.high - iv.low) / 2.0 / d.mean.value();
    assert!(half <= 0.01, "interval half-width {half} over 1%");
    println!(
        "mean distance: {:.4} ± {:.2}% from {} sources in {t_dist:.1} s \
         (effective diameter {:.3})",
        d.mean.value(),
        100.0 * half,
        d.sources,
        d.effective_diameter.value()
    );

    // HyperBall: time every round of one run; report the first (all counters active) and the
    // mean.
    let t = Instant::now();
    let rounds = std::sync::Mutex::new(Vec::new());
    let started = std::sync::Mutex::new(Instant::now());
    let nt = hyperball::neighbourhood_function(&g, 6, 1, &|_| {
        let mut s = started.lock().unwrap();
        rounds.lock().unwrap().push(s.elapsed().as_secs_f64());
        *s = Instant::now();
    })
    .expect("64 registers are in range");
    let t_ball = t.elapsed().as_secs_f64();
    let rounds = rounds.into_inner().unwrap();
    let first = rounds[0];
    let ball = hyperball::derived(&nt);
    let arcs = 2.0 * m as f64;
    println!(
        "HyperBall (64 registers, one hash seed): {} rounds in {t_ball:.1} s; first round \
         {first:.2} s = {:.0} M edges/s; mean distance {:.4} (single run)",
        rounds.len(),
        m as f64 / first / 1e6,
        ball.mean
    );
    assert!(
        (ball.mean - d.mean.value()).abs() < 0.1 * d.mean.value(),
        "HyperBall and sampled sources disagree"
    );

    // Per-thread rates for the planner.
    let tri_rate = cost::triangle_work(&g) / t_exact / threads as f64;
    let levels = d.farthest as u64;
    let bfs_rate = cost::bfs_work(d.sources, n as u64, m, levels) / t_dist / threads as f64;
    let ball_rate = (arcs + n as f64) * 64.0 / first / threads as f64;
    let wedge_rate = samples as f64 / t_wedge / threads as f64;
    println!(
        "planner rates per thread: triangle {tri_rate:.2e} · bfs_words {bfs_rate:.2e} · \
         ball_bytes {ball_rate:.2e} · wedges {wedge_rate:.2e} (REFERENCE_RATES: {:?})",
        cost::REFERENCE_RATES
    );
}

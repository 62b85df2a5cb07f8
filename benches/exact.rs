//! Exact structure on generated graphs of 5 million edges: degree statistics with assortativity
//! (against one plain pass), triangle counting (transitivity),
//! single-source BFS (edges traversed per second), components, the iFUB diameter, and the rate
//! of the bit-parallel all-pairs search that sizes the default exact budget.
//!
//! Run: `cargo bench --bench exact` (add `-- --quick` for 10x smaller graphs). Answers are
//! checked: assortativity against a plain per-edge sum, triangle totals against the per-node
//! count, BFS against the reach of the component.

use std::time::Instant;

use plumb::exact::bfs::Bfs;
use plumb::exact::components::{components, induced};
use plumb::exact::degrees;
use plumb::exact::diameter;
use plumb::exact::distances;
use plumb::exact::triangles;
use plumb::models::generate;
use plumb::store::csr::Csr;

fn best<T>(reps: usize, mut f: impl FnMut() -> T) -> (T, f64) {
    let mut secs = f64::MAX;
    let mut out = None;
    for _ in 0..reps {
        let t = Instant::now();
        let r = f();
        secs = secs.min(t.elapsed().as_secs_f64());
        out = Some(r);
    }
    (out.unwrap(), secs)
}

/// Assortativity the plain way, every edge end in turn (Newman 2002, eq. 4 over both directions).
fn assortativity_plain(g: &Csr) -> Option<f64> {
    let (mut jk, mut j, mut jj) = (0u128, 0u128, 0u128);
    for u in 0..g.node_count() as u32 {
        let du = g.degree(u) as u128;
        for &v in g.neighbors(u) {
            jk += du * g.degree(v) as u128;
            j += du;
            jj += du * du;
        }
    }
    let ends = g.targets().len() as f64;
    let mean = j as f64 / ends;
    let var = jj as f64 / ends - mean * mean;
    (var > 0.0).then(|| (jk as f64 / ends - mean * mean) / var)
}

/// One plain parallel pass over the adjacency: the floor for degree statistics.
fn one_pass(g: &Csr) -> u64 {
    use rayon::prelude::*;
    (0..g.node_count() as u32)
        .into_par_iter()
        .map(|v| g.neighbors(v).iter().map(|&x| x as u64).sum::<u64>())
        .sum()
}

fn bench(name: &str, g: &Csr) {
    let m = g.edge_count();
    let (_, t_pass) = best(3, || one_pass(g));
    let (deg, t_deg) = best(3, || degrees::degree_stats(g));
    assert_eq!(deg.histogram.iter().sum::<u64>(), g.node_count() as u64);
    let (fast, plain) = (deg.assortativity.unwrap(), assortativity_plain(g).unwrap());
    assert!(
        (fast - plain).abs() < 1e-9,
        "{name}: assortativity {fast} against {plain}"
    );
    let (tri, t_tri) = best(3, || triangles::total(g));
    let per = triangles::count(g);
    assert_eq!(per.total, tri, "{name}: totals disagree");
    assert_eq!(per.per_node.iter().sum::<u64>(), 3 * tri);
    let wedges: u128 = plumb::exact::clustering::wedge_total(g);
    let (comps, t_cc) = best(3, || components(g));
    let giant = comps.giant_nodes();
    // Single BFS from a few sources in the giant component; TEPS counts the component's edges.
    let sub_m: u64 = giant.iter().map(|&v| g.degree(v) as u64).sum::<u64>() / 2;
    let mut bfs = Bfs::new(g.node_count());
    let mut t_bfs = f64::MAX;
    for &s in giant.iter().step_by(giant.len() / 5 + 1).take(5) {
        let t = Instant::now();
        bfs.run_parallel(g, s);
        t_bfs = t_bfs.min(t.elapsed().as_secs_f64());
        assert_eq!(
            bfs.reached(),
            giant.len() as u64,
            "{name}: BFS missed nodes"
        );
    }
    let sub = induced(g, &giant);
    // A 20 s search budget (the profile's own default for the diameter is 1 s).
    let budget = plumb::profile::DEFAULT_EXACT_SECONDS
        * plumb::exact::cost::REFERENCE_RATES.bfs_words
        * rayon::current_num_threads() as f64;
    let (d, t_diam) = best(1, || diameter::ifub(&sub, diameter::sweep(&sub), budget));
    // All-pairs rate on a slice of sources: time one parallel round of 4 batches per thread.
    let batches = 4 * rayon::current_num_threads();
    let t = Instant::now();
    let ops = all_pairs_sample(&sub, batches);
    let rate = ops / t.elapsed().as_secs_f64();
    println!(
        "{name:<34} {m:>9} edges | degrees {t_deg:.3} s (one pass {t_pass:.3} s) | triangles {tri:>11} transitivity {:.6} in {t_tri:.3} s | \
         components {t_cc:.3} s | BFS {t_bfs:.4} s = {:.0} M edges/s | diameter {}..{} ({} BFS) {t_diam:.2} s | \
         all-pairs {:.2e} ops/s",
        3.0 * tri as f64 / wedges as f64,
        sub_m as f64 / t_bfs / 1e6,
        d.lower,
        d.upper,
        d.bfs_runs,
        rate,
    );
}

/// Run `batches` batches of the all-pairs search (the first 64 * batches sources) and return the
/// work done in the units of the exact budget.
fn all_pairs_sample(g: &Csr, batches: usize) -> f64 {
    let n = g.node_count().min(64 * batches);
    let nodes: Vec<u32> = (0..g.node_count() as u32).collect();
    let _ = &nodes;
    let ap = distances::all_pairs_sources(g, 0..n as u32);
    let levels = *ap.eccentricity.iter().max().unwrap_or(&0) as f64 + 1.0;
    n.div_ceil(64) as f64 * levels * (g.node_count() as f64 + 2.0 * g.edge_count() as f64)
}

/// Load from a text file and compute transitivity, end to end, as a user would (the comparison
/// with a general-purpose library includes its load too). `--keep-edges PATH` keeps the file.
fn end_to_end(g: &Csr) {
    use std::io::Write;
    let args: Vec<String> = std::env::args().collect();
    let keep = args
        .iter()
        .position(|a| a == "--keep-edges")
        .and_then(|i| args.get(i + 1).cloned());
    let dir = tempfile::tempdir().unwrap();
    let path = keep.map_or_else(|| dir.path().join("ws.txt"), std::path::PathBuf::from);
    let mut out = std::io::BufWriter::new(std::fs::File::create(&path).unwrap());
    for u in 0..g.node_count() as u32 {
        for &v in g.neighbors(u) {
            if u < v {
                writeln!(out, "{u} {v}").unwrap();
            }
        }
    }
    out.flush().unwrap();
    drop(out);
    let (t, secs) = best(3, || {
        let h = plumb::store::load::load(
            &path,
            &plumb::store::load::LoadOptions::default(),
            &plumb::progress::Quiet,
        )
        .unwrap();
        let tri = triangles::total(&h.csr);
        let wedges: u128 = plumb::exact::clustering::wedge_total(&h.csr);
        3.0 * tri as f64 / wedges as f64
    });
    println!(
        "end to end: load {} and exact transitivity {t:.6} in {secs:.3} s",
        path.display()
    );
}

fn main() {
    let quick = std::env::args().any(|a| a == "--quick");
    let s = if quick { 10 } else { 1 };
    let n = 1_000_000 / s;
    println!(
        "plumb exact bench: {} threads",
        rayon::current_num_threads()
    );
    let t = Instant::now();
    let ws = generate::watts_strogatz(n, 10, 0.1, 1);
    println!(
        "(generated Watts-Strogatz in {:.1} s)",
        t.elapsed().as_secs_f64()
    );
    bench("Watts-Strogatz n=1M k=10 p=0.1", &ws);
    end_to_end(&ws);
    drop(ws);
    let er = generate::gnm(n, 5 * n as u64, 2);
    bench("Erdos-Renyi G(n=1M, m=5M)", &er);
    drop(er);
    let pa = generate::preferential_attachment(n, 5, 3);
    bench("preferential attachment n=1M d=5", &pa);
}

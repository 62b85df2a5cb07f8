//! Generator throughput (edges per second into a zstd edge list) and the time to a full
//! small-world verdict on a 5-million-edge Watts–Strogatz graph (n = 1,000,000, k = 10,
//! p = 0.1), with analytic references and with two sampled reference graphs of each kind.
//!
//! Run: `cargo bench --bench smallworld` (add `-- --quick` for 10x smaller sizes). Answers are
//! checked: every generator writes the edge count its model fixes (or, for G(n,p), one within
//! five standard deviations of its mean), and the verdict must call the graph small-world.

use std::time::Instant;

use plumb::models::generate::{self, Model};
use plumb::outfile::EdgeWriter;
use plumb::profile::{ProfileOptions, profile};
use plumb::store::graph::NodeIds;
use plumb::store::intake::Intake;

fn main() {
    let quick = std::env::args().any(|a| a == "--quick");
    let scale: u32 = if quick { 10 } else { 1 };
    let dir = tempfile::tempdir().unwrap();
    println!(
        "plumb small-world bench: {} threads",
        rayon::current_num_threads()
    );
    let n = 2_000_000 / scale;
    let models = [
        Model::Lattice { n, k: 10 },
        Model::WattsStrogatz { n, k: 10, p: 0.1 },
        Model::Gnm { n, m: 5 * n as u64 },
        Model::Gnp {
            n,
            p: 10.0 / (n as f64 - 1.0),
        },
        Model::Preferential { n, d: 5 },
    ];
    for m in &models {
        let path = dir.path().join("g.tsv.zst");
        let t = Instant::now();
        let mut w = EdgeWriter::create(&path).unwrap();
        generate::stream(m, 1, &mut |a, b| w.edge(a, b)).unwrap();
        let (edges, bytes) = w.finish().unwrap();
        let secs = t.elapsed().as_secs_f64();
        let expected = match *m {
            Model::Gnp { n, p } => p * n as f64 * (n as f64 - 1.0) / 2.0,
            _ => 5.0 * n as f64,
        };
        let tolerance = match m {
            Model::Gnp { .. } => 5.0 * expected.sqrt(),
            // Preferential attachment merges repeated draws of one new node.
            Model::Preferential { .. } => 0.01 * expected,
            _ => 0.0,
        };
        assert!(
            (edges as f64 - expected).abs() <= tolerance,
            "{m:?}: {edges}"
        );
        println!(
            "{:<70} {edges:>9} edges -> {:>6.1} MiB zstd in {secs:.2} s = {:.1} M edges/s",
            m.describe(),
            bytes as f64 / (1 << 20) as f64,
            edges as f64 / secs / 1e6
        );
    }

    let n = 1_000_000 / scale;
    let csr = generate::watts_strogatz(n, 10, 0.1, 7);
    let m = csr.edge_count();
    let g = plumb::Graph {
        ids: NodeIds::Range {
            first: 0,
            len: n as usize,
        },
        intake: Intake::generated("bench", n as u64, m, 0),
        directions: None,
        csr,
    };
    for references in [0usize, 2] {
        let opts = ProfileOptions {
            reference_graphs: Some(references),
            ..ProfileOptions::default()
        };
        let t = Instant::now();
        let (p, _) = profile(&g, &opts, &plumb::progress::Quiet);
        let secs = t.elapsed().as_secs_f64();
        let sw = p.small_world.expect("a connected graph gets a verdict");
        let c = &sw.coefficients[0];
        assert!(
            c.verdicts[0].contains("small-world by sigma"),
            "{:?}",
            c.verdicts
        );
        println!(
            "full profile with small-world verdict, Watts-Strogatz n={n} k=10 p=0.1 ({m} edges), \
             {references} sampled references of each kind: {secs:.1} s after load \
             (sigma {:.0}, omega {:.3}, propensity {:.3})",
            c.sigma.as_ref().unwrap().value(),
            c.omega.as_ref().unwrap().value(),
            c.propensity.as_ref().unwrap().value()
        );
        let stages: Vec<String> = p
            .stages
            .iter()
            .map(|s| format!("{} {:.2} s", s.name, s.seconds))
            .collect();
        println!("  stages: {}", stages.join(" · "));
    }
}

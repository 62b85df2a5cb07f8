//! Directed exports on generated graphs of 5 million directed edges: the read with `--directed`
//! against the same file read undirected, and the directed figures (reciprocity, in/out
//! degrees, strong components, Fagiolo's clustering) against a plain pass and the undirected
//! triangle count.
//!
//! Run: `cargo bench --bench directed` (add `-- --quick` for 10x smaller graphs). Answers are
//! checked against known values: a ring lattice with every edge pointing forward (u → u + j,
//! j = 1..K/2) is one strong component with in- and out-degree K/2, no mutual pairs, and
//! Fagiolo's clustering half the lattice's, 3(K − 2)/(8(K − 1)) (every triangle's edges have
//! multiplicity 1, and the denominator d(d − 1) is twice C(d, 2)); preferential attachment with
//! every edge from the newer node to the older is acyclic, so every node is its own strong
//! component.

use std::time::Instant;

use plumb::exact::components::components;
use plumb::exact::directed::directed_stats;
use plumb::models::generate;
use plumb::progress::Quiet;
use plumb::read::source::InputBytes;
use plumb::store::load::{LoadOptions, load_input};

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

fn text(edges: impl Iterator<Item = (u32, u32)>) -> Vec<u8> {
    let mut out = Vec::new();
    let mut buf = itoa::Buffer::new();
    for (u, v) in edges {
        out.extend_from_slice(buf.format(u).as_bytes());
        out.push(b'\t');
        out.extend_from_slice(buf.format(v).as_bytes());
        out.push(b'\n');
    }
    out
}

fn load(name: &str, bytes: &[u8], directed: bool) -> plumb::Graph {
    let opts = LoadOptions {
        directed,
        ..LoadOptions::default()
    };
    load_input(InputBytes::from_vec(name, bytes.to_vec()), &opts, &Quiet).expect("loads")
}

/// Times the read both ways and the directed figures; returns the figures for checking.
fn bench(name: &str, bytes: &[u8]) -> plumb::exact::directed::DirectedStats {
    let (_, t_plain) = best(2, || load(name, bytes, false));
    let (g, t_dir) = best(2, || load(name, bytes, true));
    let dir = g.directions.as_deref().expect("directed");
    let weak = components(&g.csr).stats(&g.csr);
    let (_, t_no_clustering) = best(2, || directed_stats(&g.csr, dir, &weak, false));
    let (stats, t_all) = best(2, || directed_stats(&g.csr, dir, &weak, true));
    let (_, t_tri) = best(2, || plumb::exact::triangles::total(&g.csr));
    println!(
        "{name:<40} {:>9} directed edges | read undirected {t_plain:.2} s, directed {t_dir:.2} s \
         ({:.2}x) | store {:.1} MB | directed figures without clustering {t_no_clustering:.2} s, \
         with Fagiolo clustering {t_all:.2} s (undirected triangle count {t_tri:.2} s)",
        stats.directed_edges,
        t_dir / t_plain,
        g.store_bytes() as f64 / 1e6,
    );
    stats
}

fn main() {
    let quick = std::env::args().any(|a| a == "--quick");
    let s = if quick { 10 } else { 1 };
    let n = 1_000_000 / s;
    let half_k = 5u32;
    println!(
        "plumb directed bench: {} threads",
        rayon::current_num_threads()
    );

    let ring = text((0..n).flat_map(|u| (1..=half_k).map(move |j| (u, (u + j) % n))));
    let d = bench(&format!("forward ring lattice n={n} K=10"), &ring);
    let k = 2.0 * half_k as f64;
    assert_eq!(d.directed_edges, n as u64 * half_k as u64);
    assert_eq!((d.mutual_pairs, d.strong_components), (0, 1));
    assert_eq!((d.out_degree.min, d.out_degree.max), (half_k, half_k));
    assert_eq!((d.in_degree.min, d.in_degree.max), (half_k, half_k));
    let c = d.clustering.expect("computed");
    let want = 3.0 * (k - 2.0) / (8.0 * (k - 1.0));
    assert!((c.transitivity - want).abs() < 1e-12, "{}", c.transitivity);
    assert!((c.average - want).abs() < 1e-12, "{}", c.average);
    drop(ring);

    let pa = generate::preferential_attachment(n, 5, 3);
    let newer_to_older = text((0..n).flat_map(|u| {
        pa.neighbors(u)
            .iter()
            .filter(move |&&v| v < u)
            .map(move |&v| (u, v))
            .collect::<Vec<_>>()
    }));
    let d = bench(
        &format!("preferential attachment n={n} d=5, new → old"),
        &newer_to_older,
    );
    assert_eq!(d.directed_edges, pa.edge_count());
    assert_eq!(d.strong_components, n as u64, "acyclic: every node alone");
    assert_eq!(d.mutual_pairs, 0);
}

//! Ingest throughput, peak build memory and store reopen time on generated inputs.
//!
//! Run: `cargo bench --bench ingest` (add `-- --quick` for a smaller run). Every measurement
//! also checks its answer (edge counts against a naive count), so a fast wrong build fails.

use std::alloc::{GlobalAlloc, Layout, System};
use std::path::Path;
use std::sync::atomic::{AtomicUsize, Ordering::Relaxed};
use std::time::Instant;

use plumb::Graph;
use plumb::progress::Quiet;
use plumb::store::csr::Csr;
use plumb::store::graph::NodeIds;
use plumb::store::load::{self, LoadOptions};
use rand::{RngExt, SeedableRng};

/// Counts live heap bytes and their peak, to measure build memory without page-cache noise.
struct Counting;

static LIVE: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, l: Layout) -> *mut u8 {
        let p = unsafe { System.alloc(l) };
        if !p.is_null() {
            let now = LIVE.fetch_add(l.size(), Relaxed) + l.size();
            PEAK.fetch_max(now, Relaxed);
        }
        p
    }
    unsafe fn alloc_zeroed(&self, l: Layout) -> *mut u8 {
        let p = unsafe { System.alloc_zeroed(l) };
        if !p.is_null() {
            let now = LIVE.fetch_add(l.size(), Relaxed) + l.size();
            PEAK.fetch_max(now, Relaxed);
        }
        p
    }
    unsafe fn dealloc(&self, p: *mut u8, l: Layout) {
        unsafe { System.dealloc(p, l) };
        LIVE.fetch_sub(l.size(), Relaxed);
    }
    unsafe fn realloc(&self, p: *mut u8, l: Layout, new: usize) -> *mut u8 {
        let q = unsafe { System.realloc(p, l, new) };
        if !q.is_null() {
            if new >= l.size() {
                let now = LIVE.fetch_add(new - l.size(), Relaxed) + new - l.size();
                PEAK.fetch_max(now, Relaxed);
            } else {
                LIVE.fetch_sub(l.size() - new, Relaxed);
            }
        }
        q
    }
}

#[global_allocator]
static ALLOC: Counting = Counting;

const MB: f64 = 1e6;
const MIB: f64 = 1024.0 * 1024.0;

fn ring_lattice(n: u64, half_k: u64) -> Vec<u8> {
    let mut out = Vec::with_capacity((n * half_k * 16) as usize);
    for i in 0..n {
        for j in 1..=half_k {
            out.extend_from_slice(format!("{i}\t{}\n", (i + j) % n).as_bytes());
        }
    }
    out
}

fn random_pairs(n: u64, m: u64, seed: u64) -> (Vec<u8>, u64) {
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    let mut out = Vec::with_capacity((m * 16) as usize);
    let mut pairs = Vec::with_capacity(m as usize);
    for _ in 0..m {
        let (a, b) = (rng.random_range(0..n), rng.random_range(0..n));
        out.extend_from_slice(format!("{a} {b}\n").as_bytes());
        if a != b {
            pairs.push((a.min(b), a.max(b)));
        }
    }
    // The naive answer the fast build must match.
    pairs.sort_unstable();
    pairs.dedup();
    (out, pairs.len() as u64)
}

/// Best of `reps` loads; returns the graph of the last one, seconds, and peak heap growth.
fn time_load(path: &Path, reps: usize) -> (Graph, f64, usize) {
    let mut best = f64::MAX;
    let mut peak = 0;
    let mut last = None;
    for _ in 0..reps {
        drop(last.take());
        let base = LIVE.load(Relaxed);
        PEAK.store(base, Relaxed);
        let t = Instant::now();
        let g = load::load(path, &LoadOptions::default(), &Quiet).expect("bench input loads");
        best = best.min(t.elapsed().as_secs_f64());
        peak = PEAK.load(Relaxed) - base;
        last = Some(g);
    }
    (last.unwrap(), best, peak)
}

/// The text's pairs as a Parquet file of two int64 columns, row groups of 2^20 rows.
fn parquet_of(text: &[u8], codec: parquet::basic::Compression) -> Vec<u8> {
    use parquet::column::writer::ColumnWriter;
    let (mut a, mut b) = (Vec::new(), Vec::new());
    for line in text.split(|&c| c == b'\n').filter(|l| !l.is_empty()) {
        let mut f = std::str::from_utf8(line).unwrap().split_ascii_whitespace();
        a.push(f.next().unwrap().parse::<i64>().unwrap());
        b.push(f.next().unwrap().parse::<i64>().unwrap());
    }
    let schema = std::sync::Arc::new(
        parquet::schema::parser::parse_message_type(
            "message edges { required int64 src; required int64 dst; }",
        )
        .unwrap(),
    );
    let props = std::sync::Arc::new(
        parquet::file::properties::WriterProperties::builder()
            .set_compression(codec)
            .build(),
    );
    let mut out = Vec::new();
    let mut w = parquet::file::writer::SerializedFileWriter::new(&mut out, schema, props).unwrap();
    for (ga, gb) in a.chunks(1 << 20).zip(b.chunks(1 << 20)) {
        let mut rg = w.next_row_group().unwrap();
        for vals in [ga, gb] {
            let mut c = rg.next_column().unwrap().unwrap();
            match c.untyped() {
                ColumnWriter::Int64ColumnWriter(w) => {
                    w.write_batch(vals, None, None).unwrap();
                }
                _ => unreachable!(),
            }
            c.close().unwrap();
        }
        rg.close().unwrap();
    }
    w.close().unwrap();
    out
}

fn zstd_decode_seconds(path: &Path) -> f64 {
    let data = std::fs::read(path).unwrap();
    let t = Instant::now();
    let mut d = zstd::stream::read::Decoder::new(&data[..]).unwrap();
    std::io::copy(&mut d, &mut std::io::sink()).unwrap();
    t.elapsed().as_secs_f64()
}

fn zstd_cli_seconds(path: &Path) -> Option<f64> {
    let t = Instant::now();
    let st = std::process::Command::new("zstd")
        .args(["-dc", "-q"])
        .arg(path)
        .stdout(std::process::Stdio::null())
        .status()
        .ok()?;
    st.success().then(|| t.elapsed().as_secs_f64())
}

/// Seconds and peak heap over the store's size.
fn report(name: &str, path: &Path, text_bytes: usize, expect_m: u64, reps: usize) -> (f64, f64) {
    let (g, secs, peak) = time_load(path, reps);
    assert_eq!(g.edge_count(), expect_m, "{name}: wrong edge count");
    let store = g.store_bytes() as f64;
    println!(
        "{name:<26} {:>8.1} MB on disk {:>7.3} s {:>7.0} MB/s of text   peak heap {:>6.0} MiB = {:.2} x store ({:.0} MiB; {:.1} B/edge, {:.1} B/node)",
        std::fs::metadata(path).unwrap().len() as f64 / MB,
        secs,
        text_bytes as f64 / MB / secs,
        peak as f64 / MIB,
        peak as f64 / store,
        store / MIB,
        g.csr.targets().len() as f64 * 4.0 / g.edge_count() as f64,
        (g.csr.offsets().len() as f64 * 8.0 + g.ids.bytes() as f64) / g.node_count() as f64,
    );
    (secs, peak as f64 / store)
}

/// One line of the target table: the measured figure, the target and whether it is met.
fn target(what: &str, measured: f64, unit: &str, goal: f64, at_least: bool) {
    let met = if at_least {
        measured >= goal
    } else {
        measured <= goal
    };
    println!(
        "  {what:<44} {measured:>8.2} {unit:<5} target {} {goal} {unit:<5} {}",
        if at_least { ">=" } else { "<=" },
        if met { "met" } else { "NOT met" }
    );
}

fn main() {
    let quick = std::env::args().any(|a| a == "--quick");
    let (n, half_k, m_rand, reps) = if quick {
        (100_000u64, 5u64, 500_000u64, 2)
    } else {
        (1_000_000, 5, 5_000_000, 3)
    };
    println!(
        "plumb ingest bench: {} threads{}",
        rayon::current_num_threads(),
        if quick { " (quick)" } else { "" }
    );
    let dir = tempfile::tempdir().unwrap();

    let ring = ring_lattice(n, half_k);
    let (rand_text, rand_m) = random_pairs(n, m_rand, 42);
    // The build targets of this machine's scale issue, printed beside what was measured.
    let mut table = Vec::new();
    for (name, text, m, mbps_goal) in [
        ("ring-lattice (sorted)", &ring, n * half_k, 800.0),
        ("random pairs (unsorted)", &rand_text, rand_m, 400.0),
    ] {
        let plain = dir.path().join("edges.txt");
        std::fs::write(&plain, text).unwrap();
        let (plain_s, plain_peak) = report(&format!("{name} plain"), &plain, text.len(), m, reps);
        let z1 = dir.path().join("edges.txt.zst");
        std::fs::write(&z1, zstd::encode_all(&text[..], 3).unwrap()).unwrap();
        let (z_s, z_peak) = report(&format!("{name} zstd-1f"), &z1, text.len(), m, reps);
        let dec = zstd_decode_seconds(&z1);
        let cli = zstd_cli_seconds(&z1);
        println!(
            "{:<26} zstd decode alone {:.3} s in-process{}; ingest/decode {:.2}x, zstd/plain {:.2}x",
            "",
            dec,
            cli.map_or(String::new(), |c| format!(", {c:.3} s `zstd -dc`")),
            z_s / cli.unwrap_or(dec),
            z_s / plain_s
        );
        let zf = dir.path().join("edges.frames.zst");
        plumb::outfile::write_zstd_frames(&zf, text, 3, 4 << 20).unwrap();
        let (zf_s, zf_peak) = report(&format!("{name} zstd-frames"), &zf, text.len(), m, reps);
        // The same edges as Parquet (two int64 columns), against the zstd text per edge.
        let mut parquet_ratio = 0.0f64;
        for (label, codec) in [
            ("parquet-snappy", parquet::basic::Compression::SNAPPY),
            (
                "parquet-zstd",
                parquet::basic::Compression::ZSTD(Default::default()),
            ),
        ] {
            let pq = dir.path().join(format!("edges.{label}.parquet"));
            std::fs::write(&pq, parquet_of(text, codec)).unwrap();
            let (pq_s, _) = report(&format!("{name} {label}"), &pq, text.len(), m, reps);
            parquet_ratio = parquet_ratio.max(pq_s / zf_s);
        }
        table.push((
            name,
            text.len() as f64 / MB / plain_s,
            mbps_goal,
            zf_s / plain_s,
            z_s / cli.unwrap_or(dec),
            plain_peak.max(z_peak).max(zf_peak),
            parquet_ratio,
        ));
    }
    println!("targets:");
    for (name, mbps, goal, frames_ratio, single_ratio, peak, parquet_ratio) in table {
        println!(" {name}");
        target("plain text into the store", mbps, "MB/s", goal, true);
        target("zstd frames / plain", frames_ratio, "x", 1.3, false);
        target(
            "zstd single frame / `zstd -dc`",
            single_ratio,
            "x",
            1.5,
            false,
        );
        target(
            "peak heap / store, worst of the three",
            peak,
            "x",
            1.5,
            false,
        );
        target(
            "Parquet / zstd frames, per edge (worst codec)",
            parquet_ratio,
            "x",
            1.0,
            false,
        );
    }

    // Store reopen: a ring lattice built directly (no text), written, then opened in place.
    let (sn, sk) = if quick {
        (1_000_000u64, 5u64)
    } else {
        (10_000_000, 10)
    };
    let g = lattice_graph(sn, sk);
    let store = dir.path().join("big.plumb");
    let t = Instant::now();
    let bytes = plumb::store::file::write(&g, &store).unwrap();
    let write_s = t.elapsed().as_secs_f64();
    drop(g);
    let mut best = f64::MAX;
    for _ in 0..3 {
        let t = Instant::now();
        let g = plumb::store::file::open(&store).unwrap();
        best = best.min(t.elapsed().as_secs_f64());
        assert_eq!(g.edge_count(), sn * sk);
    }
    println!(
        "store of {} edges: {:.0} MiB written in {:.2} s; reopened in place (checksum and bounds checked) in {:.3} s",
        sn * sk,
        bytes as f64 / MIB,
        write_s,
        best
    );
}

/// Ring lattice as a graph, built straight into CSR.
fn lattice_graph(n: u64, half_k: u64) -> Graph {
    let k = 2 * half_k;
    let mut targets = Vec::with_capacity((n * k) as usize);
    let mut offsets = Vec::with_capacity(n as usize + 1);
    offsets.push(0u64);
    for i in 0..n {
        let mut l: Vec<u32> = (1..=half_k)
            .flat_map(|j| [((i + j) % n) as u32, ((i + n - j) % n) as u32])
            .collect();
        l.sort_unstable();
        targets.extend_from_slice(&l);
        offsets.push(targets.len() as u64);
    }
    Graph {
        csr: Csr::from_parts(offsets.into(), targets.into()),
        ids: NodeIds::Range {
            first: 0,
            len: n as usize,
        },
        intake: plumb::store::intake::Intake::generated("generated ring lattice", n, n * half_k, 0),
        directions: None,
    }
}

//! The distributed profile against the single-machine one on the same part files: preferential
//! attachment (Barabási & Albert 1999), 50 million edges in 8 plain-text parts (`-- --quick`:
//! 5 million). Each run is the `plumb` program as a user runs it, timed end to end, with the
//! peak resident set of its largest process (from wait4: the process and the processes it
//! started and waited for). Answers are checked: every exact figure of each distributed run
//! equals the single-machine profile's; the sampled run's transitivity lies near the exact one
//! and its HyperBall mean distance's interval overlaps the sampled sources'.
//!
//! Run: `cargo bench --bench spread` (`-- --quick` for the small graph).

use std::io::Write;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::Instant;

use plumb::models::generate::{self, Model};
use serde_json::Value;

/// Seconds and peak resident MiB of one run of `plumb args`.
#[allow(clippy::zombie_processes)] // reaped by wait4 below, which also gives its rusage
fn run(args: &[&str]) -> (f64, f64) {
    let started = Instant::now();
    let child = Command::new(env!("CARGO_BIN_EXE_plumb"))
        .args(args)
        .stdout(Stdio::null())
        .spawn()
        .expect("plumb starts");
    let mut status = 0;
    // SAFETY: rusage is plain data, filled by the kernel for our own child.
    let mut ru: libc::rusage = unsafe { std::mem::zeroed() };
    let pid = unsafe { libc::wait4(child.id() as i32, &mut status, 0, &mut ru) };
    let secs = started.elapsed().as_secs_f64();
    assert!(
        pid > 0 && libc::WIFEXITED(status) && libc::WEXITSTATUS(status) == 0,
        "{args:?} failed"
    );
    // ru_maxrss is in KiB on Linux.
    (secs, ru.ru_maxrss as f64 / 1024.0)
}

/// The report's stage times, in words.
fn stages(path: &Path) -> String {
    let doc: Value = serde_json::from_slice(&std::fs::read(path).unwrap()).unwrap();
    let mut all: Vec<&Value> = Vec::new();
    all.extend(
        doc["profile"]["intake"]["stages"]
            .as_array()
            .into_iter()
            .flatten(),
    );
    all.extend(doc["profile"]["stages"].as_array().into_iter().flatten());
    all.iter()
        .map(|s| {
            format!(
                "{} {:.1} s",
                s["name"].as_str().unwrap_or("?"),
                s["seconds"].as_f64().unwrap_or(0.0)
            )
        })
        .collect::<Vec<_>>()
        .join(" · ")
}

fn exact_part(path: &Path) -> Value {
    let doc: Value = serde_json::from_slice(&std::fs::read(path).unwrap()).unwrap();
    let p = &doc["profile"];
    serde_json::json!({
        "nodes": p["intake"]["nodes"], "edges": p["intake"]["edges"],
        "repeated": p["intake"]["repeated_lines"], "reciprocal": p["intake"]["reciprocal_pairs"],
        "degrees": p["degrees"], "components": p["components"], "clustering": p["clustering"],
    })
}

fn main() {
    let quick = std::env::args().any(|a| a == "--quick");
    let (n, d) = if quick {
        (1_000_000, 5)
    } else {
        (10_000_000, 5)
    };
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("parts");
    std::fs::create_dir(&dir).unwrap();
    let parts = 8;
    let mut files: Vec<_> = (0..parts)
        .map(|k| {
            std::io::BufWriter::new(
                std::fs::File::create(dir.join(format!("part-{k:03}.tsv"))).unwrap(),
            )
        })
        .collect();
    let mut buf = itoa::Buffer::new();
    let mut i = 0usize;
    generate::stream(&Model::Preferential { n, d }, 7, &mut |a, b| {
        let f = &mut files[i % parts];
        f.write_all(buf.format(a).as_bytes()).unwrap();
        f.write_all(b"\t").unwrap();
        f.write_all(buf.format(b).as_bytes()).unwrap();
        f.write_all(b"\n").unwrap();
        i += 1;
    })
    .unwrap();
    drop(files);
    let bytes: u64 = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().metadata().unwrap().len())
        .sum();
    println!(
        "spread: preferential attachment n={n} d={d}: {i} edges in {parts} parts, {:.0} MB",
        bytes as f64 / 1e6
    );
    let d_str = dir.to_str().unwrap();
    let single = tmp.path().join("single.json");
    let (t, peak) = run(&[
        "profile",
        d_str,
        "--figures",
        "clustering,distances",
        "--clustering",
        "exact",
        "--distances",
        "sources",
        "--json",
        single.to_str().unwrap(),
    ]);
    println!(
        "  single machine          {t:7.2} s   peak {peak:7.0} MiB   {}",
        stages(&single)
    );
    let want = exact_part(&single);
    for p in ["1", "2"] {
        let json = tmp.path().join(format!("spread-{p}.json"));
        let (t, peak) = run(&[
            "spread",
            d_str,
            "--local",
            p,
            "--sources",
            "64",
            "--json",
            json.to_str().unwrap(),
        ]);
        let doc: Value = serde_json::from_slice(&std::fs::read(&json).unwrap()).unwrap();
        println!(
            "  spread, {p} process{}      {t:7.2} s   peak {peak:7.0} MiB (largest process) · {} items exchanged · {} label rounds · {} wedge rounds · {} BFS rounds",
            if p == "1" { " " } else { "es" },
            doc["spread"]["exchanged_items"],
            doc["spread"]["label_rounds"],
            doc["spread"]["wedge_rounds"],
            doc["spread"]["bfs_rounds"],
        );
        println!("      stages: {}", stages(&json));
        println!("      exchanged by kind: {}", doc["spread"]["exchanged"]);
        assert_eq!(
            exact_part(&json),
            want,
            "{p} processes disagree with one machine"
        );
    }
    println!("  every exact figure equal across the three runs");

    // The estimated figures, distributed: wedge- and node-sampled clustering, HyperBall on the
    // giant component (2 hash seeds, the fewest its interval allows), the small-world figures.
    let json = tmp.path().join("spread-sampled.json");
    let (t, peak) = run(&[
        "spread",
        d_str,
        "--local",
        "2",
        "--sampled-clustering",
        "--hyperball",
        "--ball-runs",
        "2",
        "--json",
        json.to_str().unwrap(),
    ]);
    let doc: Value = serde_json::from_slice(&std::fs::read(&json).unwrap()).unwrap();
    let one: Value = serde_json::from_slice(&std::fs::read(&single).unwrap()).unwrap();
    println!(
        "  spread, 2 processes, sampled clustering and HyperBall {t:7.2} s   peak {peak:7.0} MiB · {} items exchanged · {} HyperBall rounds",
        doc["spread"]["exchanged_items"], doc["spread"]["ball_rounds"],
    );
    println!("      stages: {}", stages(&json));
    println!("      exchanged by kind: {}", doc["spread"]["exchanged"]);
    let (got, exact) = (
        &doc["profile"]["clustering"]["transitivity"],
        one["profile"]["clustering"]["transitivity"]["value"]
            .as_f64()
            .unwrap(),
    );
    let (lo, hi) = (
        got["interval"]["low"].as_f64().unwrap(),
        got["interval"]["high"].as_f64().unwrap(),
    );
    println!("      transitivity {got} against exact {exact}");
    // One seed's interval misses at the 5% rate; beyond twice its half-width is a fault.
    assert!((got["value"].as_f64().unwrap() - exact).abs() <= hi - lo);
    let (a, b) = (
        &doc["profile"]["distances"]["mean"],
        &one["profile"]["distances"]["mean"],
    );
    println!("      mean distance {a} against sampled sources {b}");
    assert!(
        a["interval"]["low"].as_f64() <= b["interval"]["high"].as_f64()
            && b["interval"]["low"].as_f64() <= a["interval"]["high"].as_f64(),
        "the HyperBall and sampled-source intervals do not overlap"
    );
    let sigma = &doc["profile"]["small_world"]["coefficients"][0]["sigma"];
    println!("      sigma {sigma}");
    assert!(sigma["value"].as_f64().unwrap() > 0.0);
}

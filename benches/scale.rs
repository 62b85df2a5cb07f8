//! The big runs, as a user would make them, through the `plumb` binary:
//!
//! 1. **Profile at scale.** `plumb synth attach` streams a preferential-attachment zstd file of
//!    `PLUMB_SCALE_EDGES` edges (default 1e9; nodes = edges / 10, 10 per node, seed 1), then
//!    `plumb profile FILE --json` runs with the defaults. Targets on a 24 GiB, 2-core machine:
//!    under 10 minutes and a peak resident set under 16 GiB. Checked: the node and edge counts
//!    against what `synth` wrote, every figure present with its method, every estimate with an
//!    interval; at 1e8 edges or fewer the sampled transitivity's interval is also checked
//!    against an exact count (`--clustering exact`).
//! 2. **Build beyond memory.** A `PLUMB_SCALE_EXTERNAL_EDGES` file (default 4e8; 0 skips) packed
//!    in memory and with `--memory-budget 2G` (so on disk): the two stores must agree section
//!    for section; time and peak resident set of each are printed.
//!
//! Run: `cargo bench --bench scale` (about half an hour here, most of it generating the inputs;
//! files are kept in `PLUMB_SCALE_DIR`, default `target/scale`, and reused). Not part of
//! `cargo test`. Exits nonzero when an answer is wrong; a missed time or memory target is
//! printed as MISSED.

use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::Instant;

const BIN: &str = env!("CARGO_BIN_EXE_plumb");

/// Wall seconds, peak resident set in bytes, and standard output of one run of the binary.
struct Ran {
    seconds: f64,
    peak_rss: u64,
    stdout: String,
}

fn run(args: &[&str], out_file: &Path) -> Ran {
    let out = std::fs::File::create(out_file).expect("create the output log");
    let t = Instant::now();
    // Reaped below with wait4, which also reports this child's own peak resident set.
    #[allow(clippy::zombie_processes)]
    let child = Command::new(BIN)
        .args(args)
        .stdout(out)
        .stderr(Stdio::inherit())
        .spawn()
        .expect("start plumb");
    let pid = child.id() as libc::pid_t;
    let mut status = 0;
    // SAFETY: a zeroed rusage is a valid out-parameter; wait4 reaps exactly this child.
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    let r = unsafe { libc::wait4(pid, &mut status, 0, &mut usage) };
    let seconds = t.elapsed().as_secs_f64();
    assert_eq!(r, pid, "wait4 failed");
    let code = if libc::WIFEXITED(status) {
        libc::WEXITSTATUS(status)
    } else {
        -1
    };
    let stdout = std::fs::read_to_string(out_file).unwrap_or_default();
    if code != 0 {
        eprintln!("{stdout}");
        panic!("plumb {} exited with {code}", args.join(" "));
    }
    Ran {
        seconds,
        // ru_maxrss is in KiB on Linux.
        peak_rss: usage.ru_maxrss as u64 * 1024,
        stdout,
    }
}

fn env_count(name: &str, default: f64) -> u64 {
    std::env::var(name)
        .ok()
        .map(|v| {
            v.parse::<f64>()
                .unwrap_or_else(|_| panic!("{name}={v} is not a number"))
        })
        .unwrap_or(default) as u64
}

fn gib(b: u64) -> String {
    format!("{:.2} GiB", b as f64 / (1u64 << 30) as f64)
}

/// Generate (or reuse) the attachment file of about `edges` edges; returns its path and the
/// node and edge counts `synth` reported.
fn input(dir: &Path, edges: u64) -> (PathBuf, u64, u64) {
    let nodes = edges / 10;
    let path = dir.join(format!("attach-n{nodes}-d10-s1.tsv.zst"));
    let log = dir.join(format!("attach-n{nodes}-d10-s1.synth.txt"));
    if !path.exists() || !log.exists() {
        println!("generating {} …", path.display());
        let r = run(
            &[
                "synth",
                "attach",
                "--nodes",
                &nodes.to_string(),
                "--per-node",
                "10",
                "--seed",
                "1",
                "-o",
                path.to_str().unwrap(),
            ],
            &log,
        );
        println!(
            "  synth: {:.1} s, peak resident {}",
            r.seconds,
            gib(r.peak_rss)
        );
    }
    let text = std::fs::read_to_string(&log).unwrap();
    // "  5,000,000 nodes · 49,997,881 edges · …"
    let line = text
        .lines()
        .find(|l| l.contains(" nodes · "))
        .expect("synth's summary line");
    // The number just before `word`.
    let num = |word: &str| -> u64 {
        let before = line.split(word).next().unwrap();
        let tok = before.split_whitespace().last().unwrap();
        tok.replace(',', "").parse().unwrap()
    };
    (path, num(" nodes"), num(" edges"))
}

fn json(path: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

/// Every object with a `method` is a figure: estimates must carry an interval with a level.
fn check_figures(v: &serde_json::Value, at: &str, count: &mut usize, bad: &mut Vec<String>) {
    match v {
        serde_json::Value::Object(o) => {
            if let Some(m) = o.get("method").filter(|m| m.get("kind").is_some()) {
                *count += 1;
                let kind = m["kind"].as_str().unwrap_or("");
                if o.get("value").is_none_or(|x| x.is_null()) {
                    bad.push(format!("{at}: no value"));
                }
                if kind == "estimate" {
                    let iv = &o["interval"];
                    if iv.is_null() || iv["level"].as_f64().is_none() {
                        bad.push(format!("{at}: an estimate without an interval"));
                    }
                }
                return;
            }
            for (k, x) in o {
                check_figures(x, &format!("{at}.{k}"), count, bad);
            }
        }
        serde_json::Value::Array(a) => {
            for (i, x) in a.iter().enumerate() {
                check_figures(x, &format!("{at}[{i}]"), count, bad);
            }
        }
        _ => {}
    }
}

fn print_stages(report: &serde_json::Value) {
    let mut rows = Vec::new();
    for st in [
        &report["profile"]["intake"]["stages"],
        &report["profile"]["stages"],
    ] {
        if let Some(st) = st.as_array() {
            for s in st {
                rows.push(format!(
                    "{} {:.1} s",
                    s["name"].as_str().unwrap_or("?"),
                    s["seconds"].as_f64().unwrap_or(f64::NAN)
                ));
            }
        }
    }
    println!("  stages: {}", rows.join(" · "));
}

fn profile_at_scale(dir: &Path, edges: u64, failures: &mut Vec<String>) {
    println!("\n== profile at scale: {edges} edges (preferential attachment) ==");
    let (path, n, m) = input(dir, edges);
    let bytes = std::fs::metadata(&path).unwrap().len();
    println!(
        "  input: {} ({}), {n} nodes, {m} edges",
        path.display(),
        gib(bytes)
    );
    let report = dir.join(format!("profile-{edges}.json"));
    let r = run(
        &[
            "profile",
            path.to_str().unwrap(),
            "--json",
            report.to_str().unwrap(),
        ],
        &dir.join(format!("profile-{edges}.txt")),
    );
    let rep = json(&report);
    print_stages(&rep);
    let (time_ok, mem_ok) = (r.seconds < 600.0, r.peak_rss < 16 << 30);
    println!(
        "  whole profile: {:.1} s (target < 600 s: {}) · peak resident {} (target < 16 GiB: {})",
        r.seconds,
        if time_ok { "met" } else { "MISSED" },
        gib(r.peak_rss),
        if mem_ok { "met" } else { "MISSED" }
    );
    let got_n = rep["profile"]["degrees"]["nodes"].as_u64();
    let got_m = rep["profile"]["degrees"]["edges"].as_u64();
    if got_n != Some(n) || got_m != Some(m) {
        failures.push(format!(
            "{edges}: the report has {got_n:?} nodes and {got_m:?} edges; synth wrote {n} and {m}"
        ));
    }
    let (mut count, mut bad) = (0, Vec::new());
    check_figures(&rep["profile"], "profile", &mut count, &mut bad);
    println!(
        "  figures with a method: {count}; estimates without an interval: {}",
        bad.len()
    );
    failures.extend(bad);
    for (name, ptr) in [
        ("transitivity", "/profile/clustering/transitivity"),
        ("average clustering", "/profile/clustering/average_zeros"),
        ("mean distance", "/profile/distances/mean"),
        (
            "effective diameter",
            "/profile/distances/effective_diameter",
        ),
        ("sigma", "/profile/small_world/coefficients/0/sigma"),
        ("omega", "/profile/small_world/coefficients/0/omega"),
    ] {
        match rep.pointer(ptr) {
            Some(f) => println!(
                "  {name}: {} ({}{})",
                f["value"],
                f["method"]["kind"].as_str().unwrap_or("?"),
                match f["interval"].as_object() {
                    Some(iv) => format!(", {} to {} at {}", iv["low"], iv["high"], iv["level"]),
                    None => String::new(),
                }
            ),
            None => failures.push(format!("{edges}: the report has no {name}")),
        }
    }
    if edges <= 100_000_000
        && rep["profile"]["clustering"]["transitivity"]["method"]["kind"] == "estimate"
    {
        let exact_report = dir.join(format!("profile-{edges}-exact.json"));
        run(
            &[
                "profile",
                path.to_str().unwrap(),
                "--figures",
                "clustering",
                "--clustering",
                "exact",
                "--json",
                exact_report.to_str().unwrap(),
            ],
            &dir.join(format!("profile-{edges}-exact.txt")),
        );
        let exact = json(&exact_report)["profile"]["clustering"]["transitivity"]["value"]
            .as_f64()
            .unwrap();
        let iv = &rep["profile"]["clustering"]["transitivity"]["interval"];
        let (lo, hi) = (iv["low"].as_f64().unwrap(), iv["high"].as_f64().unwrap());
        println!("  exact transitivity {exact:.6e}; sampled interval {lo:.6e} to {hi:.6e}");
        if !(lo..=hi).contains(&exact) {
            // One miss in twenty is the nominal rate; report it rather than hide it.
            failures.push(format!(
                "{edges}: the exact transitivity {exact} lies outside the sampled interval"
            ));
        }
    }
}

/// Header words n, entries, first id and the section positions up to the intake's.
fn header(path: &Path) -> Vec<u64> {
    let mut b = [0u8; 128];
    std::fs::File::open(path)
        .unwrap()
        .read_exact(&mut b)
        .unwrap();
    (0..9)
        .map(|i| u64::from_le_bytes(b[24 + 8 * i..32 + 8 * i].try_into().unwrap()))
        .collect()
}

/// Whether bytes `from..to` of two files are equal (streamed, 64 MiB at a time).
fn same_range(a: &Path, b: &Path, from: u64, to: u64) -> bool {
    use std::io::{Seek, SeekFrom};
    let (mut fa, mut fb) = (
        std::fs::File::open(a).unwrap(),
        std::fs::File::open(b).unwrap(),
    );
    fa.seek(SeekFrom::Start(from)).unwrap();
    fb.seek(SeekFrom::Start(from)).unwrap();
    let (mut ba, mut bb) = (vec![0u8; 64 << 20], vec![0u8; 64 << 20]);
    let mut left = to - from;
    while left > 0 {
        let k = left.min(ba.len() as u64) as usize;
        fa.read_exact(&mut ba[..k]).unwrap();
        fb.read_exact(&mut bb[..k]).unwrap();
        if ba[..k] != bb[..k] {
            return false;
        }
        left -= k as u64;
    }
    true
}

fn build_beyond_memory(dir: &Path, edges: u64, failures: &mut Vec<String>) {
    println!("\n== build beyond memory: {edges} edges, --memory-budget 2G ==");
    let (path, n, m) = input(dir, edges);
    let (mem, disk) = (dir.join("in-memory.plumb"), dir.join("on-disk.plumb"));
    let p = path.to_str().unwrap();
    let a = run(
        &["pack", p, "-o", mem.to_str().unwrap(), "--build", "memory"],
        &dir.join("pack-memory.txt"),
    );
    let b = run(
        &[
            "pack",
            p,
            "-o",
            disk.to_str().unwrap(),
            "--memory-budget",
            "2G",
        ],
        &dir.join("pack-disk.txt"),
    );
    let on_disk = b.stdout.contains("on disk, within a memory budget");
    println!(
        "  in memory: {:.1} s, peak resident {} · budget 2G: {:.1} s, peak resident {} ({})",
        a.seconds,
        gib(a.peak_rss),
        b.seconds,
        gib(b.peak_rss),
        if on_disk {
            "built on disk"
        } else {
            "NOT on disk"
        }
    );
    if let Some(line) = b.stdout.lines().find(|l| l.contains("sorted runs")) {
        println!("  {}", line.trim());
    }
    let (ha, hb) = (header(&mem), header(&disk));
    let same = ha == hb && same_range(&mem, &disk, 128, ha[8]);
    println!(
        "  {n} nodes, {m} edges; stores agree section for section (up to the intake): {}",
        if same { "yes" } else { "NO" }
    );
    if !same || !on_disk {
        failures.push(format!(
            "{edges}: the build on disk differs or did not happen"
        ));
    }
    let _ = std::fs::remove_file(&mem);
    let _ = std::fs::remove_file(&disk);
}

fn main() {
    // `cargo bench` passes `--bench`; nothing else is read from the arguments.
    let dir = std::env::var("PLUMB_SCALE_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|_| Path::new(env!("CARGO_MANIFEST_DIR")).join("target/scale"));
    std::fs::create_dir_all(&dir).unwrap();
    let mut failures = Vec::new();
    let edges = env_count("PLUMB_SCALE_EDGES", 1e9);
    if edges > 0 {
        profile_at_scale(&dir, edges, &mut failures);
    }
    let external = env_count("PLUMB_SCALE_EXTERNAL_EDGES", 4e8);
    if external > 0 {
        build_beyond_memory(&dir, external, &mut failures);
    }
    if failures.is_empty() {
        println!("\nall answers checked");
    } else {
        for f in &failures {
            println!("WRONG: {f}");
        }
        std::process::exit(1);
    }
}

//! The build on disk (sorted runs in a scratch folder, merged into a store file) against the
//! in-memory build: the same store, section for section, on inputs of several shapes; scratch
//! space cleaned up after success, after an error and after Ctrl-C; a clear refusal (exit 5)
//! when the scratch disk lacks the room.
//!
//! The reference is the in-memory build, itself tested against the naive reader and against
//! networkx and igraph figures elsewhere; the method is the external merge sort (Knuth, *The Art
//! of Computer Programming* vol. 3, 1998, §5.4.1).

mod common;

use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use common::*;
use plumb::progress::Quiet;
use plumb::store::load::{self, BuildChoice, LoadOptions};
use proptest::prelude::*;

fn opts(build: BuildChoice, budget: u64, scratch: &Path) -> LoadOptions {
    LoadOptions {
        build,
        memory_budget: budget,
        scratch: Some(scratch.to_path_buf()),
        scratch_keep_free: 0,
        ..LoadOptions::default()
    }
}

/// Store header words: n, entries, id_first, then section positions and lengths up to the
/// intake (everything the two builds must agree on).
fn header_words(b: &[u8]) -> Vec<u64> {
    (0..12)
        .map(|i| u64::from_le_bytes(b[24 + 8 * i..32 + 8 * i].try_into().unwrap()))
        .collect()
}

/// Pack `text` both ways and check the stores agree: every section byte for byte, and the
/// intake's counts (all but the stage timings and the on-disk note).
fn both_ways(text: &[u8], name: &str, budget: u64) -> plumb::store::intake::Intake {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join(name);
    std::fs::write(&input, text).unwrap();
    let scratch = dir.path().join("scratch");
    std::fs::create_dir(&scratch).unwrap();
    let (mem_path, disk_path) = (dir.path().join("mem.plumb"), dir.path().join("disk.plumb"));
    let (m, _) = load::pack(
        &input,
        &mem_path,
        &opts(BuildChoice::Memory, 1 << 30, &scratch),
        &Quiet,
    )
    .unwrap();
    let (d, _) = load::pack(
        &input,
        &disk_path,
        &opts(BuildChoice::Disk, budget, &scratch),
        &Quiet,
    )
    .unwrap();
    assert!(m.intake.on_disk.is_none());
    let on_disk = d.intake.on_disk.clone().expect("built on disk");
    assert!(d.csr.is_mapped(), "the disk build maps its store");
    d.csr.verify().unwrap();
    assert_eq!(m.csr.offsets(), d.csr.offsets());
    assert_eq!(m.csr.targets(), d.csr.targets());

    let (a, b) = (
        std::fs::read(&mem_path).unwrap(),
        std::fs::read(&disk_path).unwrap(),
    );
    let (ha, hb) = (header_words(&a), header_words(&b));
    // n, entries, first id, offsets/targets/ids/id-bytes positions and lengths, intake position.
    assert_eq!(ha[..9], hb[..9]);
    let intake_at = ha[8] as usize;
    assert_eq!(&a[..24], &b[..24]);
    assert_eq!(
        a[128..intake_at],
        b[128..intake_at],
        "sections differ before the intake"
    );
    let strip = |i: &plumb::store::intake::Intake| {
        let mut i = i.clone();
        i.stages.clear();
        i.on_disk = None;
        i
    };
    assert_eq!(strip(&m.intake), strip(&d.intake));
    // The scratch folder is empty again.
    assert_eq!(std::fs::read_dir(&scratch).unwrap().count(), 0);
    assert_eq!(
        on_disk.run_bytes,
        8 * 2 * (m.intake.edge_lines - m.intake.self_loops)
    );
    d.intake
}

/// Edge lines over `n` nodes from a seeded generator, with repeats, reciprocal pairs and
/// self-loops in the mix, ids written in one of several styles.
fn edge_text(n: u32, lines: usize, seed: u64, style: u8) -> String {
    let mut x = seed | 1;
    let mut next = || {
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        x
    };
    let id = |v: u32| match style {
        0 => v.to_string(),
        1 => (v as u64 * 1_000_003 + 17).to_string(),
        2 => format!("node-{v}"),
        _ => (u64::MAX - v as u64).to_string(),
    };
    let mut out = String::from("# generated\n");
    let mut last = (0, 1);
    for i in 0..lines {
        let (u, v) = match next() % 10 {
            0 if i > 0 => last,             // a repeat
            1 if i > 0 => (last.1, last.0), // a reciprocal pair
            2 => {
                let u = (next() % n as u64) as u32;
                (u, u) // a self-loop
            }
            _ => ((next() % n as u64) as u32, (next() % n as u64) as u32),
        };
        last = (u, v);
        out.push_str(&format!("{}\t{}\n", id(u), id(v)));
    }
    out
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    #[test]
    fn disk_build_equals_memory_build(
        n in 2u32..3000,
        lines in 1usize..20_000,
        seed in any::<u64>(),
        style in 0u8..4,
        compressed in any::<bool>(),
    ) {
        let text = edge_text(n, lines, seed, style);
        let (bytes, name) = if compressed {
            (zstd(text.as_bytes()), "e.tsv.zst")
        } else {
            (text.into_bytes(), "e.tsv")
        };
        // A budget this small gives buffers of 1,024 keys: many runs even at these sizes.
        both_ways(&bytes, name, 256 << 10);
    }
}

#[test]
fn matrix_market_builds_on_disk_the_same() {
    let mut text = String::from("%%MatrixMarket matrix coordinate pattern symmetric\n% x\n");
    let body = edge_text(900, 5000, 7, 0);
    let entries: Vec<&str> = body.lines().skip(1).collect();
    text.push_str(&format!("1000 1000 {}\n", entries.len()));
    for e in &entries {
        let (a, b) = e.split_once('\t').unwrap();
        let (a, b): (u32, u32) = (a.parse().unwrap(), b.parse().unwrap());
        text.push_str(&format!("{} {}\n", a + 1, b + 1));
    }
    let intake = both_ways(text.as_bytes(), "m.mtx", 256 << 10);
    // Declared nodes without entries are nodes too, in both builds.
    assert_eq!(intake.nodes, 1000);
}

#[test]
fn hundreds_of_runs_merge_in_buckets() {
    // 20,000 nodes and 300,000 lines under a 640 KiB budget: buffers of a few thousand keys,
    // so about a hundred runs, each read in slices, bucket by bucket, with buckets at the
    // 1,024-key floor (hubs above it take the bitmap path).
    let text = edge_text(20_000, 300_000, 11, 0);
    let intake = both_ways(text.as_bytes(), "e.tsv", 640 << 10);
    let runs = intake.on_disk.unwrap().runs;
    assert!(runs > 64, "{runs} runs");
}

#[test]
fn over_the_budget_auto_builds_on_disk_and_memory_refuses() {
    let text: String = (0..100_000).map(|i| format!("{i} {}\n", i + 1)).collect();
    let dir = tempfile::tempdir().unwrap();
    let auto = load_bytes(
        "chain",
        text.as_bytes(),
        &opts(BuildChoice::Auto, 3 << 20, dir.path()),
    )
    .unwrap();
    assert!(
        auto.intake.on_disk.is_some(),
        "3.6 MiB needed, 3 MiB budget"
    );
    assert_eq!((auto.node_count(), auto.edge_count()), (100_001, 100_000));
    let mem = load_bytes(
        "chain",
        text.as_bytes(),
        &opts(BuildChoice::Memory, 3 << 20, dir.path()),
    );
    assert!(matches!(mem, Err(plumb::Error::OverBudget { .. })));
    // Per-node arrays alone over the budget: refused even on disk.
    let tiny = load_bytes(
        "chain",
        text.as_bytes(),
        &opts(BuildChoice::Auto, 1 << 20, dir.path()),
    )
    .unwrap_err();
    assert!(tiny.to_string().contains("even built on disk"), "{tiny}");
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
}

fn plumb_cmd(args: &[&str]) -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_plumb"));
    c.args(args);
    c
}

#[test]
fn a_scratch_disk_without_room_is_refused_before_starting() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("e.tsv");
    std::fs::write(&input, edge_text(500, 2000, 3, 0)).unwrap();
    let scratch = dir.path().join("s");
    std::fs::create_dir(&scratch).unwrap();
    let out = plumb_cmd(&[
        "profile",
        "--build",
        "disk",
        "--scratch",
        scratch.to_str().unwrap(),
        // Keep more free than any disk has: the space check must refuse.
        "--scratch-keep-free",
        "1000000T",
        input.to_str().unwrap(),
    ])
    .output()
    .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(5), "{err}");
    assert!(err.contains("building on disk needs about"), "{err}");
    assert!(err.contains(scratch.to_str().unwrap()), "{err}");
    assert!(err.contains("--scratch-keep-free"), "{err}");
    assert_eq!(std::fs::read_dir(&scratch).unwrap().count(), 0);
}

#[test]
fn scratch_is_removed_after_an_error_late_in_the_build() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("e.tsv");
    std::fs::write(&input, edge_text(2000, 50_000, 5, 0)).unwrap();
    let scratch = dir.path().join("s");
    std::fs::create_dir(&scratch).unwrap();
    // The output names an existing folder: every run is written and merged before the final
    // rename fails.
    let blocked = dir.path().join("out.plumb");
    std::fs::create_dir(&blocked).unwrap();
    let out = plumb_cmd(&[
        "pack",
        "--build",
        "disk",
        "--memory-budget",
        "256K",
        "--scratch",
        scratch.to_str().unwrap(),
        input.to_str().unwrap(),
        "-o",
        blocked.to_str().unwrap(),
    ])
    .output()
    .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(4), "{err}");
    assert!(err.contains("rename"), "{err}");
    assert_eq!(std::fs::read_dir(&scratch).unwrap().count(), 0);
    // Only the input and the folder: no partial store.
    let names: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names.len(), 3, "{names:?}");
}

#[test]
fn ctrl_c_mid_build_removes_scratch_and_partial_output() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("e.tsv");
    std::fs::write(&input, edge_text(200_000, 3_000_000, 9, 0)).unwrap();
    let scratch = dir.path().join("s");
    std::fs::create_dir(&scratch).unwrap();
    let out = dir.path().join("g.plumb");
    // A tiny budget makes thousands of small runs: seconds of work to interrupt.
    let mut child = plumb_cmd(&[
        "pack",
        "--build",
        "disk",
        "--memory-budget",
        "6M",
        "--scratch",
        scratch.to_str().unwrap(),
        input.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
    ])
    .stdout(Stdio::null())
    .stderr(Stdio::piped())
    .spawn()
    .unwrap();
    // Wait until runs are on disk.
    let start = Instant::now();
    let has_runs = || {
        std::fs::read_dir(&scratch)
            .unwrap()
            .any(|e| std::fs::read_dir(e.unwrap().path()).is_ok_and(|mut d| d.next().is_some()))
    };
    while !has_runs() {
        assert!(
            start.elapsed() < Duration::from_secs(60),
            "no run appeared within a minute"
        );
        assert!(
            child.try_wait().unwrap().is_none(),
            "finished before any run"
        );
        std::thread::sleep(Duration::from_millis(5));
    }
    let kill = Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(kill.success());
    let done = child.wait_with_output().unwrap();
    let err = String::from_utf8_lossy(&done.stderr);
    assert_eq!(done.status.code(), Some(130), "{err}");
    assert!(err.contains("interrupted"), "{err}");
    assert_eq!(
        std::fs::read_dir(&scratch).unwrap().count(),
        0,
        "scratch left behind"
    );
    let names: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names.len(), 2, "a partial output was left: {names:?}");
}

//! The `plumb` binary end to end, as a user runs it: output, stdin, store files, exit codes.

use std::io::Write;
use std::process::{Command, Output, Stdio};

fn plumb(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_plumb"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap()
}

fn plumb_stdin(args: &[&str], input: &[u8]) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_plumb"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    child.stdin.take().unwrap().write_all(input).unwrap();
    child.wait_with_output().unwrap()
}

const DEMO: &str = "demo-data/larkspur/replies-2026-W40.tsv.zst";

#[test]
fn intake_of_the_demo_data() {
    let out = plumb(&["intake", DEMO]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("zstd"), "{text}");
    assert!(text.contains("240,000 edge lines"), "{text}");
    // The skipped header is shown (the row may wrap before it in a narrow report).
    assert!(text.contains("1 header"), "{text}");
    assert!(
        text.contains("\"replier\\treplied_to\\tposted_at\""),
        "{text}"
    );
    // Not a terminal: no progress output at all.
    assert!(out.stderr.is_empty());
}

#[test]
fn json_report_and_stdin() {
    let out = plumb_stdin(&["intake", "--json", "-", "-"], b"1 2\n2 3\n3 3\n");
    assert!(out.status.success());
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["intake"]["edges"], 2);
    assert_eq!(v["intake"]["self_loops"], 1);
    assert_eq!(v["intake"]["source"], "<stdin>");
    assert_eq!(v["degree"]["max"], 2);
    // Compressed standard input is sniffed like a file.
    let z = zstd::encode_all(&b"1 2\n2 3\n"[..], 3).unwrap();
    let out = plumb_stdin(&["intake", "--json", "-", "-"], &z);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["intake"]["compression"], "zstd");
}

#[test]
fn pack_verify_and_reuse_a_store() {
    let dir = tempfile::tempdir().unwrap();
    let store = dir.path().join("w40.plumb");
    let s = store.to_str().unwrap();
    let out = plumb(&["pack", DEMO, "-o", s]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let out = plumb(&["verify", s]);
    assert!(out.status.success());
    assert!(String::from_utf8_lossy(&out.stdout).contains("ok"));
    let from_store = plumb(&["intake", "--json", "-", s]);
    let from_text = plumb(&["intake", "--json", "-", DEMO]);
    let a: serde_json::Value = serde_json::from_slice(&from_store.stdout).unwrap();
    let b: serde_json::Value = serde_json::from_slice(&from_text.stdout).unwrap();
    assert_eq!(a["intake"]["edges"], b["intake"]["edges"]);
    assert_eq!(
        a["intake"]["reciprocal_pairs"],
        b["intake"]["reciprocal_pairs"]
    );
    assert_eq!(a["degree"], b["degree"]);
}

#[test]
fn exit_codes() {
    let bad = plumb_stdin(&["intake", "-"], b"1 2\nthree\n");
    assert_eq!(bad.status.code(), Some(3));
    let err = String::from_utf8_lossy(&bad.stderr);
    assert!(err.contains("<stdin>: line 2, byte offset 4"), "{err}");
    let missing = plumb(&["intake", "/nonexistent/edges.tsv"]);
    assert_eq!(missing.status.code(), Some(4));
    let usage = plumb(&["intake", "--no-such-flag", DEMO]);
    assert_eq!(usage.status.code(), Some(2));
    let budget = plumb(&["intake", "--memory-budget", "64K", DEMO]);
    assert_eq!(budget.status.code(), Some(5));
    assert!(String::from_utf8_lossy(&budget.stderr).contains("memory budget"));
    let skipped = plumb_stdin(&["intake", "--skip-malformed", "-"], b"1 2\nthree\n");
    assert_eq!(skipped.status.code(), Some(0));
    assert!(String::from_utf8_lossy(&skipped.stdout).contains("skipped line 2"));
}

#[test]
fn profile_with_a_per_node_table() {
    let dir = tempfile::tempdir().unwrap();
    let table = dir.path().join("karate.tsv.zst");
    let out = plumb(&[
        "profile",
        "tests/data/karate.mtx",
        "--per-node",
        table.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("transitivity 0.255682"), "{text}");
    assert!(text.contains("mean       2.408200"), "{text}");
    let tsv =
        String::from_utf8(zstd::decode_all(&std::fs::read(&table).unwrap()[..]).unwrap()).unwrap();
    let rows: Vec<Vec<&str>> = tsv.lines().map(|l| l.split('\t').collect()).collect();
    assert_eq!(
        rows[0],
        [
            "id",
            "degree",
            "triangles",
            "clustering",
            "component",
            "eccentricity"
        ]
    );
    assert_eq!(rows.len(), 35);
    // Member 1 of Zachary's club (NetworkX node 0): degree 16, 18 triangles, clustering 0.15,
    // eccentricity 3 (NetworkX 3.6.1).
    assert_eq!(rows[1], ["1", "16", "18", "0.150000", "1", "3"]);
    // Member 34: degree 17, clustering 0.110294 (NetworkX 3.6.1: 0.11029411764705882).
    assert_eq!(&rows[34][..4], ["34", "17", "15", "0.110294"]);
    // JSON carries every figure with its method.
    let out = plumb(&["profile", "--json", "-", "tests/data/karate.mtx"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let t = &v["profile"]["clustering"]["transitivity"];
    assert_eq!(t["method"]["kind"], "exact");
    assert!((t["value"].as_f64().unwrap() - 0.2556818).abs() < 1e-6);
}

#[test]
fn planner_choices_reach_the_report() {
    // Forced estimates: every estimated figure carries an interval, and the plan says why.
    let out = plumb(&[
        "profile",
        "tests/data/lesmis.csv",
        "--json",
        "-",
        "--clustering",
        "sampled",
        "--distances",
        "sources",
        "--seed",
        "4",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let p = &v["profile"];
    let t = &p["clustering"]["transitivity"];
    assert_eq!(t["method"]["kind"], "estimate");
    let (lo, hi) = (
        t["interval"]["low"].as_f64().unwrap(),
        t["interval"]["high"].as_f64().unwrap(),
    );
    // The exact run gives the truth (its value is pinned against NetworkX in exact_structure).
    let exact = plumb(&["profile", "tests/data/lesmis.csv", "--json", "-"]);
    let e: serde_json::Value = serde_json::from_slice(&exact.stdout).unwrap();
    let truth = e["profile"]["clustering"]["transitivity"]["value"]
        .as_f64()
        .unwrap();
    assert!(lo <= truth && truth <= hi, "{lo} {hi} {truth}");
    assert_eq!(p["distances"]["status"], "estimated");
    assert!(p["distances"]["mean"]["interval"]["low"].is_number());
    assert_eq!(p["plan"][0]["group"], "clustering");
    assert!(
        p["plan"][1]["reason"]
            .as_str()
            .unwrap()
            .contains("chosen by the user")
    );
    assert_eq!(
        e["profile"]["plan"][1]["method"],
        "exact: all-pairs bit-parallel BFS"
    );
    // HyperBall on request, and a text report that names it.
    let out = plumb(&["profile", "tests/data/lesmis.csv", "--distances", "ball"]);
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        text.contains("HyperBall, 64 registers per node × 5 hash seeds"),
        "{text}"
    );
    // Out-of-range options are usage errors (exit 2), named by clap.
    for bad in [
        ["--level", "1.5"],
        ["--ball-registers", "100"],
        ["--ball-runs", "1"],
        ["--exact-within", "-3"],
    ] {
        let out = plumb(&["profile", "tests/data/lesmis.csv", bad[0], bad[1]]);
        assert_eq!(out.status.code(), Some(2), "{bad:?}");
    }
}

#[test]
fn sweep_and_synth_as_a_user_runs_them() {
    let out = plumb(&[
        "sweep",
        "--nodes",
        "500",
        "--degree",
        "6",
        "--probabilities",
        "0,0.1,1",
        "--graphs",
        "2",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    // C(0) = 3(k-2)/(4(k-1)) = 0.6 for k = 6 (Watts & Strogatz 1998).
    assert!(text.contains("C(0) = 0.600000"), "{text}");
    assert_eq!(text.lines().count(), 6, "{text}");
    // Outputs never overwrite the input.
    let before = std::fs::read("tests/data/lesmis.csv").unwrap();
    for flag in ["--json", "--html", "--per-node"] {
        let out = plumb(&[
            "profile",
            "tests/data/lesmis.csv",
            flag,
            "tests/data/lesmis.csv",
        ]);
        assert_eq!(out.status.code(), Some(2), "{flag}");
        assert!(String::from_utf8_lossy(&out.stderr).contains("never writes over its input"));
    }
    assert_eq!(std::fs::read("tests/data/lesmis.csv").unwrap(), before);
    let out = plumb(&["sweep", "--probabilities", "2"]);
    assert_eq!(
        out.status.code(),
        Some(2),
        "p outside [0, 1] is a usage error"
    );
    let out = plumb(&[
        "synth",
        "gnm",
        "--nodes",
        "10",
        "--edges",
        "100",
        "-o",
        "/dev/null",
    ]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(err.contains("at most 45 edges"), "{err}");
}

#[test]
fn shipped_demo_data_is_what_the_generator_writes() {
    // The seeded generator is the source of the demo data: rebuilding it must give the shipped
    // files byte for byte (the monitoring demo relies on the planted week being where it is).
    let dir = tempfile::tempdir().unwrap();
    let out = plumb(&["demo-data", "--out", dir.path().to_str().unwrap()]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    for w in 40..=45 {
        let name = format!("replies-2026-W{w}.tsv.zst");
        let shipped = std::fs::read(format!("demo-data/larkspur/{name}")).unwrap();
        let rebuilt = std::fs::read(dir.path().join(&name)).unwrap();
        assert!(
            shipped == rebuilt,
            "{name} differs from the generator's output"
        );
    }
}

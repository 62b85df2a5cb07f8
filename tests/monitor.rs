//! Monitoring: change tests that do not cry wolf on sampling noise and do catch a planted change,
//! a history that survives crashes, corruption and concurrent runs, and the commands end to end.

mod common;

use std::process::Command;

use common::{graph_of, plumb};

use plumb::Graph;
use plumb::models::generate;
use plumb::monitor::drift::{FigureKey, Threshold, compare};
use plumb::profile::plan::Choice;
use plumb::profile::report::Report;
use plumb::profile::{Groups, ProfileOptions, profile};
use plumb::store::csr::Csr;

fn graph(csr: Csr) -> Graph {
    graph_of(csr)
}

fn estimated(g: &Graph, seed: u64, groups: Groups, margin: f64) -> Report {
    let opts = ProfileOptions {
        clustering: Choice::Estimate,
        distances: Choice::Estimate,
        clustering_margin: plumb::profile::Margin {
            absolute: margin,
            ..plumb::profile::DEFAULT_CLUSTERING_MARGIN
        },
        groups,
        seed,
        ..ProfileOptions::default()
    };
    let (p, _) = profile(g, &opts, &plumb::progress::Quiet);
    Report::new(p, None, &opts).unwrap()
}

/// Thresholds of zero: every significant difference alerts, so the test sees the bare z tests.
fn zero_thresholds() -> Vec<(FigureKey, Threshold)> {
    FigureKey::ALL
        .iter()
        .map(|&k| (k, Threshold::Absolute(0.0)))
        .collect()
}

#[test]
fn independent_samples_of_one_graph_rarely_alert() {
    // 100 seeded trials: the same graph profiled twice with different seeds (clustering and
    // distances estimated), compared at the 1% level with every threshold at zero. The tests
    // are Bonferroni-split over the estimated figures, so a trial alerts with probability at
    // most about 1%: allow up to 3 of 100 (P(X >= 4) = 1.8% for Binomial(100, 0.01)).
    let g = graph(generate::watts_strogatz(20_000, 10, 0.1, 5));
    let groups = Groups {
        clustering: true,
        distances: true,
        small_world: false,
    };
    let zero = zero_thresholds();
    let mut alerted = 0;
    for trial in 0..100u64 {
        let a = estimated(&g, 2 * trial + 1, groups, 0.01);
        let b = estimated(&g, 2 * trial + 2, groups, 0.01);
        let d = compare(&a, &b, ("a", "b"), 0.99, &zero);
        assert_eq!(
            d.tested, 4,
            "transitivity, average clustering, mean distance, eff. diameter"
        );
        alerted += (d.alerts > 0) as u32;
    }
    println!("independent samples: {alerted} of 100 trials alerted at the 1% level");
    assert!(alerted <= 3, "{alerted} false alarms in 100 trials");
}

#[test]
fn a_planted_fall_in_transitivity_alerts_every_time() {
    // Watts–Strogatz with 1,000,000 edges (n = 200,000, k = 10): p = 0.1 gives C ≈ 0.481 as
    // measured here (Barrat & Weigt 2000 give 0.486); p = 0.1127 lowers it by about 0.02, as
    // (1-p)^3 scales it (Barrat & Weigt 2000). Ten seeded pairs,
    // clustering estimated to the default ±0.002, default thresholds (transitivity 0.01).
    let groups = Groups {
        clustering: true,
        distances: false,
        small_world: false,
    };
    for seed in 0..10u64 {
        let before = graph(generate::watts_strogatz(200_000, 10, 0.1, 100 + seed));
        let after = graph(generate::watts_strogatz(200_000, 10, 0.1127, 200 + seed));
        let a = estimated(&before, seed, groups, 0.002);
        let b = estimated(&after, seed + 1000, groups, 0.002);
        let d = compare(&a, &b, ("before", "after"), 0.99, &[]);
        let t = d
            .changes
            .iter()
            .find(|c| c.key == FigureKey::Transitivity)
            .unwrap();
        println!(
            "planted change, seed {seed}: transitivity {:.4} -> {:.4}, alert {}",
            t.before, t.after, t.alert
        );
        assert!(
            (t.before - t.after - 0.02).abs() < 0.006,
            "the plant is about 0.02"
        );
        assert!(t.alert, "seed {seed}: the planted change was missed");
    }
}

fn week(w: u32) -> String {
    format!("demo-data/larkspur/replies-2026-W{w}.tsv.zst")
}

#[test]
fn the_demo_series_alerts_on_the_planted_week_only() {
    // The invented platform launches a "trending threads" feed in 2026-W43 (src/demo.rs): more
    // replies leave members' circles, so clustering falls. Week-to-week noise must not alert.
    let dir = tempfile::tempdir().unwrap();
    let h = dir.path().join("history");
    let h = h.to_str().unwrap();
    for w in 40..=45u32 {
        let label = format!("2026-W{w}");
        let out = plumb(&[
            "track",
            h,
            &week(w),
            "--label",
            &label,
            "--figures",
            "clustering,distances",
        ]);
        let text = String::from_utf8_lossy(&out.stdout);
        let expected = if w >= 43 { 6 } else { 0 };
        assert_eq!(out.status.code(), Some(expected), "W{w}: {text}");
        if w == 44 || w == 45 {
            // Against the previous week (also after the launch): no alert; against the baseline:
            // the fall in clustering.
            let first = text.split("── ").nth(1).unwrap();
            assert!(first.contains("verdict    0 alerts"), "W{w}: {text}");
            let second = text.split("── ").nth(2).unwrap();
            assert!(second.contains("ALERT      transitivity"), "W{w}: {text}");
        }
    }
    // The same file again is refused; --again adds it.
    let out = plumb(&["track", h, &week(45)]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("already in the history"));
    // The trend page: self-contained, with the alerts marked.
    let page = dir.path().join("trend.html");
    let out = plumb(&["trend", h, "-o", page.to_str().unwrap()]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(!html.contains("<script") && !html.contains("src="));
    assert!(html.contains("alert: changed beyond its threshold"));
    assert!(html.contains("id=\"trend-transitivity\""));
}

#[test]
fn compare_two_files_with_churn_by_original_id() {
    let out = plumb(&["compare", &week(40), &week(41), "--verdict-json", "-"]);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let c = &v["comparison"]["churn"];
    let (kept, appeared) = (
        c["nodes_kept"].as_u64().unwrap(),
        c["nodes_appeared"].as_u64().unwrap(),
    );
    let nodes_after = v["comparison"]["drift"]["changes"][0]["after"]
        .as_f64()
        .unwrap();
    assert_eq!(kept + appeared, nodes_after as u64);
    // A file against itself: nothing appears or vanishes.
    let out = plumb(&["compare", &week(40), &week(40), "--verdict-json", "-"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let c = &v["comparison"]["churn"];
    assert_eq!(c["edges_appeared"], 0);
    assert_eq!(c["edges_vanished"], 0);
    assert_eq!(c["nodes_vanished"], 0);
}

#[test]
fn a_damaged_history_loses_no_earlier_snapshot() {
    let dir = tempfile::tempdir().unwrap();
    let h = dir.path().join("h");
    let hs = h.to_str().unwrap();
    for w in 40..=42u32 {
        let out = plumb(&["track", hs, &week(w), "--figures", "clustering"]);
        assert!(out.status.success());
    }
    let snaps: Vec<std::path::PathBuf> = {
        let mut v: Vec<_> = std::fs::read_dir(h.join("snapshots"))
            .unwrap()
            .map(|e| e.unwrap().path())
            .collect();
        v.sort();
        v
    };
    assert_eq!(snaps.len(), 3);
    // 1. The last snapshot cut short (a crash mid-write outside plumb's own atomic writes).
    let last = std::fs::read(&snaps[2]).unwrap();
    std::fs::write(&snaps[2], &last[..last.len() / 2]).unwrap();
    let opened = plumb::monitor::history::History::open(&h).unwrap();
    assert_eq!(opened.problems.len(), 1);
    assert!(
        opened.problems[0]
            .what
            .contains("not a complete profile report")
    );
    assert_eq!(
        opened.reports().len(),
        2,
        "the two earlier snapshots stay usable"
    );
    // The trend page still works, and says what is wrong on stderr.
    let out = plumb(&[
        "trend",
        hs,
        "-o",
        dir.path().join("t.html").to_str().unwrap(),
    ]);
    assert!(out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("not a complete profile report"));
    // 2. A corrupt profile in the middle.
    std::fs::write(&snaps[1], b"{\"schema\": 12}").unwrap();
    let opened = plumb::monitor::history::History::open(&h).unwrap();
    assert_eq!(opened.reports().len(), 1);
    // 3. The index gone: rebuilt from the readable snapshots.
    std::fs::remove_file(h.join("index.json")).unwrap();
    let opened = plumb::monitor::history::History::open(&h).unwrap();
    assert_eq!(opened.index.entries.len(), 1);
    assert!(opened.problems.iter().any(|p| p.file.contains("000002")));
    assert!(opened.problems.iter().any(|p| p.file == "index.json"));
}

#[test]
fn an_older_index_opens() {
    // Version 1 written without the optional fields later versions may add must still open.
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("index.json"),
        r#"{"format": "plumb-history", "version": 1, "entries": []}"#,
    )
    .unwrap();
    assert!(plumb::monitor::history::History::open(dir.path()).is_ok());
    std::fs::write(
        dir.path().join("index.json"),
        r#"{"format": "plumb-history", "version": 99, "entries": []}"#,
    )
    .unwrap();
    let err = plumb::monitor::history::History::open(dir.path())
        .err()
        .unwrap();
    assert!(err.to_string().contains("newer than this plumb reads"));
}

#[test]
fn concurrent_adds_both_land() {
    let dir = tempfile::tempdir().unwrap();
    let h = dir.path().join("h");
    let hs = h.to_str().unwrap().to_string();
    let spawn = |w: u32| {
        Command::new(env!("CARGO_BIN_EXE_plumb"))
            .args(["track", &hs, &week(w), "--figures", "clustering"])
            .current_dir(env!("CARGO_MANIFEST_DIR"))
            .stdout(std::process::Stdio::null())
            .spawn()
            .unwrap()
    };
    let (mut a, mut b) = (spawn(40), spawn(41));
    assert!(a.wait().unwrap().success());
    assert!(b.wait().unwrap().success());
    let opened = plumb::monitor::history::History::open(&h).unwrap();
    assert_eq!(opened.index.entries.len(), 2, "both runs landed");
    assert!(opened.problems.is_empty());
    assert!(!h.join("lock").exists(), "the lock is released");
}

#[test]
fn churn_from_two_reports_estimates_the_exact_churn() {
    // Two JSON reports carry id sketches; their churn estimate must cover the exact churn of
    // the two files (HyperLogLog++, Heule, Nunkesser & Hall 2013; 2^14 registers).
    let dir = tempfile::tempdir().unwrap();
    let (a, b) = (dir.path().join("a.json"), dir.path().join("b.json"));
    for (w, p) in [(40, &a), (41, &b)] {
        let out = plumb(&[
            "profile",
            &week(w),
            "--figures",
            "clustering",
            "--json",
            p.to_str().unwrap(),
        ]);
        assert!(out.status.success());
    }
    let exact = plumb(&[
        "compare",
        &week(40),
        &week(41),
        "--figures",
        "clustering",
        "--verdict-json",
        "-",
    ]);
    let exact: serde_json::Value = serde_json::from_slice(&exact.stdout).unwrap();
    let est = plumb(&[
        "compare",
        a.to_str().unwrap(),
        b.to_str().unwrap(),
        "--verdict-json",
        "-",
    ]);
    let est: serde_json::Value = serde_json::from_slice(&est.stdout).unwrap();
    let e = &est["comparison"]["estimated_churn"];
    for (key, exact_key) in [
        ("appeared_edges", "edges_appeared"),
        ("vanished_edges", "edges_vanished"),
        ("appeared_nodes", "nodes_appeared"),
    ] {
        let x = exact["comparison"]["churn"][exact_key].as_f64().unwrap();
        let (lo, hi) = (
            e[key]["interval"]["low"].as_f64().unwrap(),
            e[key]["interval"]["high"].as_f64().unwrap(),
        );
        assert!(lo <= x && x <= hi, "{key}: exact {x} outside {lo}..{hi}");
    }
}

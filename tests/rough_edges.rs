//! Rough edges a new user hits, each pinned by the exit code, message or key a user sees.

use std::process::Output;

mod common;
use common::plumb;

fn text(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn err(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

const DEMO: &str = "demo-data/larkspur/replies-2026-W40.tsv.zst";
const KARATE: &str = "tests/data/karate.mtx";

#[test]
fn dash_means_standard_output_for_every_profile_output() {
    let dir = tempfile::tempdir().unwrap();
    for (flag, starts) in [("--html", "<!DOCTYPE html>"), ("--per-node", "id\tdegree")] {
        let out = plumb(&["profile", KARATE, flag, "-"]);
        assert!(out.status.success(), "{flag}: {}", err(&out));
        assert!(text(&out).starts_with(starts), "{flag}: {}", text(&out));
    }
    // No file named `-` appears anywhere.
    assert!(
        !std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("-")
            .exists()
    );
    // Two outputs cannot share standard output.
    let out = plumb(&["profile", KARATE, "--html", "-", "--json", "-"]);
    assert_eq!(out.status.code(), Some(2), "{}", err(&out));
    assert!(err(&out).contains("only one of"), "{}", err(&out));
    // Outputs that must be files refuse `-` with a usage error.
    let out = plumb(&["pack", KARATE, "-o", "-"]);
    assert_eq!(out.status.code(), Some(2), "{}", err(&out));
    let out = plumb(&["synth", "-o", "-", "gnm", "--nodes", "10", "--edges", "5"]);
    assert_eq!(out.status.code(), Some(2), "{}", err(&out));
    let h = dir.path().join("h");
    let out = plumb(&["trend", h.to_str().unwrap(), "-o", "-"]);
    assert_eq!(out.status.code(), Some(2), "{}", err(&out));
}

#[test]
fn missing_files_are_io_errors_and_leave_nothing_behind() {
    let dir = tempfile::tempdir().unwrap();
    let missing = dir.path().join("no-such-export.tsv");
    let history = dir.path().join("history");
    // trend of a missing history: exit 4, no page.
    let page = dir.path().join("trend.html");
    let trend = || {
        plumb(&[
            "trend",
            history.to_str().unwrap(),
            "-o",
            page.to_str().unwrap(),
        ])
    };
    let out = trend();
    assert_eq!(out.status.code(), Some(4), "{}", err(&out));
    assert!(!page.exists());
    // An existing but empty history has nothing to draw.
    std::fs::create_dir(&history).unwrap();
    let out = trend();
    assert_eq!(out.status.code(), Some(3), "{}", err(&out));
    assert!(err(&out).contains("no readable snapshot"), "{}", err(&out));
    std::fs::remove_dir(&history).unwrap();
    // compare with a missing file (report or graph): exit 4 as documented.
    for name in ["gone.json", "gone.tsv"] {
        let gone = dir.path().join(name);
        let out = plumb(&["compare", gone.to_str().unwrap(), KARATE]);
        assert_eq!(out.status.code(), Some(4), "{name}: {}", err(&out));
    }
    // track with a missing input: exit 4 and no history directory created.
    let out = plumb(&[
        "track",
        history.to_str().unwrap(),
        missing.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(4), "{}", err(&out));
    assert!(!history.exists(), "track left {} behind", history.display());
}

#[test]
fn zero_threads_is_a_usage_error() {
    let out = plumb(&["--threads", "0", "intake", KARATE]);
    assert_eq!(out.status.code(), Some(2), "{}", err(&out));
}

#[test]
fn every_option_a_user_types_has_help() {
    let out = plumb(&["trend", "--help"]);
    assert!(
        text(&out).contains("The history directory"),
        "{}",
        text(&out)
    );
    let out = plumb(&["sweep", "--help"]);
    let help = text(&out);
    assert!(help.contains("--probabilities"), "{help}");
    assert!(!help.contains("--p <"), "{help}");
    assert!(help.contains("Nodes of each graph"), "{help}");
    assert!(help.contains("Seed of every random choice"), "{help}");
    for model in ["lattice", "rewired-lattice", "gnm", "gnp", "attach"] {
        let out = plumb(&["synth", model, "--help"]);
        assert!(out.status.success(), "{model}");
        let help = text(&out);
        // Every model parameter line carries a description after its value name.
        for line in help.lines().filter(|l| l.trim_start().starts_with("--")) {
            if line.contains("--help") || line.contains("--out") || line.contains("--seed") {
                continue;
            }
            let words = line.split_whitespace().count();
            assert!(words > 2, "synth {model}: {line:?} has no help text");
        }
    }
}

#[test]
fn each_command_names_itself_and_its_documents() {
    let dir = tempfile::tempdir().unwrap();
    let store = dir.path().join("karate.plumb");
    let out = plumb(&["pack", KARATE, "-o", store.to_str().unwrap()]);
    assert!(out.status.success(), "{}", err(&out));
    assert!(text(&out).starts_with("plumb pack ·"), "{}", text(&out));
    // A store file is named as the input; what it was packed from is said.
    let out = plumb(&["intake", store.to_str().unwrap()]);
    let t = text(&out);
    assert!(
        t.starts_with(&format!("plumb intake · {}", store.display())),
        "{t}"
    );
    assert!(t.contains("packed from tests/data/karate.mtx"), "{t}");
    let out = plumb(&["intake", KARATE, "--json", "-"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["schema"], "plumb-intake");
    assert_eq!(v["schema_version"], 1);
    let out = plumb(&[
        "sweep",
        "--nodes",
        "200",
        "--degree",
        "4",
        "--probabilities",
        "0,1",
        "--graphs",
        "2",
        "--json",
        "-",
    ]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["schema"], "plumb-sweep");
    assert_eq!(v["schema_version"], 1);
}

#[test]
fn comparison_rows_say_what_each_difference_means() {
    // Two exports one week apart: small exact differences stay within their minimum effects.
    let out = plumb(&[
        "compare",
        DEMO,
        "demo-data/larkspur/replies-2026-W41.tsv.zst",
        "--figures",
        "clustering",
    ]);
    let t = text(&out);
    assert!(
        out.status.code() == Some(0) || out.status.code() == Some(6),
        "{}",
        err(&out)
    );
    assert!(!t.contains("  change "), "{t}");
    assert!(t.contains("within the minimum effect"), "{t}");
    // Values that differ never print alike.
    for line in t.lines().filter(|l| l.contains(" → ") && !l.contains("──")) {
        let (_, rest) = line.split_once(": ").unwrap();
        let (before, rest) = rest.split_once(" → ").unwrap();
        let after = rest.split(" · ").next().unwrap();
        assert_ne!(before, after, "{line}");
    }
}

#[test]
fn binary_input_is_named_as_such_with_its_first_bytes() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("export.bin");
    // Seeded pseudo-random bytes (a 64-bit LCG, Knuth's MMIX constants): not text, no magic.
    let mut x = 0x2545_f491_4f6c_dd1du64;
    let bytes: Vec<u8> = (0..5000)
        .map(|_| {
            x = x
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            (x >> 56) as u8
        })
        .collect();
    std::fs::write(&path, &bytes).unwrap();
    let out = plumb(&["intake", path.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(3));
    let e = err(&out);
    assert!(e.contains("looks binary"), "{e}");
    assert!(!e.contains("control character"), "{e}");
    let hex: Vec<String> = bytes[..4].iter().map(|b| format!("{b:02x}")).collect();
    assert!(e.contains(&hex.join(" ")), "{e}");
    // A text file with one stray control byte still gets its line and byte offset.
    std::fs::write(&path, b"1 2\n2 3\n3 4\x01\n4 5\n5 6\n6 7\n7 8\n8 9\n9 10\n").unwrap();
    let out = plumb(&["intake", path.to_str().unwrap()]);
    assert!(err(&out).contains("line 3"), "{}", err(&out));
}

#[test]
fn an_integer_beyond_64_bits_that_turns_ids_to_text_is_reported() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("ids.tsv");
    std::fs::write(&path, "1 2\n2 3\n007 3\n# note\n18446744073709551616 1\n").unwrap();
    let out = plumb(&["intake", path.to_str().unwrap()]);
    let t = text(&out);
    assert!(
        t.contains("\"18446744073709551616\" on line 5 is an integer beyond 2^64-1"),
        "{t}"
    );
    let out = plumb(&["intake", path.to_str().unwrap(), "--json", "-"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let f = &v["intake"]["first_text_id"];
    assert_eq!(f["id"], "18446744073709551616");
    assert_eq!(f["line"], 5);
    assert_eq!(f["integer_too_large"], true);
    // Integer ids carry no such entry.
    std::fs::write(&path, "1 2\n2 3\n").unwrap();
    let out = plumb(&["intake", path.to_str().unwrap(), "--json", "-"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["intake"].get("first_text_id").is_none());
}

#[test]
fn report_names_and_markers_are_our_own() {
    let out = plumb(&["profile", KARATE, "--json", "-"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let c = &v["profile"]["small_world"]["coefficients"][0];
    assert!(c.get("compared_with").is_some(), "{c}");
    assert!(c.get("random_reference").is_none(), "{c}");
    // In the reference chart, the graph (circle) and the ring lattice (triangle: a path of
    // three points) have different marker shapes.
    let out = plumb(&["profile", KARATE, "--html", "-"]);
    let page = text(&out);
    let start = page.find("id=\"small-world-plane\"").unwrap();
    let chart = &page[start..start + page[start..].find("</svg>").unwrap()];
    assert!(chart.contains("<circle"), "{chart}");
    let triangles = chart
        .split("<path d=\"M")
        .skip(1)
        .filter(|p| p.split('Z').next().unwrap().matches('L').count() == 2)
        .count();
    assert!(triangles >= 1, "{chart}");
}

#[test]
fn the_trend_page_names_the_history_by_its_folder() {
    let dir = tempfile::tempdir().unwrap();
    let history = dir.path().join("weekly");
    let out = plumb(&["track", history.to_str().unwrap(), KARATE, "--label", "w1"]);
    assert!(out.status.success(), "{}", err(&out));
    let page = dir.path().join("trend.html");
    let out = plumb(&[
        "trend",
        history.to_str().unwrap(),
        "-o",
        page.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", err(&out));
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(
        html.contains("<title>plumb trend: weekly</title>"),
        "{html}"
    );
    assert!(!html.contains(&dir.path().display().to_string()));
}

#[test]
fn hyperball_options_out_of_range_are_errors_not_panics() {
    use plumb::estimate::hyperball::{BallOptions, estimate, neighbourhood_function};
    let g = plumb::models::generate::ring_lattice(50, 4);
    let one_run = BallOptions {
        repeats: 1,
        ..Default::default()
    };
    let e = estimate(&g, &one_run, &|_| {}).unwrap_err();
    assert!(e.to_string().contains("at least two runs"), "{e}");
    let e = neighbourhood_function(&g, 30, 1, &|_| {}).unwrap_err();
    assert!(e.to_string().contains("2^4 to 2^16"), "{e}");
    // Through the profile, refused options fall back to sampled sources and say so.
    let gr = plumb::Graph {
        ids: plumb::store::graph::NodeIds::Range { first: 0, len: 50 },
        intake: plumb::store::intake::Intake::generated("lattice", 50, g.edge_count(), 0),
        directions: None,
        csr: g,
    };
    let opts = plumb::profile::ProfileOptions {
        distances: plumb::profile::Choice::Estimate,
        distance_estimator: plumb::profile::DistanceEstimator::Ball,
        ball: one_run,
        ..Default::default()
    };
    let (p, _) = plumb::profile::profile(&gr, &opts, &plumb::progress::Quiet);
    let d = p
        .plan
        .iter()
        .find(|d| d.method.contains("sampled sources"))
        .unwrap();
    assert!(
        d.reason.contains("HyperBall refused its options"),
        "{}",
        d.reason
    );
}

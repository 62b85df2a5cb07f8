//! The report as users and machines receive it: the committed JSON Schema is the one the code
//! generates, real reports validate against it, a golden karate-club report pins the exact
//! figures, and the HTML page is self-contained with data in every chart.
//!
//! `PLUMB_BLESS=1 cargo test --release --test report` rewrites the committed schema and golden
//! file after an intended change (review the diff).

mod common;

use std::path::Path;
use std::process::Command;

use common::*;
use plumb::profile::report::{Report, schema_json};
use plumb::profile::{ProfileOptions, profile};

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn bless() -> bool {
    std::env::var("PLUMB_BLESS").is_ok_and(|v| v == "1")
}

fn check_or_bless(path: &Path, actual: &str) {
    if bless() {
        std::fs::write(path, actual).unwrap();
        return;
    }
    let expected = std::fs::read_to_string(path).unwrap_or_default();
    assert!(
        expected == actual,
        "{} is out of date; if the change is intended, run with PLUMB_BLESS=1 and review the diff",
        path.display()
    );
}

#[test]
fn committed_schema_is_the_generated_one() {
    check_or_bless(&root().join("docs/profile.schema.json"), &schema_json());
}

fn validator() -> jsonschema::Validator {
    let schema: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(root().join("docs/profile.schema.json")).unwrap(),
    )
    .unwrap();
    jsonschema::validator_for(&schema).unwrap()
}

#[test]
fn demo_report_validates_against_the_committed_schema() {
    let dir = tempfile::tempdir().unwrap();
    let json = dir.path().join("demo.json");
    let out = Command::new(env!("CARGO_BIN_EXE_plumb"))
        .args([
            "profile",
            "demo-data/larkspur/replies-2026-W40.tsv.zst",
            "--json",
        ])
        .arg(&json)
        .current_dir(root())
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&std::fs::read(&json).unwrap()).unwrap();
    let errors: Vec<String> = validator().iter_errors(&v).map(|e| e.to_string()).collect();
    assert!(errors.is_empty(), "{errors:#?}");
    assert_eq!(v["schema"], "plumb-profile");
    assert_eq!(v["schema_version"], 2);
    // The id sketches are a block of our own layout, small beside the figures.
    assert_eq!(v["ids"]["scheme"], "hyperloglog");
    // (It was 66 of the report's 82 KB in the crate's private serde form.)
    let size = v["ids"].to_string().len();
    assert!(size < 20_000, "the id sketches take {size} bytes");
    // The checksum is the input file's, as stored.
    let bytes = std::fs::read(root().join("demo-data/larkspur/replies-2026-W40.tsv.zst")).unwrap();
    assert_eq!(
        v["input"]["xxh3"],
        format!("{:016x}", xxhash_rust::xxh3::xxh3_64(&bytes))
    );
    assert_eq!(v["input"]["bytes"], bytes.len());
    // An estimated report validates too (intervals, sampled references).
    let g = load_fixture("karate.mtx");
    let opts = ProfileOptions {
        clustering: plumb::profile::plan::Choice::Estimate,
        distances: plumb::profile::plan::Choice::Estimate,
        reference_graphs: Some(3),
        ..ProfileOptions::default()
    };
    let (p, _) = profile(&g, &opts, &plumb::progress::Quiet);
    let r = Report::new(p, None, &opts).unwrap();
    let v = serde_json::to_value(&r).unwrap();
    let errors: Vec<String> = validator().iter_errors(&v).map(|e| e.to_string()).collect();
    assert!(errors.is_empty(), "{errors:#?}");
}

#[test]
fn karate_golden_report() {
    // Zachary (1977), the exact figures pinned (checked against NetworkX 3.6.1 in
    // exact_structure.rs): 45 triangles, transitivity 0.255682, average clustering 0.570638,
    // mean distance 2.408200, diameter 5.
    let g = load_fixture("karate.mtx");
    let opts = ProfileOptions {
        reference_graphs: Some(0),
        threads: 2,
        ..ProfileOptions::default()
    };
    let (mut p, _) = profile(&g, &opts, &plumb::progress::Quiet);
    // Timings, machine-dependent predictions and where the checkout lives are not part of the
    // golden figures.
    p.intake.source = "karate.mtx".into();
    p.stages.clear();
    p.intake.stages.clear();
    for d in &mut p.plan {
        d.exact_seconds = 0.0;
        d.predicted_seconds = None;
        d.reason.clear();
    }
    let r = Report::new(p, None, &opts).unwrap();
    let v = serde_json::to_value(&r).unwrap();
    let c = &v["profile"]["clustering"];
    assert_eq!(c["triangles"]["value"], 45.0);
    assert!((c["transitivity"]["value"].as_f64().unwrap() - 0.255682).abs() < 5e-7);
    assert!((c["average_zeros"]["value"].as_f64().unwrap() - 0.570638).abs() < 5e-7);
    let d = &v["profile"]["distances"];
    assert!((d["mean"]["value"].as_f64().unwrap() - 2.408200).abs() < 5e-7);
    assert_eq!(d["diameter"]["value"], 5.0);
    let mut text = serde_json::to_string_pretty(&v).unwrap();
    text = text.replace(env!("CARGO_PKG_VERSION"), "VERSION");
    text.push('\n');
    check_or_bless(&root().join("tests/data/golden/karate.report.json"), &text);
}

#[test]
fn html_page_is_self_contained_and_every_chart_has_data() {
    let g = load_fixture("karate.mtx");
    let opts = ProfileOptions {
        reference_graphs: Some(2),
        ..ProfileOptions::default()
    };
    let (p, _) = profile(&g, &opts, &plumb::progress::Quiet);
    let html = plumb::output::html::page(&Report::new(p, None, &opts).unwrap());
    check_page(&html);
}

/// No fetches of any kind, and at least one data point in each of the five charts.
pub fn check_page(html: &str) {
    for forbidden in ["<script", "src=", "href=", "url(", "@import", "<link"] {
        assert!(!html.contains(forbidden), "page contains {forbidden}");
    }
    // The only URL is the SVG namespace, which is a name, not a request.
    let urls = html.matches("http").count();
    let ns = html.matches("http://www.w3.org/2000/svg").count();
    assert_eq!(urls, ns, "only the SVG namespace may look like a URL");
    assert_charts_have_points(html);
}

//! The id sketches kept in reports, checked against an independent HyperLogLog++ implementation
//! from crates.io (`hyperloglogplus`, after Heule, Nunkesser & Hall, "HyperLogLog in practice",
//! EDBT 2013) and against the exact counts, and their JSON block checked for our own layout.

use std::collections::hash_map::RandomState;

use hyperloglogplus::{HyperLogLog, HyperLogLogPlus};
use plumb::estimate::sketch::IdSketch;

mod common;

#[test]
fn sketch_counts_agree_with_the_reference_crate_and_the_truth() {
    // A path on 30,000 text ids: 30,000 nodes, 29,999 edges.
    let n = 30_000u32;
    let text: String = (0..n - 1)
        .map(|i| format!("node-{i} node-{}\n", i + 1))
        .collect();
    let g = common::load_text(&text);
    let sketch = IdSketch::of_graph(&g, 14, 0);
    let (nodes, edges) = sketch.counts();
    let mut reference: HyperLogLogPlus<String, RandomState> =
        HyperLogLogPlus::new(14, RandomState::new()).unwrap();
    for i in 0..n {
        reference.insert(&format!("node-{i}"));
    }
    let theirs = reference.count();
    // Relative standard error 1.04/sqrt(2^14) = 0.81% (Flajolet et al. 2007); three of them.
    let tol = 3.0 * 1.04 / 128.0;
    assert!((nodes / n as f64 - 1.0).abs() < tol, "ours {nodes}");
    assert!((edges / (n - 1) as f64 - 1.0).abs() < tol, "ours {edges}");
    assert!((theirs / n as f64 - 1.0).abs() < tol, "reference {theirs}");
    assert!(
        (nodes / theirs - 1.0).abs() < 2.0 * tol,
        "{nodes} vs {theirs}"
    );
}

#[test]
fn the_report_block_is_our_own_layout_and_round_trips() {
    let g = common::load_text("a b\nb c\nc d\n");
    let sketch = IdSketch::of_graph(&g, 14, 0);
    let v = serde_json::to_value(&sketch).unwrap();
    let keys: Vec<&str> = v.as_object().unwrap().keys().map(String::as_str).collect();
    assert_eq!(
        keys,
        [
            "edge_count",
            "edges",
            "hash",
            "node_count",
            "nodes",
            "precision",
            "scheme",
            "seed"
        ]
    );
    assert_eq!(v["scheme"], "hyperloglog");
    let text = v.to_string();
    for private in ["builder", "phantom", "tmpset", "sparse", "buf"] {
        assert!(!text.contains(private), "{private} in {text}");
    }
    // Two 16 KiB counters of a tiny graph compress to a few hundred bytes.
    assert!(text.len() < 1_000, "{} bytes", text.len());
    let back: IdSketch = serde_json::from_value(v).unwrap();
    assert_eq!(back, sketch);
    // A damaged block is refused, not misread.
    let mut bad = serde_json::to_value(&sketch).unwrap();
    bad["nodes"] = "not base64!".into();
    assert!(serde_json::from_value::<IdSketch>(bad).is_err());
}

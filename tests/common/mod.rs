//! Helpers shared by the integration tests.
#![allow(dead_code)]

use std::collections::{BTreeMap, BTreeSet};

use plumb::Graph;
use plumb::progress::Quiet;
use plumb::read::source::InputBytes;
use plumb::store::load::{self, LoadOptions};

pub fn load_bytes(name: &str, bytes: &[u8], opts: &LoadOptions) -> plumb::Result<Graph> {
    load::load_input(InputBytes::from_vec(name, bytes.to_vec()), opts, &Quiet)
}

pub fn load_text(text: &str) -> Graph {
    load_bytes("test.txt", text.as_bytes(), &LoadOptions::default()).expect("loads")
}

pub fn data(name: &str) -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data")
        .join(name)
}

/// The graph's nodes by original id.
pub fn node_labels(g: &Graph) -> BTreeSet<String> {
    (0..g.node_count() as u32)
        .map(|u| g.ids.label(u).into_owned())
        .collect()
}

/// The graph's edges as pairs of original ids, each pair ordered.
pub fn edge_labels(g: &Graph) -> BTreeSet<(String, String)> {
    let mut out = BTreeSet::new();
    for u in 0..g.node_count() as u32 {
        for &v in g.csr.neighbors(u) {
            let (a, b) = (g.ids.label(u).into_owned(), g.ids.label(v).into_owned());
            out.insert(if a <= b { (a, b) } else { (b, a) });
        }
    }
    out
}

/// Degree of every node by original id.
pub fn degrees(g: &Graph) -> BTreeMap<String, u32> {
    (0..g.node_count() as u32)
        .map(|u| (g.ids.label(u).into_owned(), g.csr.degree(u)))
        .collect()
}

/// Parse a "<id> <degree>" reference file (comments start with #).
pub fn reference_degrees(name: &str, sep: char) -> BTreeMap<String, u32> {
    std::fs::read_to_string(data(name))
        .unwrap()
        .lines()
        .filter(|l| !l.starts_with('#') && !l.is_empty())
        .map(|l| {
            let (a, b) = l.rsplit_once(sep).unwrap();
            (a.to_string(), b.trim().parse().unwrap())
        })
        .collect()
}

pub fn zstd(bytes: &[u8]) -> Vec<u8> {
    zstd::encode_all(bytes, 3).unwrap()
}

pub fn gzip(bytes: &[u8]) -> Vec<u8> {
    use std::io::Write;
    let mut e = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::default());
    e.write_all(bytes).unwrap();
    e.finish().unwrap()
}

/// Several independent zstd frames, cut at arbitrary byte positions (as parallel compressors do).
pub fn zstd_frames(bytes: &[u8], frame: usize) -> Vec<u8> {
    bytes
        .chunks(frame)
        .flat_map(|c| zstd::encode_all(c, 1).unwrap())
        .collect()
}

/// Load a file from tests/data with the default options.
pub fn load_fixture(name: &str) -> Graph {
    load::load(&data(name), &LoadOptions::default(), &Quiet).expect("fixture loads")
}

/// A graph over dense ids 0..n, as the generators build them.
pub fn graph_of(csr: plumb::store::csr::Csr) -> Graph {
    let n = csr.node_count();
    let m = csr.edge_count();
    Graph {
        csr,
        ids: plumb::store::graph::NodeIds::Range { first: 0, len: n },
        intake: plumb::store::intake::Intake::generated("test", n as u64, m, 0),
        directions: None,
    }
}

/// The charts of the profile page, by element id.
pub const CHARTS: [&str; 5] = [
    "degree-ccdf",
    "clustering-by-degree",
    "distance-distribution",
    "small-world-plane",
    "small-world-coefficients",
];

/// Every chart present in `page` (HTML source or a browser's DOM), titled, with data points.
pub fn assert_charts_have_points(page: &str) {
    for id in CHARTS {
        let start = page
            .find(&format!("id=\"{id}\""))
            .unwrap_or_else(|| panic!("chart {id} missing"));
        let end = start + page[start..].find("</svg>").unwrap();
        let chart = &page[start..end];
        assert!(
            chart.contains("class=\"pt\""),
            "chart {id} is an empty frame"
        );
        assert!(chart.contains("<title"), "chart {id} has no title");
    }
}

/// Run the `plumb` binary from the checkout's root, as a user would.
pub fn plumb(args: &[&str]) -> std::process::Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_plumb"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap()
}

/// Fail with every violation when `doc` does not validate against the committed profile
/// schema (docs/profile.schema.json).
pub fn assert_valid_profile(doc: &serde_json::Value) {
    let schema: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(
            std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/profile.schema.json"),
        )
        .unwrap(),
    )
    .unwrap();
    let v = jsonschema::validator_for(&schema).unwrap();
    let errors: Vec<String> = v
        .iter_errors(doc)
        .map(|e| format!("{e} at {}", e.instance_path()))
        .collect();
    assert!(errors.is_empty(), "{errors:?}");
}

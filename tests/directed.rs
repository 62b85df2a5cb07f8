//! Directed exports read with `--directed`: direction kept beside the symmetrised adjacency,
//! self-loops and repeats counted as for undirected input, and the directed figures checked
//! against a hand-worked example and a naive twin on random inputs. networkx's directed
//! functions are the outside reference in `python/tests/test_directed.py`.

mod common;

use std::collections::{BTreeMap, BTreeSet};

use common::{load_bytes, plumb};
use plumb::profile::{ProfileOptions, profile};
use plumb::progress::Quiet;
use plumb::store::graph::{IN, OUT};
use plumb::store::load::LoadOptions;
use proptest::prelude::*;

fn directed() -> LoadOptions {
    LoadOptions {
        directed: true,
        ..LoadOptions::default()
    }
}

/// The example worked by hand in `src/exact/directed.rs`, with text ids, a self-loop, a
/// repeated line and comments: ann ⇄ bo, bo → cy, cy → ann, cy → dee, dee ⇄ eve, and fay only
/// in a self-loop.
const FOLLOWS: &str = "# follower\tfollowed\nann\tbo\nbo\tann\nbo\tcy\ncy\tann\ncy\tdee\n\
dee\teve\neve\tdee\nfay\tfay\nann\tbo\n";

#[test]
fn a_directed_file_with_a_self_loop_is_counted_as_today() {
    let g = load_bytes("follows.tsv", FOLLOWS.as_bytes(), &directed()).unwrap();
    let i = &g.intake;
    assert!(i.directed);
    assert_eq!((i.edge_lines, i.self_loops, i.repeated_lines), (9, 1, 1));
    // Pairs listed both ways are kept as mutual edges, and still counted.
    assert_eq!(i.reciprocal_pairs, 2);
    // fay appears only in its self-loop: a node without edges, as for undirected input.
    assert_eq!(
        (g.node_count(), g.edge_count(), i.isolated_nodes),
        (6, 5, 1)
    );
    let opts = ProfileOptions {
        clustering: plumb::profile::Choice::Exact,
        ..ProfileOptions::default()
    };
    let (p, _) = profile(&g, &opts, &Quiet);
    let d = p.directed.expect("directed figures");
    assert_eq!((d.directed_edges, d.mutual_pairs), (7, 2));
    assert!((d.reciprocity.unwrap() - 4.0 / 7.0).abs() < 1e-15);
    assert_eq!((d.weak_components, d.largest_weak), (2, 5));
    assert_eq!((d.strong_components, d.largest_strong), (3, 3));
    let c = d.clustering.expect("clustering was exact");
    assert!((c.average - 2.0 / 9.0).abs() < 1e-15);
    assert!((c.transitivity - 1.0 / 3.0).abs() < 1e-15);
    // The undirected figures stay, on the symmetrised graph: one triangle {ann, bo, cy}.
    assert_eq!(p.clustering.unwrap().triangles.value(), 1.0);
    // The same file read undirected has no directed section and merges the mutual pairs.
    let u = load_bytes("follows.tsv", FOLLOWS.as_bytes(), &LoadOptions::default()).unwrap();
    assert!(u.directions.is_none() && !u.intake.directed);
    assert_eq!(u.edge_count(), 5);
    assert!(profile(&u, &opts, &Quiet).0.directed.is_none());
}

#[test]
fn a_sampled_profile_says_directed_clustering_was_not_computed() {
    let g = load_bytes("follows.tsv", FOLLOWS.as_bytes(), &directed()).unwrap();
    let opts = ProfileOptions {
        clustering: plumb::profile::Choice::Estimate,
        ..ProfileOptions::default()
    };
    let d = profile(&g, &opts, &Quiet).0.directed.unwrap();
    assert!(d.clustering.is_none());
    assert_eq!(d.strong_components, 3);
}

/// Naive twin of the directed read: the set of distinct directed pairs without self-loops.
fn naive(lines: &[(u8, u8)]) -> BTreeSet<(String, String)> {
    lines
        .iter()
        .filter(|(a, b)| a != b)
        .map(|&(a, b)| (format!("n{a}"), format!("n{b}")))
        .collect()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    /// Every entry's direction flags, read back as directed pairs by original id, are exactly
    /// the distinct directed lines; out- and in-degrees and reciprocity follow.
    #[test]
    fn directions_are_the_distinct_directed_lines(
        lines in proptest::collection::vec((0u8..12, 0u8..12), 1..60)
    ) {
        let text: String = lines.iter().map(|(a, b)| format!("n{a} n{b}\n")).collect();
        let g = load_bytes("random.txt", text.as_bytes(), &directed()).unwrap();
        let dir = g.directions.as_deref().unwrap();
        let mut got = BTreeSet::new();
        for u in 0..g.node_count() as u32 {
            let lo = g.csr.offsets()[u as usize] as usize;
            for (k, &v) in g.csr.neighbors(u).iter().enumerate() {
                let f = dir[lo + k];
                prop_assert!(f & (OUT | IN) != 0 && f & !(OUT | IN) == 0);
                let (a, b) = (g.ids.label(u).into_owned(), g.ids.label(v).into_owned());
                if f & OUT != 0 {
                    got.insert((a.clone(), b.clone()));
                }
                if f & IN != 0 {
                    got.insert((b, a));
                }
            }
        }
        let want = naive(&lines);
        prop_assert_eq!(&got, &want);
        let (p, _) = profile(&g, &ProfileOptions::default(), &Quiet);
        let d = p.directed.unwrap();
        prop_assert_eq!(d.directed_edges, want.len() as u64);
        let mutual = want.iter().filter(|(a, b)| want.contains(&(b.clone(), a.clone()))).count();
        prop_assert_eq!(d.mutual_pairs * 2, mutual as u64);
        let mut outs: BTreeMap<&str, u64> = BTreeMap::new();
        for (a, _) in &want {
            *outs.entry(a.as_str()).or_default() += 1;
        }
        prop_assert_eq!(d.out_degree.max as u64, outs.values().copied().max().unwrap_or(0));
    }
}

#[test]
fn the_command_line_reports_directed_figures_and_refuses_what_keeps_no_direction() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("follows.tsv");
    std::fs::write(&path, FOLLOWS).unwrap();
    let p = path.to_str().unwrap();
    let out = plumb(&[
        "profile",
        p,
        "--directed",
        "--figures",
        "clustering",
        "--quiet",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("read as directed"), "{text}");
    assert!(text.contains("reciprocity 0.5714"), "{text}");
    assert!(text.contains("symmetrised graph"), "{text}");

    // The JSON report carries the directed section and validates against the schema.
    let json = dir.path().join("follows.json");
    let out = plumb(&[
        "profile",
        p,
        "--directed",
        "--figures",
        "clustering,distances",
        "--json",
        json.to_str().unwrap(),
        "--quiet",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    assert_eq!(doc["profile"]["directed"]["strong_components"], 3);
    assert_eq!(doc["profile"]["intake"]["directed"], true);
    common::assert_valid_profile(&doc);

    // The HTML page carries the directed figures too.
    let html = dir.path().join("follows.html");
    let out = plumb(&[
        "profile",
        p,
        "--directed",
        "--figures",
        "clustering",
        "--clustering",
        "exact",
        "--html",
        html.to_str().unwrap(),
        "--quiet",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let page = std::fs::read_to_string(&html).unwrap();
    for words in [
        "strongly connected components",
        "reciprocity",
        "Fagiolo total",
        "symmetrised",
    ] {
        assert!(page.contains(words), "{words}");
    }

    let refused = |args: &[&str], words: &str| {
        let out = plumb(args);
        let err = String::from_utf8_lossy(&out.stderr).into_owned();
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains(words), "{args:?}: {err}");
    };
    refused(
        &["profile", p, "--directed", "--build", "disk"],
        "built in memory only",
    );
    let store = dir.path().join("follows.plumb");
    let out = plumb(&["pack", p, "-o", store.to_str().unwrap(), "--quiet"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    refused(
        &["profile", store.to_str().unwrap(), "--directed"],
        "packed from an undirected read",
    );
    let mtx = dir.path().join("sym.mtx");
    std::fs::write(
        &mtx,
        "%%MatrixMarket matrix coordinate pattern symmetric\n3 3 2\n2 1\n3 2\n",
    )
    .unwrap();
    refused(
        &["profile", mtx.to_str().unwrap(), "--directed"],
        "needs a general matrix",
    );
}

#[test]
fn a_directed_store_keeps_its_directions_and_verifies_them() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("follows.tsv");
    std::fs::write(&path, FOLLOWS).unwrap();
    let store = dir.path().join("follows.plumb");
    let (g, _) = plumb::store::load::pack(&path, &store, &directed(), &Quiet).unwrap();
    let opened = plumb::store::file::open(&store).unwrap();
    assert!(opened.csr.is_mapped());
    assert_eq!(
        opened.directions.as_deref(),
        g.directions.as_deref(),
        "the directions come back as written"
    );
    assert!(opened.intake.directed);
    opened.verify_directions().unwrap();
    let opts = ProfileOptions {
        clustering: plumb::profile::Choice::Exact,
        ..ProfileOptions::default()
    };
    assert_eq!(
        profile(&opened, &opts, &Quiet).0.directed,
        profile(&g, &opts, &Quiet).0.directed
    );
    // Opened with --directed, the store is accepted as it is.
    let again = plumb::store::load::load(&store, &directed(), &Quiet).unwrap();
    assert!(again.directions.is_some());
    // The command line's verify checks the mirror and says so.
    let out = plumb(&["verify", store.to_str().unwrap()]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(String::from_utf8_lossy(&out.stdout).contains("directions mirrored"));

    // A direction that does not mirror its twin is caught.
    let mut flags = g.directions.as_deref().unwrap().to_vec();
    flags[0] = if flags[0] == OUT { IN } else { OUT };
    let broken = plumb::Graph {
        csr: plumb::store::csr::Csr::from_parts(
            g.csr.offsets().to_vec().into(),
            g.csr.targets().to_vec().into(),
        ),
        ids: plumb::store::graph::NodeIds::Range {
            first: 0,
            len: g.node_count(),
        },
        intake: g.intake.clone(),
        directions: Some(flags.into()),
    };
    let e = broken.verify_directions().unwrap_err();
    assert!(e.contains("disagrees with its twin"), "{e}");

    // Undirected stores are still written as format version 1, byte for byte as before.
    let flat = dir.path().join("flat.plumb");
    plumb::store::load::pack(&path, &flat, &LoadOptions::default(), &Quiet).unwrap();
    assert_eq!(&std::fs::read(&flat).unwrap()[8..12], &1u32.to_le_bytes());
    assert_eq!(&std::fs::read(&store).unwrap()[8..12], &2u32.to_le_bytes());
}

//! Property tests: the fast builder agrees with a naive reference (a BTreeSet of pairs) on random
//! edge lists full of duplicates, reciprocal edges and self-loops, in every input encoding, on
//! any thread count and piece size.

mod common;

use std::collections::{BTreeMap, BTreeSet};

use common::*;
use plumb::store::load::LoadOptions;
use proptest::prelude::*;

/// The reference: parse lines naively, keep unordered pairs without loops.
struct Naive {
    nodes: BTreeSet<u64>,
    edges: BTreeSet<(u64, u64)>,
    directed: BTreeSet<(u64, u64)>,
    loops: u64,
    lines: u64,
}

fn naive(pairs: &[(u64, u64)]) -> Naive {
    let mut n = Naive {
        nodes: BTreeSet::new(),
        edges: BTreeSet::new(),
        directed: BTreeSet::new(),
        loops: 0,
        lines: pairs.len() as u64,
    };
    for &(a, b) in pairs {
        n.nodes.insert(a);
        n.nodes.insert(b);
        if a == b {
            n.loops += 1;
        } else {
            n.edges.insert((a.min(b), a.max(b)));
            n.directed.insert((a, b));
        }
    }
    n
}

fn render(pairs: &[(u64, u64)], style: u8) -> Vec<u8> {
    let mut s = String::new();
    for (i, &(a, b)) in pairs.iter().enumerate() {
        match (style + i as u8) % 4 {
            0 => s.push_str(&format!("{a} {b}\n")),
            1 => s.push_str(&format!("{a}\t{b}\t0.25\r\n")),
            2 => s.push_str(&format!("{a},{b}\n# note\n")),
            _ => s.push_str(&format!("  {a} , {b} \n\n")),
        }
    }
    s.into_bytes()
}

fn ids() -> impl Strategy<Value = u64> {
    prop_oneof![
        0u64..40,
        1_000_000u64..1_000_040,
        Just(u64::MAX),
        Just(u64::MAX - 1),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(128))]

    #[test]
    fn builder_matches_naive_reference(
        pairs in prop::collection::vec((ids(), ids()), 1..300),
        style in 0u8..4,
        piece in prop_oneof![Just(16usize), Just(97), Just(1 << 20)],
        threads in 1usize..4,
        encoding in 0u8..3,
    ) {
        let text = render(&pairs, style);
        let bytes = match encoding {
            0 => text.clone(),
            1 => zstd_frames(&text, 211),
            _ => gzip(&text),
        };
        let opts = LoadOptions { piece_bytes: piece, ..LoadOptions::default() };
        let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
        let g = pool.install(|| load_bytes("p", &bytes, &opts)).unwrap();
        let r = naive(&pairs);
        let labels: Vec<u64> = (0..g.node_count() as u32)
            .map(|i| g.ids.label(i).parse().unwrap())
            .collect();
        // Nodes: every id seen, in ascending order.
        prop_assert_eq!(&labels, &r.nodes.iter().copied().collect::<Vec<_>>());
        let edges: BTreeSet<(u64, u64)> = edge_labels(&g)
            .into_iter()
            .map(|(a, b)| {
                let (a, b): (u64, u64) = (a.parse().unwrap(), b.parse().unwrap());
                (a.min(b), a.max(b))
            })
            .collect();
        prop_assert_eq!(&edges, &r.edges);
        g.csr.verify().map_err(|v| TestCaseError::fail(v.to_string()))?;
        let i = &g.intake;
        prop_assert_eq!(i.edge_lines, r.lines);
        prop_assert_eq!(i.self_loops, r.loops);
        prop_assert_eq!(i.reciprocal_pairs, (r.directed.len() - r.edges.len()) as u64);
        prop_assert_eq!(i.repeated_lines, r.lines - r.loops - r.directed.len() as u64);
        prop_assert_eq!(i.isolated_nodes, {
            let touched: BTreeSet<u64> = r.edges.iter().flat_map(|&(a, b)| [a, b]).collect();
            (r.nodes.len() - touched.len()) as u64
        });
    }

    #[test]
    fn text_ids_match_naive_reference(
        pairs in prop::collection::vec((0u8..12, 0u8..12), 1..200),
        piece in prop_oneof![Just(8usize), Just(1 << 20)],
    ) {
        let names = ["ann", "bo", "cy", "dee", "ed", "flo", "gus", "hal", "ivy", "jo", "kai", "lu"];
        let mut text = String::new();
        for &(a, b) in &pairs {
            text.push_str(&format!("{};x {};y\n", names[a as usize], names[b as usize]));
        }
        // Ids are tokens as written ("ann;x" and "ann;y" are different nodes).
        let mut expect: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
        for &(a, b) in &pairs {
            let (a, b) = (format!("{};x", names[a as usize]), format!("{};y", names[b as usize]));
            expect.entry(a.clone()).or_default().insert(b.clone());
            expect.entry(b).or_default().insert(a);
        }
        let opts = LoadOptions { piece_bytes: piece, ..LoadOptions::default() };
        let g = load_bytes("t", text.as_bytes(), &opts).unwrap();
        let got: BTreeMap<String, BTreeSet<String>> = (0..g.node_count() as u32)
            .map(|u| {
                (
                    g.ids.label(u).into_owned(),
                    g.csr.neighbors(u).iter().map(|&v| g.ids.label(v).into_owned()).collect(),
                )
            })
            .collect();
        prop_assert_eq!(got, expect);
    }
}

/// Bytes drawn from the characters that matter to the grammar.
fn soup(max: usize) -> impl Strategy<Value = Vec<u8>> {
    prop::collection::vec(
        prop::sample::select(&b"0123456789  \t,\n\n\r#%ab-x\x00"[..]),
        0..max,
    )
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    /// On any bytes the fast reader and the naive reference agree: the same graph, or an error
    /// on the same line (at the same byte offset).
    #[test]
    fn fast_reader_agrees_with_reference_on_byte_soup(bytes in soup(160), piece in 1usize..64) {
        use plumb::store::reference;
        let opts = LoadOptions { piece_bytes: piece, ..LoadOptions::default() };
        let fast = load_bytes("soup", &bytes, &opts);
        match (fast, reference::edge_list(&bytes)) {
            (Ok(g), Ok(r)) => prop_assert_eq!(reference::view(&g), r),
            (Err(plumb::Error::Malformed { pos, .. }), Err(r)) => {
                prop_assert_eq!((pos.line, pos.byte), (r.line, r.byte));
            }
            (Err(plumb::Error::Empty { .. }), Ok(r)) => prop_assert!(r.nodes.is_empty()),
            (f, r) => prop_assert!(false, "fast {:?} vs reference {:?}", f.map(|g| g.intake), r),
        }
    }

    #[test]
    fn matrix_market_agrees_with_reference(body in soup(80), n in 0u8..6, e in 0u8..6, field in 0usize..3) {
        use plumb::store::reference;
        let fields = ["pattern", "integer", "real"];
        let mut bytes = format!(
            "%%MatrixMarket matrix coordinate {} general\n% c\n{n} {n} {e}\n",
            fields[field]
        )
        .into_bytes();
        bytes.extend_from_slice(&body);
        let fast = load_bytes("m", &bytes, &LoadOptions::default());
        match (fast, reference::matrix_market(&bytes)) {
            (Ok(g), Some(r)) => prop_assert_eq!(reference::view(&g), r),
            (Err(_), None) => {}
            // Zero declared nodes is an empty graph to the reference, an error to plumb.
            (Err(plumb::Error::Empty { .. }), Some(r)) => prop_assert!(r.nodes.is_empty()),
            (f, r) => prop_assert!(false, "fast {:?} vs reference {:?}", f.map(|g| g.intake), r),
        }
    }
}

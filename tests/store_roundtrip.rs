//! Edge file -> store file -> reopened store: identical arrays, ids and intake report.

mod common;

use common::*;
use plumb::Graph;
use plumb::store::graph::NodeIds;
use plumb::store::load::LoadOptions;

fn roundtrip(g: &Graph) -> Graph {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("g.plumb");
    plumb::store::file::write(g, &path).unwrap();
    // Any command accepts a store where it accepts an edge file: the loader sniffs it.
    let back =
        plumb::store::load::load(&path, &LoadOptions::default(), &plumb::progress::Quiet).unwrap();
    assert!(back.csr.is_mapped(), "a store file is used in place");
    back.csr.verify().unwrap();
    // No temporary file is left behind.
    let names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
    assert_eq!(names.len(), 1);
    back
}

fn same(a: &Graph, b: &Graph) {
    assert_eq!(a.csr.offsets(), b.csr.offsets());
    assert_eq!(a.csr.targets(), b.csr.targets());
    assert_eq!(a.ids.len(), b.ids.len());
    for i in 0..a.ids.len() as u32 {
        assert_eq!(a.ids.label(i), b.ids.label(i));
    }
    // The counts survive packing; the reopened graph names the store file as its input and
    // the text file as what it was packed from.
    assert_eq!(
        b.intake.packed_from.as_deref(),
        Some(a.intake.source.as_str())
    );
    assert!(b.intake.source.ends_with(".plumb"), "{}", b.intake.source);
    let mut reopened = b.intake.clone();
    reopened.source = a.intake.source.clone();
    reopened.packed_from = None;
    assert_eq!(a.intake, reopened);
}

#[test]
fn integer_table_ids() {
    let g = load_text("10 20\n20 30\n30 10\n99 5\n18446744073709551615 5\n");
    assert!(matches!(g.ids, NodeIds::Ints(_)));
    same(&g, &roundtrip(&g));
}

#[test]
fn contiguous_ids_need_no_table() {
    let g = load_text("0 1\n1 2\n2 3\n3 0\n");
    assert!(matches!(g.ids, NodeIds::Range { first: 0, len: 4 }));
    let back = roundtrip(&g);
    assert!(matches!(back.ids, NodeIds::Range { first: 0, len: 4 }));
    same(&g, &back);
}

#[test]
fn text_ids_and_matrix_market() {
    let g = load_fixture("lesmis.csv");
    same(&g, &roundtrip(&g));
    let g = load_fixture("karate.mtx");
    same(&g, &roundtrip(&g));
}

#[test]
fn larger_graph_spanning_several_checksum_blocks() {
    // Over 16 MiB of targets, so the block-wise checksum covers more than one block.
    let mut text = String::new();
    for i in 0..2_200_000u64 {
        text.push_str(&format!(
            "{} {}\n",
            i % 400_000,
            (i * 2_654_435_761) % 400_009
        ));
    }
    let g = load_text(&text);
    assert!(g.csr.targets().len() * 4 > 16 << 20);
    same(&g, &roundtrip(&g));
}

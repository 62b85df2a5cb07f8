//! Every input feature of the readers, checked end to end through `ingest::load_input`.

mod common;

use common::*;
use plumb::read::source::Compression;
use plumb::store::graph::NodeIds;
use plumb::store::intake::{IdKind, InputFormat};
use plumb::store::load::{FormatChoice, HeaderChoice, LoadOptions};

#[test]
fn karate_club_matrix_market_matches_published_degrees() {
    // Zachary (1977), J. Anthropol. Res. 33:452, 78-edge version as shipped by NetworkX 3.6.1
    // (fixture made by tests/data/make_fixtures.py): 34 members, 78 ties, and the degree of
    // every member as NetworkX reports it.
    let g = load_fixture("karate.mtx");
    assert_eq!(g.intake.format, InputFormat::MatrixMarket);
    assert_eq!((g.node_count(), g.edge_count()), (34, 78));
    assert!(matches!(g.ids, NodeIds::Range { first: 1, len: 34 }));
    assert_eq!(degrees(&g), reference_degrees("karate.degrees", ' '));
    // Member 34 has the highest degree, 17 (NetworkX agrees).
    assert_eq!(g.degree_summary().max, 17);
    g.csr.verify().unwrap();
}

#[test]
fn les_miserables_text_ids_header_and_weights() {
    // Knuth (1993), The Stanford GraphBase: 77 characters, 254 co-appearance pairs, via
    // NetworkX 3.6.1. CSV with a header line and a weight column.
    let g = load_fixture("lesmis.csv");
    assert_eq!(g.intake.id_kind, IdKind::Text);
    assert_eq!(
        g.intake.header_line.as_deref(),
        Some("source,target,weight")
    );
    assert_eq!((g.node_count(), g.edge_count()), (77, 254));
    assert_eq!(g.intake.extra_column_lines, 254);
    assert_eq!(g.intake.comment_lines, 1);
    assert_eq!(degrees(&g), reference_degrees("lesmis.degrees", '\t'));
    g.csr.verify().unwrap();
}

#[test]
fn separators_spaces_tabs_commas() {
    let g = load_text("1 2\n2\t3\n3,4\n  4 ,\t5  \n5  6\n");
    assert_eq!(g.edge_count(), 5);
    assert_eq!(g.intake.extra_column_lines, 0);
    assert!(edge_labels(&g).contains(&("4".into(), "5".into())));
}

#[test]
fn comments_blanks_crlf_and_no_final_newline() {
    let g = load_text("# exported\r\n% also a comment\r\n\r\n1 2\r\n   \r\n2 3\r\n3 1");
    assert_eq!(g.intake.lines, 7);
    assert_eq!(g.intake.comment_lines, 2);
    assert_eq!(g.intake.blank_lines, 2);
    assert_eq!(g.intake.edge_lines, 3);
    assert_eq!(g.edge_count(), 3);
}

#[test]
fn extra_columns_are_counted_and_ignored() {
    let g = load_text("1 2 0.5\n2 3 1700000000 reply\n3 4\n");
    assert_eq!(g.intake.extra_column_lines, 2);
    assert_eq!(g.edge_count(), 3);
}

#[test]
fn duplicates_reciprocals_and_self_loops_are_merged_and_counted() {
    // Lines: 1-2, 2-1 (reciprocal), 1-2 (repeat), 3-3 (loop), 2-3, 2-3 (repeat), 3-2 (reciprocal).
    let g = load_text("1 2\n2 1\n1 2\n3 3\n2 3\n2 3\n3 2\n9 9\n");
    let i = &g.intake;
    assert_eq!(i.edge_lines, 8);
    assert_eq!(i.self_loops, 2);
    assert_eq!(i.repeated_lines, 2);
    assert_eq!(i.reciprocal_pairs, 2);
    assert_eq!(g.edge_count(), 2);
    // A node seen only in a self-loop is still a node, left isolated.
    assert_eq!(g.node_count(), 4);
    assert_eq!(i.isolated_nodes, 1);
    assert_eq!(
        i.edge_lines - i.self_loops - i.repeated_lines - i.reciprocal_pairs,
        2
    );
}

#[test]
fn integer_ids_up_to_u64_max_keep_their_values() {
    let g = load_text("18446744073709551615 0\n0 4294967296\n7 18446744073709551615\n");
    assert_eq!(g.intake.id_kind, IdKind::Integer);
    let labels: Vec<String> = (0..4).map(|i| g.ids.label(i).into_owned()).collect();
    assert_eq!(labels, ["0", "7", "4294967296", "18446744073709551615"]);
    assert_eq!(g.edge_count(), 3);
}

#[test]
fn integer_ids_compare_by_value() {
    let g = load_text("007 7\n7 8\n");
    assert_eq!(g.intake.self_loops, 1);
    assert_eq!(g.node_count(), 2);
}

#[test]
fn any_non_integer_token_switches_to_text_ids() {
    // Once text ids appear, every token is an id as written: "007" and "7" differ.
    let g = load_text("007 7\n7 alice\n2 3\n-1 18446744073709551616\n");
    assert_eq!(g.intake.id_kind, IdKind::Text);
    assert_eq!(g.intake.self_loops, 0);
    assert_eq!(g.node_count(), 7);
    assert!(edge_labels(&g).contains(&("-1".into(), "18446744073709551616".into())));
    assert!(edge_labels(&g).contains(&("007".into(), "7".into())));
}

#[test]
fn uuid_ids() {
    let a = "3f2504e0-4f89-11d3-9a0c-0305e82c3301";
    let b = "6fa459ea-ee8a-3ca4-894e-db77e160355e";
    let g = load_text(&format!("{a},{b}\n{b},{a}\n"));
    assert_eq!((g.node_count(), g.edge_count()), (2, 1));
    assert_eq!(g.intake.reciprocal_pairs, 1);
}

#[test]
fn header_detection_and_flags() {
    let g = load_text("src\tdst\n1\t2\n2\t3\n");
    assert_eq!(g.intake.header_line.as_deref(), Some("src\tdst"));
    assert_eq!(g.edge_count(), 2);
    // Text ids where the first line is data: no header guessed.
    let g = load_text("ann bo\ncy dee\n");
    assert_eq!((g.intake.header_line.as_deref(), g.edge_count()), (None, 2));
    // Forced either way.
    let skip = LoadOptions {
        header: HeaderChoice::Skip,
        ..LoadOptions::default()
    };
    let g = load_bytes("t", b"# c\n1 2\n3 4\n", &skip).unwrap();
    assert_eq!(
        (g.edge_count(), g.intake.header_line.as_deref()),
        (1, Some("1 2"))
    );
    let none = LoadOptions {
        header: HeaderChoice::None,
        ..LoadOptions::default()
    };
    let g = load_bytes("t", b"source target\n1 2\n", &none).unwrap();
    assert_eq!(g.edge_count(), 2);
    assert_eq!(g.intake.id_kind, IdKind::Text);
}

fn sample_text() -> Vec<u8> {
    let mut s = String::from("# sample\nfrom,to,w\n");
    for i in 0..20_000u64 {
        s.push_str(&format!(
            "{},{},{}\n",
            i % 1777,
            (i * 7919) % 2003 + 5,
            i % 3
        ));
    }
    s.into_bytes()
}

#[test]
fn zstd_gzip_and_multi_frame_give_the_same_graph() {
    let text = sample_text();
    let opts = LoadOptions {
        piece_bytes: 4096,
        ..LoadOptions::default()
    };
    let plain = load_bytes("p", &text, &opts).unwrap();
    let cases = [
        (zstd(&text), Compression::Zstd, Some(1)),
        (zstd_frames(&text, 10_000), Compression::Zstd, None),
        (gzip(&text), Compression::Gzip, None),
    ];
    for (bytes, c, frames) in cases {
        let g = load_bytes("c", &bytes, &opts).unwrap();
        assert_eq!(g.intake.compression, c);
        if let Some(f) = frames {
            assert_eq!(g.intake.frames, Some(f));
        }
        assert_eq!(g.csr.offsets(), plain.csr.offsets());
        assert_eq!(g.csr.targets(), plain.csr.targets());
        assert_eq!(g.intake.text_bytes, text.len() as u64);
        assert_eq!(g.intake.repeated_lines, plain.intake.repeated_lines);
        assert_eq!(g.intake.header_line, plain.intake.header_line);
    }
}

#[test]
fn multi_frame_zstd_reports_its_frames() {
    let text = sample_text();
    let g = load_bytes("m", &zstd_frames(&text, 10_000), &LoadOptions::default()).unwrap();
    assert_eq!(g.intake.frames, Some(text.len().div_ceil(10_000) as u64));
}

#[test]
fn compressed_text_ids_take_the_text_path() {
    let text = b"ann bo\nbo cy\ncy ann\nann ann\n".repeat(50);
    let g = load_bytes("z", &zstd(&text), &LoadOptions::default()).unwrap();
    assert_eq!((g.node_count(), g.edge_count()), (3, 3));
    assert_eq!(g.intake.self_loops, 50);
    assert_eq!(g.intake.repeated_lines, 3 * 49);
}

#[test]
fn matrix_market_variants() {
    // Integer general: both directions listed, a diagonal entry, values ignored.
    let g = load_text(
        "%%MatrixMarket matrix coordinate integer general\n% c\n4 4 5\n1 2 3\n2 1 3\n3 3 1\n2 3 -4\n3 4 7\n",
    );
    assert_eq!(g.intake.format, InputFormat::MatrixMarket);
    assert_eq!((g.node_count(), g.edge_count()), (4, 3));
    assert_eq!((g.intake.reciprocal_pairs, g.intake.self_loops), (1, 1));
    // Declared nodes without entries are isolated nodes.
    let g =
        load_text("%%MatrixMarket matrix coordinate real symmetric\n6 6 2\n2 1 0.5\n3 2 1e-3\n");
    assert_eq!((g.node_count(), g.edge_count()), (6, 2));
    assert_eq!(g.intake.isolated_nodes, 3);
    assert_eq!(g.ids.label(5), "6");
    let g = load_text("%%MatrixMarket matrix coordinate real skew-symmetric\n3 3 1\n2 1 -1.5\n");
    assert_eq!(g.edge_count(), 1);
    // Case-insensitive banner, CRLF, forced grammar.
    let opts = LoadOptions {
        format: FormatChoice::MatrixMarket,
        ..LoadOptions::default()
    };
    let g = load_bytes(
        "m",
        b"%%matrixmarket MATRIX Coordinate Pattern General\r\n2 2 1\r\n1 2\r\n",
        &opts,
    )
    .unwrap();
    assert_eq!(g.edge_count(), 1);
    // Compressed Matrix Market.
    let karate = std::fs::read(data("karate.mtx")).unwrap();
    let g = load_bytes("k", &zstd(&karate), &LoadOptions::default()).unwrap();
    assert_eq!((g.node_count(), g.edge_count()), (34, 78));
}

#[test]
fn edge_list_grammar_can_be_forced_on_a_banner() {
    let opts = LoadOptions {
        format: FormatChoice::EdgeList,
        ..LoadOptions::default()
    };
    let g = load_bytes("e", b"%%MatrixMarket is only a comment here\n1 2\n", &opts).unwrap();
    assert_eq!(g.intake.format, InputFormat::EdgeList);
    assert_eq!(g.edge_count(), 1);
}

#[test]
fn skip_malformed_counts_and_reports_examples() {
    let opts = LoadOptions {
        skip_malformed: true,
        ..LoadOptions::default()
    };
    let g = load_bytes("s", b"1 2\nlonely\n2 3\n4,,5\n5 6\n", &opts).unwrap();
    assert_eq!(g.intake.malformed_skipped, 2);
    assert_eq!(g.edge_count(), 3);
    let ex = &g.intake.malformed_examples;
    assert_eq!(
        (ex[0].line, ex[0].byte, ex[0].excerpt.as_str()),
        (2, 4, "lonely")
    );
    assert_eq!((ex[1].line, ex[1].byte), (4, 15));
}

#[test]
fn every_thread_count_and_piece_size_gives_identical_arrays() {
    let text = sample_text();
    let z = zstd_frames(&text, 7_000);
    let reference = load_bytes("r", &text, &LoadOptions::default()).unwrap();
    for threads in [1, 2, 3] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        for piece in [64, 1000, 1 << 20] {
            let opts = LoadOptions {
                piece_bytes: piece,
                ..LoadOptions::default()
            };
            for bytes in [&text, &z] {
                let g = pool.install(|| load_bytes("t", bytes, &opts)).unwrap();
                assert_eq!(g.csr.offsets(), reference.csr.offsets());
                assert_eq!(g.csr.targets(), reference.csr.targets());
                assert_eq!(g.intake.lines, reference.intake.lines);
                assert_eq!(g.intake.reciprocal_pairs, reference.intake.reciprocal_pairs);
            }
        }
    }
}

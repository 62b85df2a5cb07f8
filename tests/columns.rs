//! Reading the two id columns of a delimited export, chosen by header name or position.
//!
//! The files are written by the `csv` crate (BurntSushi's rust-csv, an RFC 4180 writer from
//! crates.io; RFC 4180: Shafranovich, 2005, "Common Format and MIME Type for Comma-Separated
//! Values (CSV) Files"), so the quoting plumb must undo comes from outside the project; the
//! expected graph is taken from the generated rows themselves, never from a parse.

mod common;

use std::collections::BTreeSet;

use common::{edge_labels, load_bytes, node_labels, plumb};
use plumb::Error;
use plumb::read::columns::{ColumnChoice, ColumnRef};
use plumb::store::load::{HeaderChoice, LoadOptions};
use proptest::prelude::*;

/// A table: a header of `ncols` names, rows of fields, and the two chosen columns (0-based).
#[derive(Debug, Clone)]
struct Table {
    ncols: usize,
    rows: Vec<Vec<String>>,
    a: usize,
    b: usize,
}

fn write(t: &Table, delim: u8, header: bool) -> Vec<u8> {
    let mut w = csv::WriterBuilder::new()
        .delimiter(delim)
        .quote_style(if delim == b',' {
            csv::QuoteStyle::Necessary
        } else {
            csv::QuoteStyle::Never
        })
        .from_writer(Vec::new());
    if header {
        w.write_record((1..=t.ncols).map(|i| format!("field{i}")))
            .unwrap();
    }
    for r in &t.rows {
        w.write_record(r).unwrap();
    }
    w.into_inner().unwrap()
}

/// Ids: small integers, or words that may hold commas and inner spaces (never quotes, control
/// bytes, edge blanks, or a leading comment mark).
fn id(text: bool) -> BoxedStrategy<String> {
    if text {
        "[a-z][a-z ,;.]{0,5}[a-z]"
            .prop_map(|s| s.to_string())
            .boxed()
    } else {
        (0u32..40).prop_map(|v| v.to_string()).boxed()
    }
}

/// Other fields: anything printable a CSV writer must quote, or empty.
fn other(comma: bool) -> BoxedStrategy<String> {
    if comma {
        "[a-z ,\"']{0,8}".boxed()
    } else {
        "[a-z ,\"']{0,8}".prop_map(|s| s.replace('"', "")).boxed()
    }
}

fn table(comma: bool) -> impl Strategy<Value = Table> {
    (2usize..6, any::<bool>()).prop_flat_map(move |(ncols, text)| {
        (0..ncols, 0..ncols - 1).prop_flat_map(move |(a, b0)| {
            let b = if b0 >= a { b0 + 1 } else { b0 };
            let row = (0..ncols)
                .map(|c| {
                    if c == a || c == b {
                        id(text)
                    } else {
                        other(comma)
                    }
                })
                .collect::<Vec<_>>();
            proptest::collection::vec(row, 1..40).prop_map(move |rows| Table { ncols, rows, a, b })
        })
    })
}

fn expected(t: &Table) -> (BTreeSet<String>, BTreeSet<(String, String)>) {
    let mut nodes = BTreeSet::new();
    let mut edges = BTreeSet::new();
    for r in &t.rows {
        let (x, y) = (r[t.a].clone(), r[t.b].clone());
        nodes.insert(x.clone());
        nodes.insert(y.clone());
        if x != y {
            edges.insert(if x <= y { (x, y) } else { (y, x) });
        }
    }
    (nodes, edges)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn chosen_columns_give_the_rows_graph(
        t in table(true),
        by_name in any::<bool>(),
        tab in any::<bool>(),
        piece in prop_oneof![Just(0usize), Just(7usize), Just(64usize)],
    ) {
        // Tab-separated files carry no quoting, so their fields hold no tab or quote.
        let t = if tab {
            Table {
                rows: t.rows.iter().map(|r| r.iter().map(|f| f.replace('"', "")).collect()).collect(),
                ..t
            }
        } else {
            t
        };
        let bytes = write(&t, if tab { b'\t' } else { b',' }, true);
        let pick = |i: usize| if by_name {
            ColumnRef::Name(format!("field{}", i + 1))
        } else {
            ColumnRef::Position(i + 1)
        };
        let opts = LoadOptions {
            columns: Some(ColumnChoice { first: pick(t.a), second: pick(t.b) }),
            header: if by_name { HeaderChoice::Auto } else { HeaderChoice::Skip },
            piece_bytes: piece,
            ..LoadOptions::default()
        };
        let g = load_bytes("t.csv", &bytes, &opts).unwrap();
        let (nodes, edges) = expected(&t);
        prop_assert_eq!(node_labels(&g), nodes);
        prop_assert_eq!(edge_labels(&g), edges);
        prop_assert!(g.intake.id_columns.is_some());
        prop_assert!(g.intake.header_line.is_some());
    }

    #[test]
    fn compressed_and_headerless_files_read_the_same(t in table(true)) {
        let bytes = write(&t, b',', false);
        let opts = LoadOptions {
            columns: Some(ColumnChoice {
                first: ColumnRef::Position(t.a + 1),
                second: ColumnRef::Position(t.b + 1),
            }),
            header: HeaderChoice::None,
            ..LoadOptions::default()
        };
        let (nodes, edges) = expected(&t);
        for input in [bytes.clone(), common::zstd(&bytes)] {
            let g = load_bytes("t.csv", &input, &opts).unwrap();
            prop_assert_eq!(node_labels(&g), nodes.clone());
            prop_assert_eq!(edge_labels(&g), edges.clone());
        }
    }
}

fn choose(s: &str) -> LoadOptions {
    LoadOptions {
        columns: Some(ColumnChoice::parse(s).unwrap()),
        ..LoadOptions::default()
    }
}

#[test]
fn a_missing_named_column_lists_the_header() {
    let text = b"day,from,to\n1,a,b\n";
    match load_bytes("msgs.csv", text, &choose("from,recipient")) {
        Err(Error::Columns { path, problem }) => {
            assert_eq!(path.to_str(), Some("msgs.csv"));
            assert!(
                problem.contains("column \"recipient\" is not in the header"),
                "{problem}"
            );
            assert!(problem.contains("line 1"), "{problem}");
            assert!(
                problem.contains("1 \"day\", 2 \"from\", 3 \"to\""),
                "{problem}"
            );
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn names_need_a_header_line() {
    let opts = LoadOptions {
        header: HeaderChoice::None,
        ..choose("from,to")
    };
    assert!(matches!(
        load_bytes("msgs.csv", b"from,to\n1,2\n", &opts),
        Err(Error::Columns { .. })
    ));
}

#[test]
fn an_unclosed_quote_and_a_short_row_are_placed() {
    let text = b"from,to,note\n1,2,x\n3,\"4,five\n";
    match load_bytes("msgs.csv", text, &choose("from,to")) {
        Err(Error::Malformed { pos, problem, .. }) => {
            assert_eq!((pos.line, pos.byte), (3, 19));
            assert!(problem.contains("not closed"), "{problem}");
        }
        other => panic!("{other:?}"),
    }
    let text = b"from,x,to\n1,2,3\n4,5\n";
    match load_bytes("msgs.csv", text, &choose("from,to")) {
        Err(Error::Malformed { pos, problem, .. }) => {
            assert_eq!((pos.line, pos.byte), (3, 16));
            assert!(problem.contains("only 2 fields"), "{problem}");
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn the_command_line_reads_named_columns_and_refuses_unknown_ones() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("relay.csv");
    std::fs::write(
        &path,
        "sent,sender,\"desk, floor\",recipient\n\
         2026-10-01,17,\"east, 2\",23\n\
         2026-10-01,\"23\",west,17\n\
         2026-10-02,5,,17\n",
    )
    .unwrap();
    let p = path.to_str().unwrap();
    let out = plumb(&["intake", p, "--columns", "sender,recipient"]);
    assert!(out.status.success(), "{out:?}");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("columns 2 \"sender\" and 4 \"recipient\", comma-separated"),
        "{text}"
    );
    assert!(text.contains("3 nodes · 2 edges"), "{text}");
    let out = plumb(&["intake", p, "--columns", "sender,to"]);
    assert_eq!(out.status.code(), Some(3), "{out:?}");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("4 \"recipient\""), "{err}");
    let out = plumb(&["intake", p, "--columns", "2"]);
    assert_eq!(out.status.code(), Some(2), "{out:?}");
}

#[test]
fn matrix_market_has_no_columns_to_choose() {
    let text = b"%%MatrixMarket matrix coordinate pattern symmetric\n3 3 1\n2 1\n";
    assert!(matches!(
        load_bytes("m.mtx", text, &choose("1,2")),
        Err(Error::Parameters { .. })
    ));
}

//! Parquet input: files written by the Apache `parquet` crate's own writer (an implementation of
//! the Apache Parquet file format specification from crates.io, independent of plumb's reading
//! path), read back by plumb and compared with the rows that were written.

mod common;

use std::collections::BTreeSet;
use std::sync::Arc;

use common::{edge_labels, load_bytes, node_labels, plumb};
use parquet::basic::Compression;
use parquet::column::writer::ColumnWriter;
use parquet::data_type::ByteArray;
use parquet::file::properties::WriterProperties;
use parquet::file::writer::SerializedFileWriter;
use parquet::schema::parser::parse_message_type;
use plumb::Error;
use plumb::read::columns::ColumnChoice;
use plumb::store::load::LoadOptions;
use proptest::prelude::*;

/// One column's values in a row group; `None` is a null.
#[derive(Debug, Clone)]
enum Col {
    I64(Vec<Option<i64>>),
    I32(Vec<Option<i32>>),
    Str(Vec<Option<String>>),
    F64(Vec<f64>),
}

fn defs<T>(v: &[Option<T>]) -> Vec<i16> {
    v.iter().map(|x| x.is_some() as i16).collect()
}

/// Write row groups of columns under `schema` (a Parquet message type).
fn write(schema: &str, groups: &[Vec<Col>], codec: Compression) -> Vec<u8> {
    let schema = Arc::new(parse_message_type(schema).unwrap());
    let props = Arc::new(WriterProperties::builder().set_compression(codec).build());
    let mut out = Vec::new();
    let mut w = SerializedFileWriter::new(&mut out, schema.clone(), props).unwrap();
    for cols in groups {
        let mut rg = w.next_row_group().unwrap();
        let mut i = 0;
        while let Some(mut c) = rg.next_column().unwrap() {
            let optional = schema.get_fields()[i].is_optional();
            let d = |v: Vec<i16>| if optional { Some(v) } else { None };
            match (c.untyped(), &cols[i]) {
                (ColumnWriter::Int64ColumnWriter(w), Col::I64(v)) => {
                    let vals: Vec<i64> = v.iter().flatten().copied().collect();
                    w.write_batch(&vals, d(defs(v)).as_deref(), None).unwrap();
                }
                (ColumnWriter::Int32ColumnWriter(w), Col::I32(v)) => {
                    let vals: Vec<i32> = v.iter().flatten().copied().collect();
                    w.write_batch(&vals, d(defs(v)).as_deref(), None).unwrap();
                }
                (ColumnWriter::ByteArrayColumnWriter(w), Col::Str(v)) => {
                    let vals: Vec<ByteArray> = v
                        .iter()
                        .flatten()
                        .map(|s| ByteArray::from(s.as_str()))
                        .collect();
                    w.write_batch(&vals, d(defs(v)).as_deref(), None).unwrap();
                }
                (ColumnWriter::DoubleColumnWriter(w), Col::F64(v)) => {
                    w.write_batch(v, None, None).unwrap();
                }
                (_, c) => panic!("column {i} does not take {c:?}"),
            }
            c.close().unwrap();
            i += 1;
        }
        rg.close().unwrap();
    }
    w.close().unwrap();
    out
}

fn expected(pairs: &[(String, String)]) -> (BTreeSet<String>, BTreeSet<(String, String)>) {
    let mut nodes = BTreeSet::new();
    let mut edges = BTreeSet::new();
    for (a, b) in pairs {
        nodes.insert(a.clone());
        nodes.insert(b.clone());
        if a != b {
            edges.insert(if a <= b {
                (a.clone(), b.clone())
            } else {
                (b.clone(), a.clone())
            });
        }
    }
    (nodes, edges)
}

fn columns(s: &str) -> LoadOptions {
    LoadOptions {
        columns: Some(ColumnChoice::parse(s).unwrap()),
        ..LoadOptions::default()
    }
}

fn codec(i: usize) -> Compression {
    match i {
        0 => Compression::UNCOMPRESSED,
        1 => Compression::SNAPPY,
        2 => Compression::LZ4_RAW,
        3 => Compression::GZIP(Default::default()),
        _ => Compression::ZSTD(Default::default()),
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn integer_ids_in_row_groups_give_the_rows_graph(
        groups in proptest::collection::vec(
            proptest::collection::vec((0i64..60, 0i64..60, any::<i64>()), 1..80),
            1..5,
        ),
        codec_i in 0usize..5,
    ) {
        let codec = codec(codec_i);
        // The ids are the second and third columns; a timestamp comes first.
        let cols: Vec<Vec<Col>> = groups
            .iter()
            .map(|g| {
                vec![
                    Col::I64(g.iter().map(|r| Some(r.2)).collect()),
                    Col::I64(g.iter().map(|r| Some(r.0)).collect()),
                    Col::I32(g.iter().map(|r| Some(r.1 as i32)).collect()),
                ]
            })
            .collect();
        let file = write(
            "message replies { required int64 sent_at; required int64 sender; required int32 recipient; }",
            &cols,
            codec,
        );
        let g = load_bytes("r.parquet", &file, &columns("sender,recipient")).unwrap();
        let pairs: Vec<(String, String)> = groups
            .iter()
            .flatten()
            .map(|r| (r.0.to_string(), r.1.to_string()))
            .collect();
        let (nodes, edges) = expected(&pairs);
        prop_assert_eq!(node_labels(&g), nodes);
        prop_assert_eq!(edge_labels(&g), edges);
        prop_assert_eq!(g.intake.edge_lines, pairs.len() as u64);
        // The same rows as text give the same graph.
        let text: String = pairs.iter().map(|(a, b)| format!("{a} {b}\n")).collect();
        let t = load_bytes("r.txt", text.as_bytes(), &LoadOptions::default()).unwrap();
        prop_assert_eq!(edge_labels(&t), edge_labels(&g));
    }

    #[test]
    fn string_ids_keep_their_bytes(
        rows in proptest::collection::vec(("[a-c ,\"é]{1,4}", "[a-c ,\"é]{1,4}"), 1..60),
    ) {
        let cols = vec![vec![
            Col::Str(rows.iter().map(|r| Some(r.0.clone())).collect()),
            Col::Str(rows.iter().map(|r| Some(r.1.clone())).collect()),
        ]];
        let file = write(
            "message m { required binary a (UTF8); required binary b (UTF8); }",
            &cols,
            Compression::SNAPPY,
        );
        let g = load_bytes("s.parquet", &file, &LoadOptions::default()).unwrap();
        let (nodes, edges) = expected(&rows);
        prop_assert_eq!(node_labels(&g), nodes);
        prop_assert_eq!(edge_labels(&g), edges);
    }
}

#[test]
fn a_null_id_is_a_malformed_row_placed_by_its_row() {
    // Rows 1-3 in the first row group, 4-6 in the second; row 5 has no recipient.
    let groups = vec![
        vec![
            Col::I64(vec![Some(1), Some(2), Some(3)]),
            Col::I64(vec![Some(2), Some(3), Some(1)]),
        ],
        vec![
            Col::I64(vec![Some(4), Some(5), Some(6)]),
            Col::I64(vec![Some(5), None, Some(4)]),
        ],
    ];
    let file = write(
        "message m { required int64 src; optional int64 dst; }",
        &groups,
        Compression::SNAPPY,
    );
    match load_bytes("n.parquet", &file, &LoadOptions::default()) {
        Err(Error::Malformed { pos, problem, .. }) => {
            assert_eq!(pos.line, 5);
            assert_eq!(pos.to_string(), "row 5 of the file");
            assert!(problem.contains("empty"), "{problem}");
        }
        other => panic!("{other:?}"),
    }
    let skip = LoadOptions {
        skip_malformed: true,
        ..LoadOptions::default()
    };
    let g = load_bytes("n.parquet", &file, &skip).unwrap();
    assert_eq!(g.intake.malformed_skipped, 1);
    // 1-2, 2-3, 3-1, 4-5 and 6-4.
    assert_eq!(g.edge_count(), 5);
}

#[test]
fn missing_and_mistyped_columns_are_named() {
    let file = write(
        "message m { required int64 src; required int64 dst; required double weight; }",
        &[vec![
            Col::I64(vec![Some(1)]),
            Col::I64(vec![Some(2)]),
            Col::F64(vec![0.5]),
        ]],
        Compression::UNCOMPRESSED,
    );
    match load_bytes("w.parquet", &file, &columns("src,target")) {
        Err(Error::Parquet { problem, .. }) => {
            assert!(
                problem.contains("column \"target\" is not in the file's schema"),
                "{problem}"
            );
            assert!(
                problem.contains("1 \"src\" (INT64), 2 \"dst\" (INT64), 3 \"weight\" (DOUBLE)"),
                "{problem}"
            );
        }
        other => panic!("{other:?}"),
    }
    match load_bytes("w.parquet", &file, &columns("src,3")) {
        Err(Error::Parquet { problem, .. }) => {
            assert!(
                problem.contains("node ids must be integers or strings"),
                "{problem}"
            );
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn a_truncated_file_is_refused_not_misread() {
    let file = write(
        "message m { required int64 src; required int64 dst; }",
        &[vec![
            Col::I64((0..1000).map(Some).collect()),
            Col::I64((1..1001).map(Some).collect()),
        ]],
        Compression::SNAPPY,
    );
    for cut in [file.len() - 1, file.len() / 2, 12] {
        match load_bytes("t.parquet", &file[..cut], &LoadOptions::default()) {
            Err(Error::Parquet { problem, .. }) => {
                assert!(problem.contains("unreadable"), "{cut}: {problem}")
            }
            other => panic!("{cut}: {other:?}"),
        }
    }
}

#[test]
fn the_command_line_reads_a_parquet_export() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("follows.parquet");
    let file = write(
        "message follows { required binary follower (UTF8); required binary followed (UTF8); }",
        &[vec![
            Col::Str(vec![
                Some("wren".into()),
                Some("ash".into()),
                Some("ash".into()),
            ]),
            Col::Str(vec![
                Some("ash".into()),
                Some("wren".into()),
                Some("moss, jr".into()),
            ]),
        ]],
        Compression::SNAPPY,
    );
    std::fs::write(&path, file).unwrap();
    let out = plumb(&["intake", path.to_str().unwrap()]);
    assert!(out.status.success(), "{out:?}");
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("Parquet"), "{text}");
    assert!(
        text.contains("columns 1 \"follower\" (string) and 2 \"followed\" (string), 1 row group"),
        "{text}"
    );
    assert!(text.contains("3 nodes · 2 edges"), "{text}");
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    /// Damaged bytes anywhere give a graph or an error, never a panic.
    #[test]
    fn damaged_files_never_panic(
        flips in proptest::collection::vec((any::<proptest::sample::Index>(), any::<u8>()), 1..4),
        nullable in any::<bool>(),
    ) {
        let schema = if nullable {
            "message m { optional int64 src; optional binary dst (UTF8); }"
        } else {
            "message m { required int64 src; required binary dst (UTF8); }"
        };
        let mut file = write(
            schema,
            &[vec![
                Col::I64((0..300).map(Some).collect()),
                Col::Str((0..300).map(|i| Some(format!("n{}", i % 17))).collect()),
            ]],
            Compression::SNAPPY,
        );
        for (at, byte) in flips {
            let i = at.index(file.len());
            file[i] = byte;
        }
        let _ = load_bytes("d.parquet", &file, &LoadOptions::default());
    }
}

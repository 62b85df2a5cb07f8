//! Part files: a folder or pattern of parts (plain, zstd, gzip, mixed) reads as the one file
//! their lines make when put one after another. The reference is that single file, read by the
//! same reader whose figures the other test files check against outside sources; the property
//! itself (splitting a file into parts changes nothing) is common practice, no source.

mod common;

use std::path::Path;

use common::{edge_labels, gzip, load_bytes, plumb, zstd, zstd_frames};
use plumb::progress::Quiet;
use plumb::store::load::{LoadOptions, load};
use rand::{RngExt, SeedableRng};

/// A messy edge list: repeated lines, reciprocal pairs, self-loops, comments and blank lines.
fn messy_lines(seed: u64, lines: usize) -> Vec<String> {
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    (0..lines)
        .map(|i| match i % 97 {
            0 => "# a comment".to_string(),
            1 => String::new(),
            _ => {
                let a: u32 = rng.random_range(0..3000);
                let b: u32 = if i % 89 == 5 {
                    a
                } else {
                    rng.random_range(0..3000)
                };
                format!("{}\t{}", a * 7 + 1, b * 7 + 1)
            }
        })
        .collect()
}

fn join(lines: &[String], header: bool) -> Vec<u8> {
    let mut s = String::new();
    if header {
        s.push_str("from\tto\n");
    }
    for l in lines {
        s.push_str(l);
        s.push('\n');
    }
    s.into_bytes()
}

/// Write `lines` as five parts: plain, zstd, zstd in several frames, gzip, and an empty one,
/// each with its own header when `header`; plus a success marker and a hidden checksum file
/// that must be passed over.
fn write_parts(dir: &Path, lines: &[String], header: bool) {
    std::fs::create_dir_all(dir).unwrap();
    let cut = |k: usize| lines.len() * k / 4;
    let chunks: Vec<&[String]> = (0..4).map(|k| &lines[cut(k)..cut(k + 1)]).collect();
    std::fs::write(dir.join("part-00000.tsv"), join(chunks[0], header)).unwrap();
    std::fs::write(
        dir.join("part-00001.tsv.zst"),
        zstd(&join(chunks[1], header)),
    )
    .unwrap();
    std::fs::write(
        dir.join("part-00002.tsv.zst"),
        zstd_frames(&join(chunks[2], header), 1000),
    )
    .unwrap();
    std::fs::write(
        dir.join("part-00003.tsv.gz"),
        gzip(&join(chunks[3], header)),
    )
    .unwrap();
    std::fs::write(dir.join("part-00004.tsv"), b"").unwrap();
    std::fs::write(dir.join("_SUCCESS"), b"").unwrap();
    std::fs::write(dir.join(".part-00000.tsv.crc"), b"\x00\x01binary").unwrap();
}

/// Small pieces, so every part is split among the workers.
fn small_pieces() -> LoadOptions {
    LoadOptions {
        piece_bytes: 700,
        ..Default::default()
    }
}

#[test]
fn parts_read_as_the_file_they_make() {
    let tmp = tempfile::tempdir().unwrap();
    let lines = messy_lines(7, 20_000);
    for header in [false, true] {
        let dir = tmp.path().join(format!("dump-{header}"));
        write_parts(&dir, &lines, header);
        let whole = load_bytes("whole.tsv", &join(&lines, header), &small_pieces()).unwrap();
        for threads in [1, 2, 4] {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .unwrap();
            let g = pool
                .install(|| load(&dir, &small_pieces(), &Quiet))
                .unwrap();
            assert_eq!(edge_labels(&g), edge_labels(&whole), "threads {threads}");
            let (a, b) = (&g.intake, &whole.intake);
            assert_eq!(a.parts, Some(5));
            assert_eq!(
                (
                    a.edge_lines,
                    a.self_loops,
                    a.repeated_lines,
                    a.reciprocal_pairs
                ),
                (
                    b.edge_lines,
                    b.self_loops,
                    b.repeated_lines,
                    b.reciprocal_pairs
                )
            );
            assert_eq!(
                (a.comment_lines, a.blank_lines),
                (b.comment_lines, b.blank_lines)
            );
            // Every part with text repeats the header; each is skipped, none is read as an edge.
            assert_eq!(a.header_lines, Some(if header { 4 } else { 0 }));
            assert_eq!(a.lines, b.lines + if header { 3 } else { 0 });
            let parts_bytes: u64 = std::fs::read_dir(&dir)
                .unwrap()
                .map(|e| e.unwrap())
                .filter(|e| e.file_name().to_string_lossy().starts_with("part-"))
                .map(|e| e.metadata().unwrap().len())
                .sum();
            assert_eq!(a.input_bytes, parts_bytes);
        }
    }
}

#[test]
fn a_pattern_names_parts_and_text_ids_carry_across_them() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    std::fs::write(dir.join("a-1.txt"), "1 2\n2 3\n").unwrap();
    // The text id is in the second part: the first part's integers become text too.
    std::fs::write(dir.join("a-2.txt"), zstd(b"3 node-x\nnode-x 1\n")).unwrap();
    std::fs::write(dir.join("b-1.txt"), "9 9\n").unwrap();
    let pattern = dir.join("a-*.txt");
    let g = load(&pattern, &LoadOptions::default(), &Quiet).unwrap();
    let whole = common::load_text("1 2\n2 3\n3 node-x\nnode-x 1\n");
    assert_eq!(edge_labels(&g), edge_labels(&whole));
    let first = g.intake.first_text_id.as_ref().unwrap();
    assert_eq!((first.id.as_str(), first.line), ("node-x", 1));
    assert!(first.part.as_ref().unwrap().ends_with("a-2.txt"));
}

#[test]
fn bad_input_names_the_part_and_its_line() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("dump");
    std::fs::create_dir(&dir).unwrap();
    let good: String = (0..3000).map(|i| format!("{i} {}\n", i + 1)).collect();
    std::fs::write(dir.join("p0.tsv"), &good).unwrap();
    std::fs::write(dir.join("p1.tsv.gz"), gzip(good.as_bytes())).unwrap();
    // Line 2001 of the third part lacks its second id.
    let mut bad = good.clone();
    bad.insert_str(bad.find("2000 2001\n").unwrap(), "17\n");
    std::fs::write(dir.join("p2.tsv.zst"), zstd_frames(bad.as_bytes(), 5000)).unwrap();
    std::fs::write(dir.join("p3.tsv"), &good).unwrap();
    let e = load(&dir, &small_pieces(), &Quiet).unwrap_err().to_string();
    assert!(e.contains("p2.tsv.zst"), "{e}");
    assert!(e.contains("line 2001"), "{e}");
    // With an earlier bad part too, the earliest one is reported.
    std::fs::write(dir.join("p1.tsv.gz"), gzip(b"1 2\n3\n")).unwrap();
    let e = load(&dir, &small_pieces(), &Quiet).unwrap_err().to_string();
    assert!(e.contains("p1.tsv.gz") && e.contains("line 2"), "{e}");
    // Skipped malformed lines are listed with their parts.
    let opts = LoadOptions {
        skip_malformed: true,
        ..small_pieces()
    };
    let g = load(&dir, &opts, &Quiet).unwrap();
    let ex = &g.intake.malformed_examples;
    assert_eq!(g.intake.malformed_skipped, 2);
    assert!(ex[0].part.as_ref().unwrap().ends_with("p1.tsv.gz") && ex[0].line == 2);
    assert!(ex[1].part.as_ref().unwrap().ends_with("p2.tsv.zst") && ex[1].line == 2001);
}

#[test]
fn broken_parts_are_named() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("dump");
    std::fs::create_dir(&dir).unwrap();
    std::fs::write(dir.join("p0.tsv"), "1 2\n").unwrap();
    let z = zstd(&b"2 3\n".repeat(5000));
    std::fs::write(dir.join("p1.tsv.zst"), &z[..z.len() / 2]).unwrap();
    let e = load(&dir, &LoadOptions::default(), &Quiet)
        .unwrap_err()
        .to_string();
    assert!(e.contains("p1.tsv.zst") && e.contains("truncated"), "{e}");
    // A store among the parts is refused by name.
    std::fs::write(dir.join("p1.tsv.zst"), zstd(b"2 3\n")).unwrap();
    let store = tmp.path().join("g.plumb");
    plumb::store::load::pack(&dir.join("p0.tsv"), &store, &LoadOptions::default(), &Quiet).unwrap();
    std::fs::copy(&store, dir.join("p2.plumb")).unwrap();
    let e = load(&dir, &LoadOptions::default(), &Quiet)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("p2.plumb") && e.contains("must be an edge list"),
        "{e}"
    );
    // A folder with nothing to read says so.
    let empty = tmp.path().join("empty");
    std::fs::create_dir(&empty).unwrap();
    std::fs::write(empty.join("_SUCCESS"), "").unwrap();
    let e = load(&empty, &LoadOptions::default(), &Quiet)
        .unwrap_err()
        .to_string();
    assert!(e.contains("no part files"), "{e}");
    let e = load(
        &tmp.path().join("nothing-*.tsv"),
        &LoadOptions::default(),
        &Quiet,
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("no file matches"), "{e}");
}

#[test]
fn the_cli_profiles_a_folder_and_reports_its_parts() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("dump");
    write_parts(&dir, &messy_lines(3, 4000), true);
    let json = tmp.path().join("p.json");
    let out = plumb(&[
        "profile",
        dir.to_str().unwrap(),
        "--json",
        json.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("5 part files read in parallel"), "{text}");
    let doc: serde_json::Value = serde_json::from_slice(&std::fs::read(&json).unwrap()).unwrap();
    common::assert_valid_profile(&doc);
    assert_eq!(doc["profile"]["intake"]["parts"], 5);
    // The checksum covers the parts' bytes in order: the same parts give the same sum, and a
    // changed part changes it.
    let sum = plumb::profile::report::checksum(&dir).unwrap();
    assert_eq!(doc["input"]["xxh3"], sum.1.as_str());
    std::fs::write(dir.join("part-00004.tsv"), "1 8\n").unwrap();
    assert_ne!(plumb::profile::report::checksum(&dir).unwrap(), sum);
}

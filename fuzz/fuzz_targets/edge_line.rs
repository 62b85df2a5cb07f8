//! The line grammar alone (the hot parser, no threads or allocation of a graph), so it runs
//! fast enough for tens of millions of inputs: every data line's two ids, as written, match
//! the naive reference tokenizer, and the first malformed line is the reference's.
#![no_main]

use libfuzzer_sys::fuzz_target;
use plumb::store::reference;
use plumb::read::scan::{ScanRules, scan_chunk};

fuzz_target!(|data: &[u8]| {
    let rules = ScanRules {
        max_line: usize::MAX,
        skip_malformed: false,
        body_start: 0,
        header_at: None,
        mtx: None,
        text_ids: false,
        pick: None,
    };
    let mut got: Vec<(Vec<u8>, Vec<u8>)> = Vec::new();
    let out = scan_chunk(0, data, 0, &rules, |a, b| {
        // An integer token's value must be the decimal reading of its bytes.
        for t in [a, b] {
            if let Some(v) = t.int {
                assert_eq!(
                    std::str::from_utf8(t.raw).unwrap().parse::<u64>().unwrap(),
                    v
                );
            }
        }
        got.push((a.raw.to_vec(), b.raw.to_vec()));
        true
    });
    match (out.error, reference::edge_tokens(data, None)) {
        (None, Ok(want)) => assert_eq!(got, want),
        (Some(f), Err(r)) => {
            assert!(f.offset < data.len().max(1));
            assert_eq!((f.line + 1, f.offset as u64), (r.line, r.byte));
        }
        (f, r) => panic!("scan {f:?} vs reference {r:?}"),
    }
});

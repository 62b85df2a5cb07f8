//! Matrix Market reader: success exactly when the naive reference succeeds, with the same graph;
//! every positioned error points inside the input.
#![no_main]

use libfuzzer_sys::fuzz_target;
use plumb::Error;
use plumb::store::load::{FormatChoice, LoadOptions, load_input};
use plumb::store::reference;
use plumb::read::source::InputBytes;

fuzz_target!(init: {
    let _ = rayon::ThreadPoolBuilder::new().num_threads(1).build_global();
}, |data: &[u8]| {
    // Start from a banner most of the time so the fuzzer explores entries, not just banners.
    let mut text = Vec::new();
    if data.first().is_some_and(|&b| b & 1 == 0) {
        text.extend_from_slice(b"%%MatrixMarket matrix coordinate pattern general\n");
    }
    text.extend_from_slice(data.get(1..).unwrap_or_default());
    let opts = LoadOptions {
        format: FormatChoice::MatrixMarket,
        piece_bytes: 7,
        // Small, so a size line declaring millions of isolated nodes is refused quickly (the
        // reference, which has no limit, would take minutes to list them).
        memory_budget: 8 << 20,
        ..LoadOptions::default()
    };
    let fast = load_input(InputBytes::from_vec("fuzz.mtx", text.clone()), &opts, &plumb::progress::Quiet);
    if plumb::read::source::sniff(&text) != plumb::read::source::Sniffed::Text {
        // Compressed or store bytes: the reference reads only text; not panicking is the check.
        return;
    }
    if let Err(Error::OverBudget { .. } | Error::TooManyNodes { .. }) = &fast {
        // A limit refused it; the reference has no limits to compare with.
        return;
    }
    match (fast, reference::matrix_market(&text)) {
        (Ok(g), Some(r)) => {
            g.csr.verify().expect("a built graph satisfies every invariant");
            assert_eq!(reference::view(&g), r);
        }
        (Err(e), r) => {
            if let Error::MatrixMarket { pos, .. } | Error::Malformed { pos, .. } = &e {
                assert!(pos.byte <= text.len() as u64 && pos.line >= 1, "{e}");
            }
            // Budget and size limits may refuse what the reference (which has none) accepts.
            let limited = matches!(e, Error::OverBudget { .. } | Error::TooManyNodes { .. } | Error::Empty { .. });
            assert!(r.is_none() || limited, "fast error {e} but the reference read it");
        }
        (Ok(g), None) => panic!("fast read {:?} but the reference refused", g.intake),
    }
});

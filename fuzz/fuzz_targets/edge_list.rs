//! Edge-list reader: a successful read equals the naive reference reader on the same bytes; a
//! rejected line is the reference's first bad line, at a position inside the input.
#![no_main]

use libfuzzer_sys::fuzz_target;
use plumb::Error;
use plumb::store::load::{LoadOptions, load_input};
use plumb::store::reference;
use plumb::read::source::InputBytes;

fuzz_target!(init: {
    // One worker: idle pool threads would spin between runs and slow fuzzing several-fold.
    // Interleavings across threads are covered by the tests in tests/.
    let _ = rayon::ThreadPoolBuilder::new().num_threads(1).build_global();
}, |data: &[u8]| {
    // The first byte picks the piece size so chunk boundaries land everywhere.
    let (piece, text) = match data.split_first() {
        Some((&p, rest)) => (1 + p as usize, rest),
        None => (1, data),
    };
    let opts = LoadOptions {
        piece_bytes: piece,
        memory_budget: 1 << 30,
        ..LoadOptions::default()
    };
    let sniffed = plumb::read::source::sniff(text);
    let fast = load_input(InputBytes::from_vec("fuzz", text.to_vec()), &opts, &plumb::progress::Quiet);
    if sniffed != plumb::read::source::Sniffed::Text {
        // Compressed or store bytes: the reference reads only text; not panicking is the check.
        return;
    }
    match (fast, reference::edge_list(text)) {
        (Ok(g), Ok(r)) => {
            g.csr.verify().expect("a built graph satisfies every invariant");
            assert_eq!(reference::view(&g), r);
        }
        (Err(Error::Malformed { pos, .. }), Err(r)) => {
            assert!(pos.byte < text.len() as u64 && pos.line >= 1);
            assert_eq!((pos.line, pos.byte), (r.line, r.byte));
        }
        (Err(Error::Empty { .. }), Ok(r)) => assert!(r.nodes.is_empty()),
        (f, r) => panic!("fast {:?} vs reference {:?}", f.map(|g| g.intake), r),
    }
});

//! Store opener: any bytes either open into a graph that is safe to traverse, or give an error.
//! A store written by plumb always reopens identically.
#![no_main]

use libfuzzer_sys::fuzz_target;
use plumb::read::source::InputBytes;

fuzz_target!(init: {
    let _ = rayon::ThreadPoolBuilder::new().num_threads(1).build_global();
}, |data: &[u8]| {
    if let Ok(g) = plumb::store::file::open_input(InputBytes::from_vec("fuzz.plumb", data.to_vec())) {
        // Opening checked offsets and neighbour indices, so walking everything cannot panic.
        let mut sum = 0u64;
        for u in 0..g.node_count() as u32 {
            for &v in g.csr.neighbors(u) {
                sum = sum.wrapping_add(v as u64);
            }
            let _ = g.ids.label(u);
        }
        let _ = g.csr.verify();
        let _ = g.verify_directions();
        std::hint::black_box(sum);
    }
});

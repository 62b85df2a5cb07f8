//! Large working arrays on transparent huge pages. On Linux with THP in `madvise` mode (the
//! common default), an allocation gets 2 MiB pages only if asked before it is first touched.
//! Measured on the reference machine with a one-off program (4 GB array, not kept as a bench):
//! scattered reads and updates 94–114 ns each on 4 KiB pages, 62–71 ns on huge pages, and
//! first-touch zeroing 3–10 s against 2 s, because every 4 KiB page costs a fault and a TLB
//! entry. BFS words, wedge tables and the fill's arrays
//! are scattered-access arrays of that size at a billion edges.

use bytemuck::Zeroable;

/// Arrays smaller than this stay as they are: they fit the TLB's reach anyway.
const HUGE_FROM_BYTES: usize = 8 << 20;

/// `n` zeroed elements, asked for huge pages when large. The zeroing costs nothing up front:
/// the allocator takes fresh zero pages from the system and they are faulted in on first use.
pub(crate) fn zeroed<T: Zeroable>(n: usize) -> Vec<T> {
    let v: Vec<T> = bytemuck::zeroed_vec(n);
    advise(v.as_ptr().cast(), n * std::mem::size_of::<T>());
    v
}

/// An empty vector with room for `n` elements, asked for huge pages when large.
pub(crate) fn with_capacity<T>(n: usize) -> Vec<T> {
    let v: Vec<T> = Vec::with_capacity(n);
    advise(v.as_ptr().cast(), n * std::mem::size_of::<T>());
    v
}

/// Ask for huge pages on the whole 2 MiB pages inside `[ptr, ptr + bytes)`. Advice only: a
/// kernel without THP, or any other system, leaves the pages as they are, which changes speed,
/// never results.
fn advise(ptr: *const u8, bytes: usize) {
    if bytes < HUGE_FROM_BYTES {
        return;
    }
    #[cfg(target_os = "linux")]
    {
        const HUGE: usize = 2 << 20;
        let start = (ptr as usize).next_multiple_of(HUGE);
        let end = (ptr as usize + bytes) / HUGE * HUGE;
        if end > start {
            // SAFETY: the range lies inside one live allocation the caller owns; MADV_HUGEPAGE
            // changes how its pages are backed, not their contents.
            let _ = unsafe {
                libc::madvise(start as *mut libc::c_void, end - start, libc::MADV_HUGEPAGE)
            };
        }
    }
    #[cfg(not(target_os = "linux"))]
    let _ = ptr;
}

/// Ask the processor to start loading `r`'s cache line (a hint: it never faults), so independent
/// scattered reads overlap instead of waiting one after another.
#[inline(always)]
pub(crate) fn prefetch<T>(r: &T) {
    #[cfg(target_arch = "x86_64")]
    // SAFETY: prefetching is a hint; the pointer comes from a live reference.
    unsafe {
        std::arch::x86_64::_mm_prefetch::<{ std::arch::x86_64::_MM_HINT_T0 }>(
            r as *const T as *const i8,
        );
    }
    #[cfg(not(target_arch = "x86_64"))]
    let _ = r;
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn arrays_are_zeroed_and_sized() {
        for n in [0usize, 1, 1000, 3 << 20] {
            let v: Vec<u64> = zeroed(n);
            assert_eq!(v.len(), n);
            assert!(v.iter().all(|&x| x == 0));
            let w: Vec<u32> = with_capacity(n);
            assert!(w.is_empty() && w.capacity() >= n);
        }
    }
}

//! An array that is either owned or borrowed from a read-only memory map, so a store file can be
//! used in place without copying.

use std::ops::Deref;
use std::sync::Arc;

use bytemuck::Pod;

pub enum Slab<T: Pod> {
    Owned(Vec<T>),
    Mapped {
        map: Arc<memmap2::Mmap>,
        /// Byte offset of the first element; checked for alignment when the slab is made.
        start: usize,
        len: usize,
    },
}

impl<T: Pod> Slab<T> {
    /// Borrow `len` elements at byte `start` of `map`; `None` if out of bounds or misaligned.
    pub fn mapped(map: &Arc<memmap2::Mmap>, start: usize, len: usize) -> Option<Self> {
        let bytes = len.checked_mul(std::mem::size_of::<T>())?;
        let end = start.checked_add(bytes)?;
        let region = map.get(start..end)?;
        bytemuck::try_cast_slice::<u8, T>(region).ok()?;
        Some(Slab::Mapped {
            map: Arc::clone(map),
            start,
            len,
        })
    }

    /// Drop a mapped slab's pages from the resident set (they stay in the page cache and
    /// fault back in when read); nothing for an owned slab.
    pub fn release_pages(&self) {
        #[cfg(unix)]
        if let Slab::Mapped { map, start, len } = self {
            let page = 4096;
            let a = start.next_multiple_of(page);
            let b = (start + len * std::mem::size_of::<T>()) / page * page;
            if b > a {
                // SAFETY: the map is read-only and file-backed: MADV_DONTNEED discards clean
                // views only, refetched unchanged from the file when touched again.
                let _ = unsafe {
                    map.unchecked_advise_range(memmap2::UncheckedAdvice::DontNeed, a, b - a)
                };
            }
        }
    }

    pub fn is_mapped(&self) -> bool {
        matches!(self, Slab::Mapped { .. })
    }
}

impl<T: Pod> Deref for Slab<T> {
    type Target = [T];
    #[inline]
    fn deref(&self) -> &[T] {
        match self {
            Slab::Owned(v) => v,
            Slab::Mapped { map, start, len } => {
                let bytes = &map[*start..*start + *len * std::mem::size_of::<T>()];
                bytemuck::cast_slice(bytes)
            }
        }
    }
}

impl<T: Pod> From<Vec<T>> for Slab<T> {
    fn from(v: Vec<T>) -> Self {
        Slab::Owned(v)
    }
}

impl<T: Pod + std::fmt::Debug> std::fmt::Debug for Slab<T> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "Slab(len {}, mapped {})", self.len(), self.is_mapped())
    }
}

//! Filling the adjacency arrays from raw edge lines, then sorting and merging every list.
//!
//! Each node's region is sized by its raw degree (edge lines, duplicates included). Entries from
//! lines where the node is written first fill the region from the front, entries where it is
//! written second fill it from the back; the two halves are sorted and merged. This yields the
//! simple undirected graph and, on the way, how many directed pairs were distinct, which splits
//! merged lines into repeats and reciprocal pairs. Peak memory is the raw region (8 bytes per
//! edge line) plus per-node cursors; there is no edge vector.

use crate::store::pages::prefetch;
use std::sync::atomic::{AtomicU32, Ordering::Relaxed};

use rayon::prelude::*;

/// Shared, concurrently written arrays of the fill pass.
pub struct Filler {
    offsets: Vec<u64>,
    front: Vec<AtomicU32>,
    back: Vec<AtomicU32>,
    targets: Vec<AtomicU32>,
}

/// The finished adjacency and what merging found.
pub struct Filled {
    pub offsets: Vec<u64>,
    pub targets: Vec<u32>,
    /// Distinct (first, second) pairs among the edge lines.
    pub directed_pairs: u64,
}

/// A zeroed vector of atomics, using the allocator's zeroed pages.
fn atomic_zeroed(len: usize) -> Vec<AtomicU32> {
    let v = std::mem::ManuallyDrop::new(crate::store::pages::zeroed::<u32>(len));
    let (ptr, len, cap) = (v.as_ptr() as *mut AtomicU32, v.len(), v.capacity());
    // SAFETY: AtomicU32 has the same size, alignment and bit validity as u32, and the
    // allocation is handed over whole (the original Vec is never dropped).
    unsafe { Vec::from_raw_parts(ptr, len, cap) }
}

fn plain(v: Vec<AtomicU32>) -> Vec<u32> {
    let v = std::mem::ManuallyDrop::new(v);
    let (ptr, len, cap) = (v.as_ptr() as *mut u32, v.len(), v.capacity());
    // SAFETY: as in `atomic_zeroed`, the layouts are identical; owning the Vec means no other
    // thread can still be writing through the atomics.
    unsafe { Vec::from_raw_parts(ptr, len, cap) }
}

impl Filler {
    /// Size every region by its raw degree.
    pub fn new(raw_degree: &[u32]) -> Self {
        let mut offsets = super::pages::with_capacity(raw_degree.len() + 1);
        let mut acc = 0u64;
        offsets.push(0);
        for &d in raw_degree {
            acc += d as u64;
            offsets.push(acc);
        }
        Filler {
            front: atomic_zeroed(raw_degree.len()),
            back: atomic_zeroed(raw_degree.len()),
            targets: atomic_zeroed(acc as usize),
            offsets,
        }
    }

    /// Record the edge line `u v` (dense indices, `u != v`).
    #[inline]
    pub fn edge(&self, u: u32, v: u32) {
        let (u, v) = (u as usize, v as usize);
        let p = self.offsets[u] + self.front[u].fetch_add(1, Relaxed) as u64;
        self.targets[p as usize].store(v as u32, Relaxed);
        let q = self.offsets[v + 1] - 1 - self.back[v].fetch_add(1, Relaxed) as u64;
        self.targets[q as usize].store(u as u32, Relaxed);
    }

    /// Record a batch of edge lines, fetching the counters a few edges ahead so that their cache
    /// misses overlap (each locked increment otherwise waits for the previous one's misses).
    pub fn edges(&self, batch: &[(u32, u32)]) {
        const AHEAD: usize = 12;
        for (i, &(u, v)) in batch.iter().enumerate() {
            if let Some(&(pu, pv)) = batch.get(i + AHEAD) {
                prefetch(&self.front[pu as usize]);
                prefetch(&self.back[pv as usize]);
                prefetch(&self.offsets[pu as usize]);
                prefetch(&self.offsets[pv as usize + 1]);
            }
            self.edge(u, v);
        }
    }

    /// Sort and merge every list, then close the gaps left by merged duplicates.
    /// Fails if the regions were not filled exactly (the input changed between passes).
    pub fn finish(self) -> Result<Filled, String> {
        let Filler {
            mut offsets,
            front,
            back,
            targets,
        } = self;
        let front = plain(front);
        let back = plain(back);
        let n = front.len();
        if let Some(u) = (0..n)
            .into_par_iter()
            .find_first(|&u| offsets[u + 1] - offsets[u] != front[u] as u64 + back[u] as u64)
        {
            return Err(format!(
                "node index {u} got a different number of edge lines in the second pass; \
                 was the input modified while being read?"
            ));
        }
        let mut targets = plain(targets);
        let mut degree = vec![0u32; n];

        // Batches of whole nodes holding about `GRAIN` entries each, processed in parallel.
        const GRAIN: u64 = 1 << 16;
        let mut cuts = vec![0usize];
        let mut last = 0u64;
        for (u, &o) in offsets.iter().enumerate().take(n).skip(1) {
            if o - last >= GRAIN {
                cuts.push(u);
                last = o;
            }
        }
        cuts.push(n);
        let mut jobs = Vec::with_capacity(cuts.len());
        {
            let mut t_rest: &mut [u32] = &mut targets;
            let mut d_rest: &mut [u32] = &mut degree;
            for w in cuts.windows(2) {
                let (a, b) = (w[0], w[1]);
                let span = (offsets[b] - offsets[a]) as usize;
                let (t, tr) = std::mem::take(&mut t_rest).split_at_mut(span);
                let (d, dr) = std::mem::take(&mut d_rest).split_at_mut(b - a);
                t_rest = tr;
                d_rest = dr;
                jobs.push((a, b, t, d));
            }
        }
        let directed_pairs: u64 = jobs
            .into_par_iter()
            .map(|(a, b, t, d)| {
                let base = offsets[a];
                let mut scratch = Vec::new();
                let mut distinct_front = 0u64;
                for u in a..b {
                    let lo = (offsets[u] - base) as usize;
                    let hi = (offsets[u + 1] - base) as usize;
                    let region = &mut t[lo..hi];
                    let (f, k) = region.split_at_mut(front[u] as usize);
                    f.sort_unstable();
                    k.sort_unstable();
                    distinct_front += merge_distinct(f, k, &mut scratch);
                    region[..scratch.len()].copy_from_slice(&scratch);
                    d[u - a] = scratch.len() as u32;
                }
                distinct_front
            })
            .sum();

        // Close the gaps: every list moves left (never right), so one forward pass is safe.
        let mut acc = 0u64;
        for u in 0..n {
            let from = offsets[u] as usize;
            let len = degree[u] as usize;
            if from as u64 != acc {
                targets.copy_within(from..from + len, acc as usize);
            }
            offsets[u] = acc;
            acc += len as u64;
        }
        offsets[n] = acc;
        targets.truncate(acc as usize);
        targets.shrink_to_fit();
        Ok(Filled {
            offsets,
            targets,
            directed_pairs,
        })
    }
}

/// Merge two sorted lists into `out` without repeats; returns how many distinct values `a` had.
fn merge_distinct(a: &[u32], b: &[u32], out: &mut Vec<u32>) -> u64 {
    out.clear();
    let (mut i, mut j) = (0, 0);
    let mut distinct_a = 0;
    while i < a.len() || j < b.len() {
        let x = if j == b.len() || (i < a.len() && a[i] <= b[j]) {
            let x = a[i];
            if i == 0 || a[i - 1] != x {
                distinct_a += 1;
            }
            i += 1;
            x
        } else {
            j += 1;
            b[j - 1]
        };
        if out.last() != Some(&x) {
            out.push(x);
        }
    }
    distinct_a
}

/// Build the simple undirected graph on nodes `0..n` from edge pairs (self-loops dropped,
/// repeats merged), in parallel. Generators and tests use it; readers use [`Filler`] directly.
pub fn csr_from_pairs(n: usize, pairs: &[(u32, u32)]) -> crate::store::csr::Csr {
    let raw: Vec<u32> = {
        let counts: Vec<std::sync::atomic::AtomicU32> = atomic_zeroed(n);
        pairs.par_iter().for_each(|&(u, v)| {
            if u != v {
                counts[u as usize].fetch_add(1, Relaxed);
                counts[v as usize].fetch_add(1, Relaxed);
            }
        });
        plain(counts)
    };
    let f = Filler::new(&raw);
    pairs.par_chunks(4096).for_each(|c| {
        let batch: Vec<(u32, u32)> = c.iter().copied().filter(|&(u, v)| u != v).collect();
        f.edges(&batch);
    });
    let done = f
        .finish()
        .expect("the pairs are counted and filled from the same slice");
    crate::store::csr::Csr::from_parts(done.offsets.into(), done.targets.into())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn merge_counts_front_distinct() {
        let mut out = Vec::new();
        assert_eq!(merge_distinct(&[1, 1, 4], &[1, 2, 2, 9], &mut out), 2);
        assert_eq!(out, vec![1, 2, 4, 9]);
    }

    #[test]
    fn a_second_pass_that_disagrees_with_the_first_is_an_error() {
        // Raw degrees promise two lines at node 0, but only one arrives (the file changed).
        let f = Filler::new(&[2, 1, 1]);
        f.edge(0, 1);
        assert!(matches!(f.finish(), Err(e) if e.contains("modified while being read")));
    }

    #[test]
    fn fill_merges_repeats_and_reciprocals() {
        // Lines: 0-1, 1-0 (reciprocal), 0-1 (repeat), 1-2.
        let lines = [(0u32, 1u32), (1, 0), (0, 1), (1, 2)];
        let mut raw = [0u32; 3];
        for &(u, v) in &lines {
            raw[u as usize] += 1;
            raw[v as usize] += 1;
        }
        let f = Filler::new(&raw);
        for &(u, v) in &lines {
            f.edge(u, v);
        }
        let done = f.finish().unwrap();
        assert_eq!(done.offsets, vec![0, 1, 3, 4]);
        assert_eq!(done.targets, vec![1, 0, 2, 1]);
        // Distinct directed pairs: 0->1, 1->0, 1->2.
        assert_eq!(done.directed_pairs, 3);
    }
}

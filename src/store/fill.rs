//! Filling the adjacency arrays from raw edge lines, then sorting and merging every list.
//!
//! Each node's region is sized by its raw degree (edge lines, duplicates included). Entries from
//! lines where the node is written first fill the region from the front, entries where it is
//! written second fill it from the back; the two halves are sorted and merged. This yields the
//! simple undirected graph and, on the way, how many directed pairs were distinct, which splits
//! merged lines into repeats and reciprocal pairs.
//!
//! Writing each entry straight to its node's slot was a cache and TLB miss per entry, behind a
//! locked increment (which on x86 also waits for earlier stores): about three quarters of the
//! in-memory build on random-order input. So nodes are cut into blocks of consecutive nodes (a
//! block's regions are one contiguous span of about [`BLOCK_ENTRIES`] entries), entries wait in
//! their block's staging buffer, and a full buffer is written into its span in one go, under the
//! block's lock, with plain loads and stores: the span and its counters stay in cache while it
//! is written. Peak memory is the raw region (8 bytes per edge line), per-node counters (8 bytes
//! a node) and the staging buffers ([`staging_bytes`]: an eighth of the region, at most
//! [`STAGING_MAX`]); there is no edge vector.

use std::sync::Mutex;
use std::sync::atomic::{AtomicU32, Ordering::Relaxed};

use rayon::prelude::*;

use crate::store::graph::{IN, OUT};
use crate::store::pages::prefetch;

/// Entries a block's span aims at, so writing into it works in the second-level cache.
const BLOCK_ENTRIES: u64 = 1 << 16;
/// Most blocks: a batch's counting sort keeps one counter a block.
const BLOCKS_MAX: usize = 4096;
/// Most bytes all staging buffers hold together.
const STAGING_MAX: u64 = 256 << 20;
/// Tag bit in a staged entry: the node was written second on its line (its entry goes at the
/// back of its region).
const BACK: u32 = 1;

/// Bytes the staging buffers take for a region of `entries` entries: an eighth of the region,
/// at most [`STAGING_MAX`] (the build's memory estimate counts them).
pub(crate) fn staging_bytes(entries: u64) -> u64 {
    STAGING_MAX.min(entries * 4 / 8)
}

/// Shared, concurrently written arrays of the fill pass.
pub struct Filler {
    offsets: Vec<u64>,
    front: Vec<AtomicU32>,
    back: Vec<AtomicU32>,
    targets: Vec<AtomicU32>,
    /// Node `u` is in block `u >> shift`.
    shift: u32,
    /// Entries a staging buffer holds before it is written.
    stage_len: usize,
    /// Each block's staged entries: (node within the block << 1 | [`BACK`], other end). The lock
    /// also orders the plain counter updates of the block's nodes between threads.
    staged: Vec<Mutex<Vec<(u32, u32)>>>,
}

/// The finished adjacency and what merging found.
pub struct Filled {
    pub offsets: Vec<u64>,
    pub targets: Vec<u32>,
    /// Distinct (first, second) pairs among the edge lines.
    pub directed_pairs: u64,
    /// With `directed`: for each entry of `targets`, which way the edge runs
    /// ([`OUT`] and/or [`IN`]).
    pub directions: Option<Vec<u8>>,
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
        let n = raw_degree.len();
        let mut offsets = super::pages::with_capacity(n + 1);
        let mut acc = 0u64;
        offsets.push(0);
        for &d in raw_degree {
            acc += d as u64;
            offsets.push(acc);
        }
        let per_node = (acc / n.max(1) as u64).max(1);
        let nodes = ((BLOCK_ENTRIES / per_node) as usize)
            .max(n.div_ceil(BLOCKS_MAX))
            .clamp(1, 1 << 30);
        let shift = nodes.next_power_of_two().trailing_zeros();
        let blocks = n.div_ceil(1 << shift).max(1);
        let stage_bytes = staging_bytes(acc);
        let stage_len = ((stage_bytes / 8) as usize / blocks).max(64);
        Filler {
            front: atomic_zeroed(n),
            back: atomic_zeroed(n),
            targets: atomic_zeroed(acc as usize),
            offsets,
            shift,
            stage_len,
            staged: (0..blocks).map(|_| Mutex::new(Vec::new())).collect(),
        }
    }

    /// Record a batch of edge lines (dense indices, no self-loops): its entries are sorted by
    /// block (a counting sort) and added to each block's staging buffer under its lock; a full
    /// buffer is written out on the spot.
    pub fn edges(&self, batch: &[(u32, u32)]) {
        let k = self.staged.len();
        let shift = self.shift;
        let mask = ((1u64 << shift) - 1) as u32;
        let mut starts = vec![0u32; k + 1];
        for &(u, v) in batch {
            starts[(u >> shift) as usize + 1] += 1;
            starts[(v >> shift) as usize + 1] += 1;
        }
        for i in 1..starts.len() {
            starts[i] += starts[i - 1];
        }
        let mut sorted = vec![(0u32, 0u32); 2 * batch.len()];
        let mut next = starts.clone();
        let mut put = |node: u32, other: u32, tag: u32| {
            let at = &mut next[(node >> shift) as usize];
            sorted[*at as usize] = (((node & mask) << 1) | tag, other);
            *at += 1;
        };
        for &(u, v) in batch {
            put(u, v, 0);
            put(v, u, BACK);
        }
        for b in 0..k {
            let entries = &sorted[starts[b] as usize..starts[b + 1] as usize];
            if entries.is_empty() {
                continue;
            }
            // Nothing inside can panic, so a poisoned lock still guards consistent state.
            let mut stage = self.staged[b].lock().unwrap_or_else(|e| e.into_inner());
            if stage.capacity() == 0 {
                stage.reserve_exact(self.stage_len);
            }
            if stage.len() + entries.len() > self.stage_len {
                self.write(b, &mut stage);
            }
            if entries.len() >= self.stage_len {
                self.write_entries(b, entries);
            } else {
                stage.extend_from_slice(entries);
            }
        }
    }

    /// Write out and empty block `b`'s staging buffer (its lock held by the caller).
    fn write(&self, b: usize, stage: &mut Vec<(u32, u32)>) {
        self.write_entries(b, stage);
        stage.clear();
    }

    /// Write entries of block `b` into their nodes' regions (the block's lock held). A count
    /// past its region means the input changed between passes: the write is skipped and
    /// `finish` reports it.
    fn write_entries(&self, b: usize, entries: &[(u32, u32)]) {
        const AHEAD: usize = 8;
        let first = b << self.shift;
        for (i, &(tag, other)) in entries.iter().enumerate() {
            if let Some(&(t, _)) = entries.get(i + AHEAD) {
                let w = first + (t >> 1) as usize;
                prefetch(&self.offsets[w]);
                // The counter this entry will update: front or back.
                prefetch(if t & BACK == 0 {
                    &self.front[w]
                } else {
                    &self.back[w]
                });
            }
            let u = first + (tag >> 1) as usize;
            let (lo, hi) = (self.offsets[u], self.offsets[u + 1]);
            if tag & BACK == 0 {
                let c = self.front[u].load(Relaxed);
                self.front[u].store(c + 1, Relaxed);
                if lo + (c as u64) < hi {
                    self.targets[(lo + c as u64) as usize].store(other, Relaxed);
                }
            } else {
                let c = self.back[u].load(Relaxed);
                self.back[u].store(c + 1, Relaxed);
                if lo + (c as u64) < hi {
                    self.targets[(hi - 1 - c as u64) as usize].store(other, Relaxed);
                }
            }
        }
    }

    /// Write out every staging buffer, in parallel (each block's lock taken in turn).
    fn write_staged(&mut self) {
        let this = &*self;
        (0..this.staged.len()).into_par_iter().for_each(|b| {
            let mut stage = this.staged[b].lock().unwrap_or_else(|e| e.into_inner());
            this.write(b, &mut stage);
            *stage = Vec::new();
        });
    }

    /// Sort and merge every list, then close the gaps left by merged duplicates.
    /// Fails if the regions were not filled exactly (the input changed between passes).
    /// With `directed`, each entry also gets its direction flags ([`OUT`], [`IN`]): the front
    /// of a region holds the node's out-neighbours, the back its in-neighbours.
    pub fn finish(mut self, directed: bool) -> Result<Filled, String> {
        self.write_staged();
        let Filler {
            mut offsets,
            front,
            back,
            targets,
            ..
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
        let mut flags = if directed {
            crate::store::pages::zeroed::<u8>(targets.len())
        } else {
            Vec::new()
        };

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
            let mut f_rest: &mut [u8] = &mut flags;
            for w in cuts.windows(2) {
                let (a, b) = (w[0], w[1]);
                let span = (offsets[b] - offsets[a]) as usize;
                let (t, tr) = std::mem::take(&mut t_rest).split_at_mut(span);
                let (d, dr) = std::mem::take(&mut d_rest).split_at_mut(b - a);
                let (fl, fr) = if directed {
                    std::mem::take(&mut f_rest).split_at_mut(span)
                } else {
                    (&mut [][..], &mut [][..])
                };
                t_rest = tr;
                d_rest = dr;
                f_rest = fr;
                jobs.push((a, b, t, d, fl));
            }
        }
        let directed_pairs: u64 = jobs
            .into_par_iter()
            .map(|(a, b, t, d, fl)| {
                let base = offsets[a];
                let mut scratch = Vec::new();
                let mut marks = Vec::new();
                let mut distinct_front = 0u64;
                for u in a..b {
                    let lo = (offsets[u] - base) as usize;
                    let hi = (offsets[u + 1] - base) as usize;
                    let region = &mut t[lo..hi];
                    let (f, k) = region.split_at_mut(front[u] as usize);
                    f.sort_unstable();
                    k.sort_unstable();
                    if directed {
                        distinct_front += merge_flagged(f, k, &mut scratch, &mut marks);
                        fl[lo..lo + marks.len()].copy_from_slice(&marks);
                    } else {
                        distinct_front += merge_distinct(f, k, &mut scratch);
                    }
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
                if directed {
                    flags.copy_within(from..from + len, acc as usize);
                }
            }
            offsets[u] = acc;
            acc += len as u64;
        }
        offsets[n] = acc;
        targets.truncate(acc as usize);
        targets.shrink_to_fit();
        let directions = directed.then(|| {
            flags.truncate(acc as usize);
            flags.shrink_to_fit();
            flags
        });
        Ok(Filled {
            offsets,
            targets,
            directed_pairs,
            directions,
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

/// [`merge_distinct`] that also records, for each value of `out`, whether it came from `a` (the
/// out-list: [`OUT`]), from `b` (the in-list: [`IN`]) or both, in `marks`.
fn merge_flagged(a: &[u32], b: &[u32], out: &mut Vec<u32>, marks: &mut Vec<u8>) -> u64 {
    out.clear();
    marks.clear();
    let (mut i, mut j) = (0, 0);
    let mut distinct_a = 0;
    while i < a.len() || j < b.len() {
        let (x, flag) = if j == b.len() || (i < a.len() && a[i] <= b[j]) {
            let x = a[i];
            if i == 0 || a[i - 1] != x {
                distinct_a += 1;
            }
            i += 1;
            (x, OUT)
        } else {
            j += 1;
            (b[j - 1], IN)
        };
        if out.last() == Some(&x) {
            if let Some(m) = marks.last_mut() {
                *m |= flag;
            }
        } else {
            out.push(x);
            marks.push(flag);
        }
    }
    distinct_a
}

/// Build the simple undirected graph on nodes `0..n` from edge pairs (self-loops dropped,
/// repeats merged), in parallel. Generators and tests use it; readers use [`Filler`] directly.
pub fn csr_from_pairs(n: usize, pairs: &[(u32, u32)]) -> crate::store::csr::Csr {
    filled_from_pairs(n, pairs, false).0
}

/// The symmetrised graph and each entry's direction flags from directed pairs u → v
/// (self-loops dropped, repeats merged), for tests.
#[cfg(test)]
pub fn csr_from_directed(n: usize, pairs: &[(u32, u32)]) -> (crate::store::csr::Csr, Vec<u8>) {
    let (g, d) = filled_from_pairs(n, pairs, true);
    (g, d.unwrap_or_default())
}

fn filled_from_pairs(
    n: usize,
    pairs: &[(u32, u32)],
    directed: bool,
) -> (crate::store::csr::Csr, Option<Vec<u8>>) {
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
        .finish(directed)
        .expect("the pairs are counted and filled from the same slice");
    (
        crate::store::csr::Csr::from_parts(done.offsets.into(), done.targets.into()),
        done.directions,
    )
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
        f.edges(&[(0, 1)]);
        assert!(matches!(f.finish(false), Err(e) if e.contains("modified while being read")));
    }

    #[test]
    fn more_lines_than_counted_is_an_error_not_a_panic() {
        // Raw degrees promise one line at nodes 0 and 1, but two arrive.
        let f = Filler::new(&[1, 1]);
        f.edges(&[(0, 1), (1, 0)]);
        assert!(matches!(f.finish(false), Err(e) if e.contains("modified while being read")));
    }

    #[test]
    fn staged_fill_equals_the_plain_build_on_many_blocks() {
        use rand::{RngExt, SeedableRng};
        use std::collections::BTreeSet;
        for seed in 0..3u64 {
            let mut rng = rand::rngs::StdRng::seed_from_u64(seed);
            // Enough nodes and lines for dozens of blocks and several writes of each buffer;
            // repeats, reciprocal lines and a hub past any one block's span.
            let n = 50_000u32 << seed;
            let mut lines: Vec<(u32, u32)> = (0..400_000)
                .map(|_| (rng.random_range(0..n), rng.random_range(0..n)))
                .filter(|(u, v)| u != v)
                .collect();
            let again: Vec<(u32, u32)> = lines[..5_000].iter().map(|&(u, v)| (v, u)).collect();
            lines.extend(again);
            lines.extend_from_within(..5_000);
            lines.extend((1..90_000u32.min(n)).map(|v| (0, v)));
            let mut raw = vec![0u32; n as usize];
            for &(u, v) in &lines {
                raw[u as usize] += 1;
                raw[v as usize] += 1;
            }
            let f = Filler::new(&raw);
            assert!(f.staged.len() > 8, "several blocks");
            lines.par_chunks(3_000).for_each(|c| f.edges(c));
            let done = f.finish(false).unwrap();
            let plain = crate::store::csr::Csr::from_edges(n as usize, &lines);
            assert_eq!(done.offsets, plain.offsets(), "seed {seed}");
            assert_eq!(done.targets, plain.targets(), "seed {seed}");
            let directed: BTreeSet<(u32, u32)> = lines.iter().copied().collect();
            assert_eq!(done.directed_pairs, directed.len() as u64);
        }
    }

    #[test]
    fn directed_fill_flags_each_entry() {
        // Lines: 0→1, 1→0 (mutual), 0→1 (repeat), 1→2, 3→1.
        let lines = [(0, 1), (1, 0), (0, 1), (1, 2), (3, 1)];
        let mut raw = vec![0u32; 4];
        for &(u, v) in &lines {
            raw[u as usize] += 1;
            raw[v as usize] += 1;
        }
        let f = Filler::new(&raw);
        f.edges(&lines);
        let done = f.finish(true).unwrap();
        assert_eq!(done.targets, vec![1, 0, 2, 3, 1, 1]);
        let d = done.directions.unwrap();
        // 0: {1: both}; 1: {0: both, 2: out, 3: in}; 2: {1: in}; 3: {1: out}.
        assert_eq!(d, vec![OUT | IN, OUT | IN, OUT, IN, IN, OUT]);
        assert_eq!(done.directed_pairs, 4);
        assert!(Filler::new(&raw).finish(false).is_err());
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
        f.edges(&lines);
        let done = f.finish(false).unwrap();
        assert_eq!(done.offsets, vec![0, 1, 3, 4]);
        assert_eq!(done.targets, vec![1, 0, 2, 1]);
        // Distinct directed pairs: 0->1, 1->0, 1->2.
        assert_eq!(done.directed_pairs, 3);
    }
}

//! The build on disk, for graphs whose adjacency would not fit the memory budget.
//!
//! The fill pass hands each worker's half-edges (`source << 32 | target` keys) to a buffer sized
//! from the budget; a full buffer is sorted and written to the scratch folder as a run. One
//! k-way merge then streams every run, in key order and without repeats, straight into the
//! targets section of a store file, counting each node's list on the way (the offsets). This
//! is the external merge sort (Knuth, *The Art of Computer Programming* vol. 3, 2nd ed. 1998,
//! §5.4.1, multiway merging with a priority queue). The result is the same sorted, deduplicated
//! adjacency the in-memory fill makes, so the store is the same byte for byte.
//!
//! Entries where a node is written first (front) and second (back) go to separate runs, as in
//! the in-memory fill, so the merge can count distinct directed pairs (repeats against
//! reciprocal pairs) without a flag bit the 64-bit key has no room for.

use std::cmp::Reverse;
use std::collections::BinaryHeap;
use std::fs::File;
use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::sync::Mutex;
use std::sync::atomic::{AtomicU64, AtomicUsize, Ordering::Relaxed};

use crate::outfile::Leftover;
use crate::progress::{Progress, Unit};

/// A private folder inside the scratch directory, removed with everything in it when dropped,
/// and by the interrupt handler (it is registered as a leftover).
pub(crate) struct Scratch {
    dir: PathBuf,
    _leftover: Leftover,
}

impl Scratch {
    /// Make a fresh folder `.plumb-scratch-<pid>-<k>` inside `parent`.
    pub(crate) fn create(parent: &Path) -> std::io::Result<Scratch> {
        static NEXT: AtomicUsize = AtomicUsize::new(0);
        let name = format!(
            ".plumb-scratch-{}-{}",
            std::process::id(),
            NEXT.fetch_add(1, Relaxed)
        );
        let dir = parent.join(name);
        std::fs::create_dir(&dir)?;
        Ok(Scratch {
            _leftover: Leftover::register(&dir),
            dir,
        })
    }

    pub(crate) fn path(&self) -> &Path {
        &self.dir
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.dir);
    }
}

/// Bytes that unprivileged writers may still use on the file system holding `dir`.
pub(crate) fn usable_space(dir: &Path) -> std::io::Result<u64> {
    #[cfg(unix)]
    {
        use std::os::unix::ffi::OsStrExt;
        let c = std::ffi::CString::new(dir.as_os_str().as_bytes())
            .map_err(|_| std::io::Error::other("the path holds a NUL byte"))?;
        // SAFETY: `c` is a valid NUL-terminated path and `st` a properly sized out-parameter.
        let mut st: libc::statvfs = unsafe { std::mem::zeroed() };
        if unsafe { libc::statvfs(c.as_ptr(), &mut st) } != 0 {
            return Err(std::io::Error::last_os_error());
        }
        #[allow(clippy::unnecessary_cast)] // the field widths differ between platforms
        Ok(st.f_bavail as u64 * st.f_frsize as u64)
    }
    #[cfg(not(unix))]
    {
        let _ = dir;
        Ok(u64::MAX)
    }
}

#[inline]
fn key(u: u32, v: u32) -> u64 {
    (u as u64) << 32 | v as u64
}

struct Run {
    path: PathBuf,
    keys: u64,
    front: bool,
}

/// Collects the runs that the fill workers write.
pub(crate) struct Spiller {
    scratch: Scratch,
    /// Keys a worker's front (and back) buffer holds before it is sorted and written.
    pub(crate) keys_per_buffer: usize,
    runs: Mutex<Vec<Run>>,
    failure: Mutex<Option<std::io::Error>>,
    next: AtomicUsize,
    keys: AtomicU64,
}

/// One worker's buffers.
#[derive(Default)]
pub(crate) struct SpillBuf {
    front: Vec<u64>,
    back: Vec<u64>,
}

impl SpillBuf {
    /// Add the edge lines of `batch` (dense indices, no self-loops); false once writing failed.
    pub(crate) fn edges(&mut self, batch: &[(u32, u32)], sp: &Spiller) -> bool {
        if self.front.capacity() == 0 {
            // Exactly the budgeted size: growth by doubling could take nearly twice that.
            self.front
                .reserve_exact(sp.keys_per_buffer + batch.len().max(4096));
            self.back
                .reserve_exact(sp.keys_per_buffer + batch.len().max(4096));
        }
        for &(u, v) in batch {
            self.front.push(key(u, v));
            self.back.push(key(v, u));
        }
        if self.front.len() >= sp.keys_per_buffer {
            return sp.spill(self);
        }
        true
    }

    /// Add one edge line.
    pub(crate) fn edge(&mut self, u: u32, v: u32, sp: &Spiller) -> bool {
        self.edges(&[(u, v)], sp)
    }
}

/// What the merge wrote and found.
pub(crate) struct Merged {
    /// Where each node's list starts in the targets section (n + 1 offsets).
    pub(crate) offsets: Vec<u64>,
    /// Distinct (first, second) pairs among the edge lines.
    pub(crate) directed_pairs: u64,
    /// Runs merged.
    pub(crate) runs: u64,
    /// Bytes the runs took on disk.
    pub(crate) run_bytes: u64,
}

impl Spiller {
    pub(crate) fn new(scratch: Scratch, keys_per_buffer: usize) -> Self {
        Spiller {
            scratch,
            keys_per_buffer: keys_per_buffer.max(1),
            runs: Mutex::new(Vec::new()),
            failure: Mutex::new(None),
            next: AtomicUsize::new(0),
            keys: AtomicU64::new(0),
        }
    }

    pub(crate) fn scratch(&self) -> &Path {
        self.scratch.path()
    }

    /// Sort and write a worker's buffers as two runs; false (and the error kept) on failure.
    pub(crate) fn spill(&self, buf: &mut SpillBuf) -> bool {
        if crate::outfile::interrupted() {
            self.fail(std::io::ErrorKind::Interrupted.into());
        }
        if self.failed() {
            buf.front.clear();
            buf.back.clear();
            return false;
        }
        for (keys, front) in [(&mut buf.front, true), (&mut buf.back, false)] {
            if keys.is_empty() {
                continue;
            }
            keys.sort_unstable();
            // An interrupt may have come during the sort: its handler is removing the folder,
            // so no new file may appear in it.
            if crate::outfile::interrupted() {
                keys.clear();
                self.fail(std::io::ErrorKind::Interrupted.into());
                return false;
            }
            let path = self
                .scratch
                .path()
                .join(format!("run-{:06}", self.next.fetch_add(1, Relaxed)));
            let written = File::create(&path)
                .and_then(|mut f| f.write_all(bytemuck::cast_slice(keys.as_slice())));
            if let Err(e) = written {
                self.fail(e);
                keys.clear();
                return false;
            }
            self.keys.fetch_add(keys.len() as u64, Relaxed);
            self.runs
                .lock()
                .unwrap_or_else(|p| p.into_inner())
                .push(Run {
                    path,
                    keys: keys.len() as u64,
                    front,
                });
            keys.clear();
        }
        true
    }

    /// Keep the first error; later ones follow from it.
    fn fail(&self, e: std::io::Error) {
        self.failure
            .lock()
            .unwrap_or_else(|p| p.into_inner())
            .get_or_insert(e);
    }

    fn failed(&self) -> bool {
        self.failure
            .lock()
            .unwrap_or_else(|p| p.into_inner())
            .is_some()
    }

    /// The first write error, if any.
    pub(crate) fn take_failure(&self) -> Option<std::io::Error> {
        self.failure
            .lock()
            .unwrap_or_else(|p| p.into_inner())
            .take()
    }

    /// Keys written so far (two per edge line).
    pub(crate) fn keys(&self) -> u64 {
        self.keys.load(Relaxed)
    }

    /// Merge every run into `out` as the targets of a graph on `n` nodes; the runs open at once
    /// share `read_bytes` of read buffers (4 KiB to 8 MiB each), and each is deleted once merged.
    pub(crate) fn merge(
        self,
        n: usize,
        out: &mut dyn Write,
        read_bytes: u64,
        progress: &dyn Progress,
    ) -> std::io::Result<Merged> {
        if let Some(e) = self.take_failure() {
            return Err(e);
        }
        let mut runs = std::mem::take(&mut *self.runs.lock().unwrap_or_else(|p| p.into_inner()));
        let total: u64 = runs.iter().map(|r| r.keys).sum();
        let run_bytes = total * 8;
        let written = runs.len() as u64;
        let open_at_once = runs.len().clamp(1, FAN_IN) as u64;
        let read_keys = (read_bytes / 8 / open_at_once).clamp(512, 1 << 20) as usize;
        // More runs than files open at once: merge groups of one kind into longer runs first.
        while runs.len() > FAN_IN {
            progress.stage("merging runs (a pass)", None, Unit::Items);
            runs = self.merge_pass(runs, read_keys)?;
        }
        progress.stage("merging runs", Some(total), Unit::Items);
        let mut merge = KWay::open(&runs, read_keys)?;
        let mut counts: Vec<u64> = super::pages::zeroed(n + 1);
        let mut block: Vec<u32> = Vec::with_capacity(1 << 18);
        let mut last = u64::MAX;
        let mut last_has_front = false;
        let mut directed_pairs = 0u64;
        let mut done = 0u64;
        while let Some((k, front)) = merge.next()? {
            if k != last {
                last = k;
                last_has_front = false;
                let (u, v) = ((k >> 32) as usize, k as u32);
                if u >= n || v as usize >= n {
                    return Err(std::io::Error::other(format!(
                        "a run holds the pair ({u}, {v}) outside {n} nodes"
                    )));
                }
                counts[u + 1] += 1;
                block.push(v);
                if block.len() == block.capacity() {
                    out.write_all(bytemuck::cast_slice(&block))?;
                    block.clear();
                }
            }
            if front && !last_has_front {
                last_has_front = true;
                directed_pairs += 1;
            }
            done += 1;
            if done.is_multiple_of(1 << 22) {
                progress.advance(1 << 22);
            }
        }
        out.write_all(bytemuck::cast_slice(&block))?;
        for u in 0..n {
            counts[u + 1] += counts[u];
        }
        progress.finish();
        Ok(Merged {
            offsets: counts,
            directed_pairs,
            runs: written,
            run_bytes,
        })
    }

    /// One intermediate pass: each group of up to `FAN_IN` runs of the same kind (front or
    /// back) becomes one run, repeats dropped (distinct keys are all the final merge counts).
    fn merge_pass(&self, runs: Vec<Run>, read_keys: usize) -> std::io::Result<Vec<Run>> {
        let (front, back): (Vec<Run>, Vec<Run>) = runs.into_iter().partition(|r| r.front);
        let mut out = Vec::new();
        for kind in [front, back] {
            let mut kind = kind.into_iter().peekable();
            while kind.peek().is_some() {
                let group: Vec<Run> = kind.by_ref().take(FAN_IN).collect();
                if group.len() == 1 {
                    out.extend(group);
                    continue;
                }
                let is_front = group[0].front;
                if crate::outfile::interrupted() {
                    return Err(std::io::ErrorKind::Interrupted.into());
                }
                let path = self
                    .scratch
                    .path()
                    .join(format!("run-{:06}", self.next.fetch_add(1, Relaxed)));
                let mut w = std::io::BufWriter::with_capacity(1 << 20, File::create(&path)?);
                let mut merge = KWay::open(&group, read_keys)?;
                let mut last = u64::MAX;
                let mut keys = 0u64;
                while let Some((k, _)) = merge.next()? {
                    if k != last {
                        w.write_all(&k.to_le_bytes())?;
                        keys += 1;
                        last = k;
                    }
                }
                w.flush()?;
                out.push(Run {
                    path,
                    keys,
                    front: is_front,
                });
            }
        }
        Ok(out)
    }
}

/// Most runs merged at once: each holds an open file, and processes commonly may open 1,024.
const FAN_IN: usize = 256;

/// A k-way merge of runs through a binary heap of their next keys.
struct KWay {
    readers: Vec<RunReader>,
    heap: BinaryHeap<Reverse<(u64, u32)>>,
}

impl KWay {
    fn open(runs: &[Run], read_keys: usize) -> std::io::Result<Self> {
        let mut readers = runs
            .iter()
            .map(|r| RunReader::open(r, read_keys))
            .collect::<std::io::Result<Vec<_>>>()?;
        let mut heap = BinaryHeap::with_capacity(readers.len());
        for (i, r) in readers.iter_mut().enumerate() {
            if let Some(k) = r.next()? {
                heap.push(Reverse((k, i as u32)));
            }
        }
        Ok(KWay { readers, heap })
    }

    /// The smallest key left and whether its run is a front run. A run read to its end is
    /// deleted at once, giving its disk space back.
    #[inline]
    fn next(&mut self) -> std::io::Result<Option<(u64, bool)>> {
        let Some(mut top) = self.heap.peek_mut() else {
            return Ok(None);
        };
        let Reverse((k, i)) = *top;
        let r = &mut self.readers[i as usize];
        let front = r.front;
        match r.next()? {
            Some(next) => *top = Reverse((next, i)),
            None => {
                std::collections::binary_heap::PeekMut::pop(top);
                let _ = std::fs::remove_file(&r.path);
            }
        }
        Ok(Some((k, front)))
    }
}

/// Reads one run's keys a block at a time.
struct RunReader {
    file: File,
    path: PathBuf,
    buf: Vec<u64>,
    pos: usize,
    len: usize,
    left: u64,
    front: bool,
}

impl RunReader {
    fn open(run: &Run, block: usize) -> std::io::Result<Self> {
        Ok(RunReader {
            file: File::open(&run.path)?,
            path: run.path.clone(),
            buf: vec![0; block.min(run.keys as usize).max(1)],
            pos: 0,
            len: 0,
            left: run.keys,
            front: run.front,
        })
    }

    #[inline]
    fn next(&mut self) -> std::io::Result<Option<u64>> {
        if self.pos == self.len {
            if self.left == 0 {
                return Ok(None);
            }
            let take = (self.buf.len() as u64).min(self.left) as usize;
            self.file
                .read_exact(bytemuck::cast_slice_mut(&mut self.buf[..take]))?;
            self.left -= take as u64;
            self.pos = 0;
            self.len = take;
        }
        let k = self.buf[self.pos];
        self.pos += 1;
        Ok(Some(k))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn runs_merge_into_sorted_distinct_lists_with_pair_counts() {
        let parent = tempfile::tempdir().unwrap();
        let scratch = Scratch::create(parent.path()).unwrap();
        let dir = scratch.path().to_path_buf();
        // Buffers of two keys force several runs.
        let sp = Spiller::new(scratch, 2);
        // Lines: 0-1, 1-0 (reciprocal), 0-1 (repeat), 1-2, split over two workers.
        let mut a = SpillBuf::default();
        let mut b = SpillBuf::default();
        assert!(a.edges(&[(0, 1), (1, 0)], &sp));
        assert!(b.edges(&[(0, 1)], &sp));
        assert!(b.edge(1, 2, &sp));
        assert!(sp.spill(&mut a) && sp.spill(&mut b));
        assert_eq!(sp.keys(), 8);
        let mut out = Vec::new();
        let m = sp.merge(3, &mut out, 0, &crate::progress::Quiet).unwrap();
        let targets: Vec<u32> = bytemuck::cast_slice(&out).to_vec();
        assert_eq!(m.offsets, vec![0, 1, 3, 4]);
        assert_eq!(targets, vec![1, 0, 2, 1]);
        // Distinct directed pairs: 0->1, 1->0, 1->2 (as in the in-memory fill's test).
        assert_eq!(m.directed_pairs, 3);
        assert!(m.runs >= 4);
        // The spiller is gone, so is its folder.
        assert!(!dir.exists());
    }
}

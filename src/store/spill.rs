//! The build on disk, for graphs whose adjacency would not fit the memory budget.
//!
//! Workers hand their half-edges (`source << 32 | target` keys) to buffers sized from the
//! budget; a full buffer is sorted and written to the scratch folder as a run, keeping every
//! 1,024th key in memory. The merge then cuts the nodes into buckets whose keys fit memory
//! (their counts are known from the first pass), reads each bucket's slice of every run (the
//! kept keys say where it lies), places the keys by node with a counting sort and sorts each
//! node's short list, and writes the buckets in node order straight into the targets section of
//! a store file, counting each node's list on the way (the offsets). It is an external sort by
//! distribution over sorted runs (Knuth, *The Art of Computer Programming* vol. 3, 2nd ed.
//! 1998, §5.4, external sorting; §5.2.5, distribution sorting): no heap, no limit on open
//! files, and the buckets are independent, so the workers place them side by side. The result is
//! the same sorted, deduplicated adjacency the in-memory fill makes, so the store is the same
//! byte for byte.
//!
//! Entries where a node is written first (front) and second (back) go to separate runs, as in
//! the in-memory fill, so the merge can count distinct directed pairs (repeats against
//! reciprocal pairs) without a flag bit the 64-bit key has no room for.

use std::fs::File;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, AtomicU64, AtomicUsize, Ordering::Relaxed};

use rayon::prelude::*;

use crate::outfile::Leftover;
use crate::progress::{Progress, Unit};
use crate::store::graph::NodeIds;
use crate::store::ids::IntIndex;

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
    /// Every `SAMPLE`-th key, to find a key range's span without reading the run.
    samples: Vec<u64>,
}

/// One key in this many is kept in memory per run (8 bytes per 8 KiB of run).
const SAMPLE: usize = 1024;

impl Run {
    /// Positions `[start, end)` that hold every key of `[lo, hi)` (and at most a sample's width
    /// more at either end).
    fn span(&self, lo: u64, hi: Option<u64>) -> (u64, u64) {
        // Keys at or before sample j - 1 are below lo when that sample is.
        let below = self.samples.partition_point(|&k| k < lo);
        let start = if below == 0 {
            0
        } else {
            ((below - 1) * SAMPLE + 1) as u64
        };
        let end = match hi {
            None => self.keys,
            // Keys at or after sample j are at or above hi when that sample is.
            Some(hi) => {
                (self.samples.partition_point(|&k| k < hi) as u64 * SAMPLE as u64).min(self.keys)
            }
        };
        (start.min(end), end)
    }
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
    /// Set when the runs will not be used (a spill begun before the sizes were known, given up):
    /// workers stop adding keys.
    given_up: AtomicBool,
    /// When set, a run is only written while the scratch disk keeps this many bytes free beyond
    /// the run and an estimate of the store (checked before each run; see `give_up`).
    guard_free: Option<u64>,
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
        if sp.given_up() {
            return true;
        }
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
    #[inline]
    pub(crate) fn edge(&mut self, u: u32, v: u32, sp: &Spiller) -> bool {
        if self.front.len() + 1 >= sp.keys_per_buffer.min(self.front.capacity()) {
            return self.edges(&[(u, v)], sp);
        }
        self.front.push(key(u, v));
        self.back.push(key(v, u));
        true
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
            given_up: AtomicBool::new(false),
            guard_free: None,
        }
    }

    /// A spiller that gives up (see [`Spiller::given_up`]) rather than let its runs leave less
    /// than `keep_free` bytes on the scratch disk beside the store they will make.
    pub(crate) fn guarded(scratch: Scratch, keys_per_buffer: usize, keep_free: u64) -> Self {
        Spiller {
            guard_free: Some(keep_free),
            ..Spiller::new(scratch, keys_per_buffer)
        }
    }

    /// Stop taking keys; the runs are removed with the scratch folder.
    pub(crate) fn give_up(&self) {
        self.given_up.store(true, Relaxed);
    }

    /// Whether the runs were given up on.
    pub(crate) fn given_up(&self) -> bool {
        self.given_up.load(Relaxed)
    }

    /// With a guard: whether writing `keys` more keys leaves the room it promises. The store
    /// is estimated at 6 bytes a key (4 for the target, 2 for the per-node arrays at a mean
    /// degree of 8); the check before the merge uses the real sizes.
    fn room_for(&self, keys: u64) -> bool {
        let Some(keep) = self.guard_free else {
            return true;
        };
        let after = self.keys.load(Relaxed) + keys;
        match usable_space(self.scratch.path()) {
            Ok(free) => free.saturating_sub(keep) >= keys * 8 + after * 6,
            Err(_) => false,
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
        if self.given_up() || !self.room_for((buf.front.len() + buf.back.len()) as u64) {
            self.give_up();
            buf.front = Vec::new();
            buf.back = Vec::new();
            return true;
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
                    samples: keys.iter().step_by(SAMPLE).copied().collect(),
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

    /// Merge every run into `out` as the targets of a graph whose node `i` has `raw_degree[i]`
    /// keys (edge-line ends, repeats included); `labels` says how keys name nodes. Uses about
    /// `memory` bytes; the runs are removed with the scratch folder afterwards.
    ///
    /// The nodes are cut into buckets of consecutive nodes whose keys fit the memory; each
    /// bucket reads its slice of every run (found through the runs' samples), places the keys
    /// by node with a counting sort and sorts each node's short list. Buckets are independent,
    /// so the workers take one each, and they are written in node order.
    pub(crate) fn merge(
        self,
        raw_degree: &[u32],
        labels: Labels<'_>,
        out: &mut (dyn Write + Send),
        memory: u64,
        progress: &dyn Progress,
    ) -> std::io::Result<Merged> {
        if let Some(e) = self.take_failure() {
            return Err(e);
        }
        let runs = std::mem::take(&mut *self.runs.lock().unwrap_or_else(|p| p.into_inner()));
        let total: u64 = runs.iter().map(|r| r.keys).sum();
        let n = raw_degree.len();
        let threads = rayon::current_num_threads().max(1);
        // Per key in a bucket: the key (8), its placed copy (8) and the output target (4); one
        // window's buckets are placed while the last one's are written.
        let cap = (memory / (threads as u64 * 2 * 20)).max(1 << 10);
        let buckets = buckets(raw_degree, cap);
        progress.stage("merging runs", Some(total), Unit::Items);
        let mut offsets: Vec<u64> = super::pages::zeroed(n + 1);
        let mut directed_pairs = 0u64;
        let pads = Mutex::new(Vec::new());
        let mut pending: Vec<(Bucket, Placed)> = Vec::new();
        let mut at = 0;
        loop {
            if crate::outfile::interrupted() {
                return Err(std::io::ErrorKind::Interrupted.into());
            }
            let mut end = at;
            while end < buckets.len() && end - at < threads && buckets[end].keys <= cap {
                end += 1;
            }
            // Place the next window while the last one is written.
            let (placed, written) = rayon::join(
                || {
                    buckets[at..end]
                        .par_iter()
                        .map(|b| place(&runs, *b, n, &labels, &pads))
                        .collect::<std::io::Result<Vec<Placed>>>()
                },
                || write_placed(&pending, out, &mut offsets),
            );
            directed_pairs += written?;
            for (b, p) in pending.drain(..) {
                progress.advance(b.keys);
                pads.lock()
                    .unwrap_or_else(|p| p.into_inner())
                    .push(Pad::recycle(p));
            }
            pending.extend(buckets[at..end].iter().copied().zip(placed?));
            at = end;
            if at == buckets.len() {
                directed_pairs += write_placed(&pending, out, &mut offsets)?;
                break;
            }
            if buckets[at].keys > cap {
                // One node whose lists alone are over the cap: written straight out, in turn.
                directed_pairs += write_placed(&pending, out, &mut offsets)?;
                pending.clear();
                let b = buckets[at];
                let (count, pairs) = one_large_node(&runs, b, n, &labels, out)?;
                offsets[b.lo + 1] = count;
                directed_pairs += pairs;
                progress.advance(b.keys);
                at += 1;
            }
        }
        for u in 0..n {
            offsets[u + 1] += offsets[u];
        }
        progress.finish();
        Ok(Merged {
            offsets,
            directed_pairs,
            runs: runs.len() as u64,
            run_bytes: total * 8,
        })
    }
}

/// Write placed buckets' targets and set their nodes' counts; returns their distinct pairs.
fn write_placed(
    placed: &[(Bucket, Placed)],
    out: &mut (dyn Write + Send),
    offsets: &mut [u64],
) -> std::io::Result<u64> {
    let mut pairs = 0;
    for (b, p) in placed {
        out.write_all(bytemuck::cast_slice(&p.targets))?;
        for (i, &c) in p.counts.iter().enumerate() {
            offsets[b.lo + 1 + i] = c as u64;
        }
        pairs += p.directed_pairs;
    }
    Ok(pairs)
}

/// How the keys of the runs name nodes.
pub(crate) enum Labels<'a> {
    /// By dense index already.
    Dense,
    /// By original integer id, the ids being `first, first + 1, …`.
    Offset { first: u64, len: usize },
    /// By original integer id (each at most `u32::MAX`), ranked through the index. Dense indices
    /// follow the ids' order, so runs sorted by id are sorted by index too.
    Raw { index: &'a IntIndex, ids: &'a [u64] },
}

impl<'a> Labels<'a> {
    /// Keys that carry the original integer ids of a graph with these ids and this index.
    pub(crate) fn of_ints(index: &'a IntIndex, ids: &'a NodeIds) -> Self {
        match ids {
            NodeIds::Range { first, len } => Labels::Offset {
                first: *first,
                len: *len,
            },
            NodeIds::Ints(v) => Labels::Raw { index, ids: v },
            // Text ids never reach runs by label.
            NodeIds::Text { .. } => Labels::Dense,
        }
    }

    /// The label keys carry for dense node `i`.
    fn of(&self, i: usize) -> u64 {
        match self {
            Labels::Dense => i as u64,
            Labels::Offset { first, .. } => first + i as u64,
            Labels::Raw { ids, .. } => ids[i],
        }
    }

    /// The dense index of a label; `None` for one the graph does not hold.
    #[inline]
    fn dense(&self, label: u32) -> Option<u32> {
        match self {
            Labels::Dense => Some(label),
            Labels::Offset { first, len } => (label as u64)
                .checked_sub(*first)
                .filter(|&d| d < *len as u64)
                .map(|d| d as u32),
            Labels::Raw { index, .. } => index.try_get(label as u64),
        }
    }
}

/// The runs disagree with the first pass's counts: a key was lost or one came from elsewhere.
fn miscounted(b: Bucket, read: u64) -> std::io::Error {
    std::io::Error::other(format!(
        "the runs hold {read} keys for nodes {}..{} where the first pass counted {}",
        b.lo, b.hi, b.keys
    ))
}

fn unknown(label: u32) -> std::io::Error {
    std::io::Error::other(format!(
        "a run holds the node {label}, which no edge line named"
    ))
}

/// Consecutive nodes `lo..hi` whose runs hold `keys` keys.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Bucket {
    lo: usize,
    hi: usize,
    keys: u64,
}

/// Cut the nodes into buckets of at most `cap` keys; a node over the cap has a bucket alone.
fn buckets(raw_degree: &[u32], cap: u64) -> Vec<Bucket> {
    let mut out = Vec::new();
    let mut b = Bucket {
        lo: 0,
        hi: 0,
        keys: 0,
    };
    for (i, &d) in raw_degree.iter().enumerate() {
        if b.hi > b.lo && b.keys + d as u64 > cap {
            out.push(b);
            b = Bucket {
                lo: i,
                hi: i,
                keys: 0,
            };
        }
        b.hi = i + 1;
        b.keys += d as u64;
    }
    if b.hi > b.lo {
        out.push(b);
    }
    out
}

/// The keys from `lo` up to (not including) `hi`; `hi` is `None` past the last node.
fn key_range(b: Bucket, n: usize, labels: &Labels) -> (u64, Option<u64>) {
    let lo = labels.of(b.lo) << 32;
    let hi = (b.hi < n).then(|| labels.of(b.hi) << 32);
    (lo, hi)
}

/// Append to `keys` the keys of `run` in `[lo, hi)`, reading only the span its samples allow.
fn read_span(run: &Run, lo: u64, hi: Option<u64>, keys: &mut Vec<u64>) -> std::io::Result<()> {
    let (start, end) = run.span(lo, hi);
    if start >= end {
        return Ok(());
    }
    let at = keys.len();
    keys.resize(at + (end - start) as usize, 0);
    read_at(
        &File::open(&run.path)?,
        bytemuck::cast_slice_mut(&mut keys[at..]),
        start * 8,
    )?;
    // The span is a sample's width too wide at either end: keep the keys in range.
    let got = &keys[at..];
    let first = got.partition_point(|&k| k < lo);
    let last = hi.map_or(got.len(), |hi| got.partition_point(|&k| k < hi));
    keys.copy_within(at + first..at + last, at);
    keys.truncate(at + last - first);
    Ok(())
}

/// Fill `buf` from `file` at byte `offset`.
fn read_at(file: &File, buf: &mut [u8], offset: u64) -> std::io::Result<()> {
    #[cfg(unix)]
    {
        std::os::unix::fs::FileExt::read_exact_at(file, buf, offset)
    }
    #[cfg(not(unix))]
    {
        use std::io::{Read, Seek};
        let mut f = file;
        f.seek(std::io::SeekFrom::Start(offset))?;
        f.read_exact(buf)
    }
}

/// What one bucket holds once placed: each node's distinct targets, in order.
struct Placed {
    counts: Vec<u32>,
    targets: Vec<u32>,
    directed_pairs: u64,
    /// The working arrays, handed back for the next bucket (fresh ones cost page faults).
    keys: Vec<u64>,
    placed: Vec<u64>,
}

/// Working arrays kept between buckets.
#[derive(Default)]
struct Pad {
    keys: Vec<u64>,
    placed: Vec<u64>,
    targets: Vec<u32>,
}

impl Pad {
    fn recycle(p: Placed) -> Pad {
        Pad {
            keys: p.keys,
            placed: p.placed,
            targets: p.targets,
        }
    }
}

/// Read one bucket's keys from every run, place them by node (counting sort), then sort and
/// deduplicate each node's list.
fn place(
    runs: &[Run],
    b: Bucket,
    n: usize,
    labels: &Labels,
    pads: &Mutex<Vec<Pad>>,
) -> std::io::Result<Placed> {
    let (lo, hi) = key_range(b, n, labels);
    let Pad {
        mut keys,
        mut placed,
        mut targets,
    } = pads
        .lock()
        .unwrap_or_else(|p| p.into_inner())
        .pop()
        .unwrap_or_default();
    keys.clear();
    for run in runs.iter().filter(|r| r.front) {
        read_span(run, lo, hi, &mut keys)?;
    }
    let fronts = keys.len();
    for run in runs.iter().filter(|r| !r.front) {
        read_span(run, lo, hi, &mut keys)?;
    }
    if keys.len() as u64 != b.keys {
        return Err(miscounted(b, keys.len() as u64));
    }
    let width = b.hi - b.lo;
    // Each run's keys are in node order, so the source's index changes rarely: remember it.
    let mut last = (u32::MAX, 0usize);
    let mut slot = |k: u64| -> std::io::Result<usize> {
        let src = (k >> 32) as u32;
        if src != last.0 {
            let d = labels.dense(src).ok_or_else(|| unknown(src))? as usize;
            if !(b.lo..b.hi).contains(&d) {
                return Err(unknown(src));
            }
            last = (src, d - b.lo);
        }
        Ok(last.1)
    };
    let mut starts = vec![0usize; width + 1];
    for &k in &keys {
        starts[slot(k)? + 1] += 1;
    }
    for i in 0..width {
        starts[i + 1] += starts[i];
    }
    // Target label and a front flag in the low bit, so sorting puts a front entry last among
    // its repeats.
    placed.clear();
    placed.resize(keys.len(), 0);
    let mut fill = starts.clone();
    for (j, &k) in keys.iter().enumerate() {
        let s = slot(k)?;
        placed[fill[s]] = (k & 0xffff_ffff) << 1 | (j < fronts) as u64;
        fill[s] += 1;
    }
    let mut counts = vec![0u32; width];
    targets.clear();
    let mut directed_pairs = 0u64;
    for i in 0..width {
        let list = &mut placed[starts[i]..starts[i + 1]];
        list.sort_unstable();
        let before = targets.len();
        let mut j = 0;
        while j < list.len() {
            let t = list[j] >> 1;
            while j + 1 < list.len() && list[j + 1] >> 1 == t {
                j += 1;
            }
            directed_pairs += list[j] & 1;
            targets.push(t as u32);
            j += 1;
        }
        counts[i] = (targets.len() - before) as u32;
    }
    // Relabel after the loop above: the lookups are independent, so their misses overlap.
    for t in targets.iter_mut() {
        *t = labels.dense(*t).ok_or_else(|| unknown(*t))?;
    }
    Ok(Placed {
        counts,
        targets,
        directed_pairs,
        keys,
        placed,
    })
}

/// One node whose keys alone exceed a bucket: its targets go through compressed bitmaps
/// (Lemire et al., "Roaring bitmaps: implementation of an optimized software library", 2018),
/// read a block at a time, and are written straight to `out`. Returns its distinct targets and
/// distinct front pairs.
fn one_large_node(
    runs: &[Run],
    b: Bucket,
    n: usize,
    labels: &Labels,
    out: &mut (dyn Write + Send),
) -> std::io::Result<(u64, u64)> {
    let (lo, hi) = key_range(b, n, labels);
    let mut all = roaring::RoaringBitmap::new();
    let mut front = roaring::RoaringBitmap::new();
    const BLOCK: u64 = 1 << 20;
    let mut keys: Vec<u64> = Vec::new();
    let mut read = 0u64;
    for run in runs {
        let (start, end) = run.span(lo, hi);
        if start >= end {
            continue;
        }
        let file = File::open(&run.path)?;
        let mut at = start;
        while at < end {
            let take = BLOCK.min(end - at);
            keys.clear();
            keys.resize(take as usize, 0);
            read_at(&file, bytemuck::cast_slice_mut(&mut keys), at * 8)?;
            for &k in keys
                .iter()
                .filter(|&&k| k >= lo && hi.is_none_or(|hi| k < hi))
            {
                read += 1;
                all.insert(k as u32);
                if run.front {
                    front.insert(k as u32);
                }
            }
            at += take;
        }
    }
    if read != b.keys {
        return Err(miscounted(b, read));
    }
    let mut block: Vec<u32> = Vec::with_capacity(1 << 16);
    for t in all.iter() {
        block.push(labels.dense(t).ok_or_else(|| unknown(t))?);
        if block.len() == block.capacity() {
            out.write_all(bytemuck::cast_slice(&block))?;
            block.clear();
        }
    }
    out.write_all(bytemuck::cast_slice(&block))?;
    Ok((all.len(), front.len()))
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
        let m = sp
            .merge(
                &[3, 4, 1],
                Labels::Dense,
                &mut out,
                0,
                &crate::progress::Quiet,
            )
            .unwrap();
        let targets: Vec<u32> = bytemuck::cast_slice(&out).to_vec();
        assert_eq!(m.offsets, vec![0, 1, 3, 4]);
        assert_eq!(targets, vec![1, 0, 2, 1]);
        // Distinct directed pairs: 0->1, 1->0, 1->2 (as in the in-memory fill's test).
        assert_eq!(m.directed_pairs, 3);
        assert!(m.runs >= 4);
        // The spiller is gone, so is its folder.
        assert!(!dir.exists());
    }

    #[test]
    fn runs_that_disagree_with_the_counts_are_an_error_not_a_short_list() {
        let parent = tempfile::tempdir().unwrap();
        let sp = Spiller::new(Scratch::create(parent.path()).unwrap(), 2);
        let mut a = SpillBuf::default();
        assert!(a.edges(&[(0, 1), (1, 2)], &sp));
        assert!(sp.spill(&mut a));
        // Node 1 has two keys, not three.
        let e = sp
            .merge(
                &[1, 3, 1],
                Labels::Dense,
                &mut Vec::new(),
                0,
                &crate::progress::Quiet,
            )
            .err()
            .unwrap();
        assert!(e.to_string().contains("first pass counted"), "{e}");
    }

    /// The naive twin: each node's distinct targets from a set, and the distinct lines.
    fn naive(n: usize, lines: &[(u32, u32)]) -> (Vec<u64>, Vec<u32>, u64) {
        let mut lists = vec![std::collections::BTreeSet::new(); n];
        for &(u, v) in lines {
            lists[u as usize].insert(v);
            lists[v as usize].insert(u);
        }
        let pairs: std::collections::BTreeSet<_> = lines.iter().collect();
        let mut offsets = vec![0u64];
        let mut targets = Vec::new();
        for l in &lists {
            targets.extend(l.iter().copied());
            offsets.push(targets.len() as u64);
        }
        (offsets, targets, pairs.len() as u64)
    }

    #[test]
    fn buckets_and_a_node_over_the_cap_merge_like_the_naive_twin() {
        let mut x = 7u64;
        let mut next = |m: u64| {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x % m
        };
        let n = 600usize;
        let mut lines = Vec::new();
        for _ in 0..6000 {
            let (u, v) = (next(n as u64) as u32, next(n as u64) as u32);
            if u != v {
                lines.push((u, v));
            }
        }
        // Node 3 is a hub with far more keys than one bucket may hold (the floor is 1,024).
        for _ in 0..5000 {
            let v = next(n as u64) as u32;
            if v != 3 {
                lines.push(if v.is_multiple_of(2) { (3, v) } else { (v, 3) });
            }
        }
        let (offsets, targets, pairs) = naive(n, &lines);
        let mut raw_degree = vec![0u32; n];
        for &(u, v) in &lines {
            raw_degree[u as usize] += 1;
            raw_degree[v as usize] += 1;
        }
        assert!(raw_degree[3] > 1024);
        // Ids written as 1000 + index: the merge ranks them back.
        let ids = NodeIds::Range {
            first: 1000,
            len: n,
        };
        let index = IntIndex::build(Vec::new(), None, u64::MAX).unwrap();
        for labels in [Labels::Dense, Labels::of_ints(&index, &ids)] {
            let shift = labels.of(0) as u32;
            let parent = tempfile::tempdir().unwrap();
            let sp = Spiller::new(Scratch::create(parent.path()).unwrap(), 700);
            let mut buf = SpillBuf::default();
            let relabelled: Vec<(u32, u32)> =
                lines.iter().map(|&(u, v)| (u + shift, v + shift)).collect();
            for chunk in relabelled.chunks(333) {
                assert!(buf.edges(chunk, &sp));
            }
            assert!(sp.spill(&mut buf));
            let mut out = Vec::new();
            // Little memory: buckets at the 1,024-key floor.
            let m = sp
                .merge(&raw_degree, labels, &mut out, 0, &crate::progress::Quiet)
                .unwrap();
            assert_eq!(m.offsets, offsets);
            assert_eq!(bytemuck::cast_slice::<u8, u32>(&out), targets.as_slice());
            assert_eq!(m.directed_pairs, pairs);
        }
    }
}

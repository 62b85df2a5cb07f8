//! Where the fill pass writes: the in-memory [`Filler`] when the adjacency fits the memory
//! budget, else sorted runs on disk ([`crate::store::spill`]) merged into a mapped store.

use std::path::{Path, PathBuf};

use rayon::prelude::*;

use super::{BYTES_PER_NODE, BuildChoice, Loader, Scanned, check_budget};
use crate::error::{Error, Result};
use crate::read::source::Compression;
use crate::store::file::{self, StoreWriter};
use crate::store::fill::Filler;
use crate::store::graph::{Graph, NodeIds};
use crate::store::ids::IntIndex;
use crate::store::intake::{DiskBuild, IdKind, StageName};
use crate::store::spill::{Labels, Scratch, SpillBuf, Spiller, usable_space};

/// The fill pass's destination.
pub(super) enum Sink {
    Memory(Filler),
    Disk {
        spiller: Spiller,
        /// Keys the pass must write (two per loop-free edge line), to catch a changed input.
        expected: u64,
    },
}

impl Sink {
    /// Write a batch of edge lines; false once writing to disk failed (the pass should stop).
    #[inline]
    pub(super) fn put(&self, buf: &mut SpillBuf, batch: &[(u32, u32)]) -> bool {
        match self {
            Sink::Memory(f) => {
                f.edges(batch);
                true
            }
            Sink::Disk { spiller, .. } => buf.edges(batch, spiller),
        }
    }

    /// Write what the workers' buffers still hold (sorted in parallel).
    pub(super) fn drain(&self, bufs: Vec<SpillBuf>) {
        if let Sink::Disk { spiller, .. } = self {
            bufs.into_par_iter().for_each(|mut b| {
                spiller.spill(&mut b);
            });
        }
    }
}

/// Bytes kept back from the run buffers for decoding and parsing (pieces in flight, decoder
/// state, the pieces' parsed batches); a quarter of smaller budgets.
const RESERVE: u64 = 256 << 20;

/// Most bytes the run buffers (and later the merge's read buffers) take, whatever the budget:
/// bigger runs save nothing measurable. At 1e9 edges the build took about as long with 56 runs
/// (4 GiB budget) as with 4 runs (the whole 20 GiB default), at a fifth of the peak.
const RUN_MEMORY_MAX: u64 = 1 << 30;

/// From this size of adjacency under construction (about 350M edges) auto builds on disk when
/// the disk has room, even within the budget: measured on 400M edges, 95–105 s and a 1.8 GB peak
/// on disk against 113–126 s and 4.9 GB in memory; on 1e9 edges 4.8 min and 3.4 GB on disk.
const DISK_FROM: u64 = 3 << 30;

/// Where the adjacency goes, once the raw degrees are known.
pub(super) enum Choice {
    Memory,
    Disk {
        /// Keys each worker's front (and back) buffer holds.
        keys_per_buffer: usize,
        /// Keys the runs hold in all (two per loop-free edge line).
        entries: u64,
    },
}

/// Text bytes a compressed input is guessed to hold per byte on disk, to decide before the
/// first pass whether it spills runs (edge lists compress about 3:1; the guess only sets
/// whether the text is parsed once or twice, never the result).
const GUESSED_RATIO: u64 = 3;

impl Loader<'_> {
    /// Choose the fill's destination from the raw degrees: memory when the adjacency under
    /// construction fits the budget and is smaller than [`DISK_FROM`] (or the disk lacks the
    /// room, or the user asked for memory), else disk. With `runs_written`, the runs are on the
    /// scratch disk already and only the store still needs room.
    pub(super) fn choose(&self, raw_degree: &[u32], runs_written: bool) -> Result<Choice> {
        let entries: u64 = raw_degree.par_iter().map(|&d| d as u64).sum();
        let n = raw_degree.len() as u64;
        let per_node = (n + 1).saturating_mul(BYTES_PER_NODE);
        let in_memory = entries
            .saturating_mul(4)
            .saturating_add(crate::store::fill::staging_bytes(entries))
            .saturating_add(per_node);
        let what = || format!("building the adjacency of {n} nodes and {entries} edge entries");
        if self.opts.directed {
            // Direction flags ride along in memory only; the sorted runs have no room for them.
            if matches!(self.opts.build, BuildChoice::Disk) {
                return Err(Error::Parameters {
                    problem: format!(
                        "{}: a directed graph is built in memory only (the build on disk keeps \
                         no directions yet); drop --build disk",
                        self.path.display()
                    ),
                });
            }
            check_budget(
                &self.path,
                self.opts,
                format!(
                    "{}, with a direction byte each (directed graphs build in memory only)",
                    what()
                ),
                in_memory.saturating_add(entries),
            )?;
            return Ok(Choice::Memory);
        }
        let needs = self.disk_needs(n, entries, runs_written);
        match self.opts.build {
            BuildChoice::Memory => {
                check_budget(&self.path, self.opts, what(), in_memory)?;
                return Ok(Choice::Memory);
            }
            // Large adjacencies build faster and far leaner on disk (sorting replaces scattered
            // writes), so auto takes the disk for them when it has the room.
            BuildChoice::Auto
                if in_memory <= self.opts.memory_budget
                    && (in_memory < DISK_FROM || !self.has_space(&needs)) =>
            {
                return Ok(Choice::Memory);
            }
            _ => {}
        }
        // On disk the per-node arrays stay in memory; everything else streams.
        check_budget(
            &self.path,
            self.opts,
            format!("even built on disk, the per-node arrays of {n} nodes"),
            per_node,
        )?;
        for (dir, bytes) in &needs {
            self.check_space(dir, *bytes)?;
        }
        let spare = self
            .opts
            .memory_budget
            .saturating_sub(per_node + RESERVE.min(self.opts.memory_budget / 4))
            .min(RUN_MEMORY_MAX);
        Ok(Choice::Disk {
            keys_per_buffer: self.keys_per_buffer(spare),
            entries,
        })
    }

    /// Each worker holds a front and a back buffer of 8-byte keys within `spare` bytes.
    fn keys_per_buffer(&self, spare: u64) -> usize {
        (spare / (self.threads as u64 * 2 * 8)).max(1024) as usize
    }

    /// Room a build on disk needs, per folder: the runs (unless written already) and the store.
    fn disk_needs(&self, n: u64, entries: u64, runs_written: bool) -> Vec<(PathBuf, u64)> {
        let parent = self.scratch_parent();
        let run_bytes = if runs_written {
            0
        } else {
            entries.saturating_mul(8)
        };
        let store_bytes = 4096 + (n + 1) * 8 + entries * 4 + n * 8;
        match self.dest {
            None => vec![(parent, run_bytes + store_bytes)],
            Some(dest) => {
                let dest_dir = parent_of(dest);
                if same_device(&parent, &dest_dir) {
                    vec![(parent, run_bytes + store_bytes)]
                } else {
                    vec![(parent, run_bytes), (dest_dir, store_bytes)]
                }
            }
        }
    }

    /// The fill pass's destination (see [`Loader::choose`]).
    pub(super) fn plan_fill(&self, raw_degree: &[u32]) -> Result<Sink> {
        match self.choose(raw_degree, false)? {
            Choice::Memory => Ok(Sink::Memory(Filler::new(raw_degree))),
            Choice::Disk {
                keys_per_buffer,
                entries,
            } => {
                let parent = self.scratch_parent();
                let scratch =
                    Scratch::create(&parent).map_err(|e| Error::io(&parent, "create in", e))?;
                Ok(Sink::Disk {
                    spiller: Spiller::new(scratch, keys_per_buffer),
                    expected: entries,
                })
            }
        }
    }

    /// Runs to spill during the first pass, when the input looks large enough to be built on
    /// disk: the text is then parsed once. The keys carry the original integer ids (the dense
    /// indices are not known yet); the merge ranks them. `None` when the build may be in memory,
    /// or the scratch disk looks short of room for the guessed size (the second pass then
    /// decides with the real sizes).
    pub(super) fn early_spiller(&self) -> Option<Spiller> {
        let text: u64 = self
            .parts
            .iter()
            .map(|part| {
                let src = &part.src;
                match src.compression {
                    Compression::None => src.data.len() as u64,
                    // Rendered rows take about 16 bytes each.
                    Compression::Parquet => src.parquet.map_or(0, |p| p.rows().saturating_mul(16)),
                    _ => (src.data.len() as u64).saturating_mul(GUESSED_RATIO),
                }
            })
            .sum();
        // About 16 bytes of text per edge line, 8 bytes of adjacency under construction.
        let adjacency = text / 2;
        if self.opts.directed {
            return None;
        }
        match self.opts.build {
            BuildChoice::Memory => return None,
            BuildChoice::Auto if adjacency < DISK_FROM => return None,
            _ => {}
        }
        // The runs take about the text's size (16 bytes a line), the store about half.
        let parent = self.scratch_parent();
        let free = usable_space(&parent).ok()?;
        if free.saturating_sub(self.opts.scratch_keep_free) < text + text / 2 {
            return None;
        }
        let budget = self.opts.memory_budget;
        let spare = (budget / 4).min(RUN_MEMORY_MAX);
        let scratch = Scratch::create(&parent).ok()?;
        Some(Spiller::guarded(
            scratch,
            self.keys_per_buffer(spare),
            self.opts.scratch_keep_free,
        ))
    }

    /// The folder a build on disk works in: `--scratch`, else beside the store being made,
    /// else the system's temporary folder.
    fn scratch_parent(&self) -> PathBuf {
        match (&self.opts.scratch, self.dest) {
            (Some(dir), _) => dir.clone(),
            (None, Some(dest)) => parent_of(dest),
            (None, None) => std::env::temp_dir(),
        }
    }

    /// Whether every folder has the room `check_space` asks for (unreadable: no).
    fn has_space(&self, needs: &[(PathBuf, u64)]) -> bool {
        needs
            .iter()
            .all(|(dir, bytes)| self.check_space(dir, *bytes).is_ok())
    }

    fn check_space(&self, dir: &Path, needed: u64) -> Result<()> {
        let free = usable_space(dir).map_err(|e| Error::io(dir, "inspect", e))?;
        let usable = free.saturating_sub(self.opts.scratch_keep_free);
        if needed > usable {
            return Err(Error::ScratchFull {
                path: self.path.clone(),
                dir: dir.to_path_buf(),
                needed_mib: needed.div_ceil(1 << 20),
                available_mib: usable >> 20,
                when: if self.opts.scratch_keep_free > 0 {
                    "are free beyond what --scratch-keep-free keeps"
                } else {
                    "are free"
                },
            });
        }
        Ok(())
    }

    /// A write to the scratch or store disk failed: a full disk is a budget refusal, anything
    /// else an I/O error naming the folder.
    fn disk_fault(&self, e: std::io::Error, dir: &Path, keys: u64) -> Error {
        if e.kind() == std::io::ErrorKind::StorageFull {
            Error::ScratchFull {
                path: self.path.clone(),
                dir: dir.to_path_buf(),
                needed_mib: (keys * 12).div_ceil(1 << 20),
                available_mib: 0,
                when: "were left when the disk filled up mid-build (something else took the \
                       space checked at the start)",
            }
        } else {
            Error::io(dir, "write in", e)
        }
    }

    /// Finish either build: sort and merge in memory, or merge the runs into a store file and
    /// map it.
    pub(super) fn finish_sink(
        self,
        sink: Sink,
        ids: NodeIds,
        id_kind: IdKind,
        scanned: Scanned,
        raw_degree: &[u32],
    ) -> Result<Graph> {
        match sink {
            Sink::Memory(filler) => self.finish(filler, ids, id_kind, scanned),
            Sink::Disk { spiller, expected } => {
                self.finish_on_disk(spiller, expected, ids, None, id_kind, scanned, raw_degree)
            }
        }
    }

    /// Merge the runs into a store file and map it. The runs' keys carry dense indices, or with
    /// `by_id` the original integer ids.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn finish_on_disk(
        mut self,
        spiller: Spiller,
        expected: u64,
        ids: NodeIds,
        by_id: Option<&IntIndex>,
        id_kind: IdKind,
        scanned: Scanned,
        raw_degree: &[u32],
    ) -> Result<Graph> {
        let labels = match by_id {
            Some(index) => Labels::of_ints(index, &ids),
            None => Labels::Dense,
        };
        let scratch_dir = spiller.scratch().to_path_buf();
        if let Some(e) = spiller.take_failure() {
            return Err(self.disk_fault(e, &scratch_dir, expected));
        }
        if spiller.keys() != expected {
            return Err(Error::Output {
                path: self.path.clone(),
                problem: format!(
                    "the second pass wrote {} adjacency entries where the first counted {expected}; \
                     was the input modified while being read?",
                    spiller.keys()
                ),
            });
        }
        // Without a destination the store lives in its own scratch folder only until it is
        // mapped: removing a mapped file keeps its pages readable (POSIX unlink semantics).
        let (store_path, holder) = match self.dest {
            Some(d) => (d.to_path_buf(), None),
            None => {
                let parent = self.scratch_parent();
                let s = Scratch::create(&parent).map_err(|e| Error::io(&parent, "create in", e))?;
                (s.path().join("graph.plumb"), Some(s))
            }
        };
        let n = ids.len();
        let mut w = StoreWriter::create(&store_path, n as u64)?;
        let budget = self.opts.memory_budget;
        let spare = budget
            .saturating_sub((n as u64 + 1) * BYTES_PER_NODE)
            .min(RUN_MEMORY_MAX);
        // The buckets in flight share what the per-node arrays leave.
        let merged = spiller
            .merge(raw_degree, labels, w.targets(), spare, self.progress)
            .map_err(|e| self.disk_fault(e, &scratch_dir, expected))?;
        self.stage_done(StageName::SortAndMerge);
        let on_disk = DiskBuild {
            scratch: scratch_dir.display().to_string(),
            runs: merged.runs,
            run_bytes: merged.run_bytes,
            memory_budget: budget,
        };
        let intake = self.intake(
            &merged.offsets,
            merged.directed_pairs,
            id_kind,
            scanned,
            Some(on_disk),
        )?;
        w.finish(&merged.offsets, &ids, &intake, None)?;
        drop(merged);
        drop(ids);
        let mut g = file::open_fresh(&store_path)?;
        // Checking the offsets read them; let those pages go so the analyses fault in only
        // what they touch.
        g.csr.release_pages();
        // The store is a means here, not the input: report the text it came from.
        g.intake = intake;
        drop(holder);
        Ok(g)
    }
}

fn parent_of(p: &Path) -> PathBuf {
    match p.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

fn same_device(a: &Path, b: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        match (std::fs::metadata(a), std::fs::metadata(b)) {
            (Ok(x), Ok(y)) => x.dev() == y.dev(),
            _ => false,
        }
    }
    #[cfg(not(unix))]
    {
        let _ = (a, b);
        false
    }
}

//! A history of profiles in a directory the user names: one report per snapshot under
//! `snapshots/`, and `index.json` listing them (label, input checksum and size, file). Every file
//! is written to a temporary name and renamed, the snapshot before the index, so a crash leaves
//! either the old index or the new one, never half of one; a snapshot the index does not list
//! is ignored and said. A lock file (`lock`, created exclusively) keeps two runs from writing at
//! once: the second waits. A missing index is rebuilt from the snapshots, and a corrupt or
//! truncated snapshot is reported by name while every other one stays usable.

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::outfile::write_atomic;
use crate::profile::report::Report;

/// Format name written in every history index.
pub const INDEX_FORMAT: &str = "plumb-history";
/// Layout version of `index.json`; readers accept this and every earlier version.
pub const INDEX_VERSION: u32 = 1;

/// One snapshot of a history.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Entry {
    /// Position in the history, from 1.
    pub seq: u64,
    /// The user's label (a date or a name).
    pub label: String,
    /// The snapshot's file, relative to the history directory.
    pub file: String,
    /// XXH3-64 of the input as stored (`null` for standard input).
    #[serde(default)]
    pub input_xxh3: Option<String>,
    /// Size of the input as stored (`null` for standard input).
    #[serde(default)]
    pub input_bytes: Option<u64>,
    /// The pinned baseline that later snapshots are also compared with.
    #[serde(default)]
    pub baseline: bool,
}

/// A history's index: its format, version and snapshots in order.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Index {
    /// Always "plumb-history".
    pub format: String,
    /// Version of the index layout.
    pub version: u32,
    /// Snapshots in order.
    pub entries: Vec<Entry>,
}

/// A snapshot that could not be read, and why.
#[derive(Debug, Clone, PartialEq)]
pub struct Problem {
    /// The snapshot file, relative to the history.
    pub file: String,
    /// What is wrong with it.
    pub what: String,
}

/// A history directory, opened: its index and every readable snapshot.
pub struct History {
    /// The directory.
    pub dir: PathBuf,
    /// Its index.
    pub index: Index,
    /// Things found wrong on opening (unreadable snapshots, a rebuilt index).
    pub problems: Vec<Problem>,
    /// Each entry's report as read on opening (`None` when unreadable): read once, used by
    /// every query.
    loaded: Vec<Option<Report>>,
}

/// Held while writing; removed on drop.
pub struct Lock {
    path: PathBuf,
}

impl Drop for Lock {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.path);
    }
}

fn io<'a>(path: &'a Path, action: &'static str) -> impl FnOnce(std::io::Error) -> Error + 'a {
    move |e| Error::Io {
        path: path.to_path_buf(),
        action,
        source: e,
    }
}

/// Take the history's lock, waiting up to `wait` for another run to finish. A lock left by a
/// process that no longer exists is taken over.
pub fn lock(dir: &Path, wait: Duration) -> Result<Lock> {
    std::fs::create_dir_all(dir).map_err(io(dir, "create folder"))?;
    let path = dir.join("lock");
    let start = Instant::now();
    loop {
        match std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&path)
        {
            Ok(mut f) => {
                use std::io::Write;
                let _ = writeln!(f, "{}", std::process::id());
                return Ok(Lock { path });
            }
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                let holder = std::fs::read_to_string(&path).unwrap_or_default();
                let alive = holder
                    .trim()
                    .parse::<u32>()
                    .map(|pid| Path::new(&format!("/proc/{pid}")).exists())
                    .unwrap_or(true);
                if !alive {
                    let _ = std::fs::remove_file(&path);
                    continue;
                }
                if start.elapsed() > wait {
                    return Err(Error::Output {
                        path: path.clone(),
                        problem: format!(
                            "another plumb run (process {}) holds the history's lock; waited {} s",
                            holder.trim(),
                            wait.as_secs()
                        ),
                    });
                }
                std::thread::sleep(Duration::from_millis(50));
            }
            Err(e) => return Err(io(&path, "create")(e)),
        }
    }
}

/// Read a profile report written by `plumb profile --json` or kept in a history: a missing or
/// unreadable file is an I/O error, anything but a complete report is bad input.
pub fn read_report(path: &Path) -> Result<Report> {
    let bytes = std::fs::read(path).map_err(io(path, "read"))?;
    parse_report(&bytes).map_err(|problem| Error::Report {
        path: path.to_path_buf(),
        problem,
    })
}

/// A snapshot as text, with the problem in words when it is not a complete report.
fn load_snapshot(path: &Path) -> std::result::Result<Report, String> {
    let bytes = std::fs::read(path).map_err(|e| format!("cannot read: {e}"))?;
    parse_report(&bytes)
}

fn parse_report(bytes: &[u8]) -> std::result::Result<Report, String> {
    serde_json::from_slice(bytes).map_err(|e| {
        format!(
            "not a complete profile report ({e}); it may have been cut short by a crash or \
             edited"
        )
    })
}

impl History {
    /// Open a history that must exist already (for reading it): a missing directory is an I/O
    /// error rather than an empty history.
    pub fn open_existing(dir: &Path) -> Result<History> {
        std::fs::read_dir(dir).map_err(io(dir, "open the history directory"))?;
        Self::open(dir)
    }

    /// Open (or start) the history in `dir`.
    pub fn open(dir: &Path) -> Result<History> {
        let index_path = dir.join("index.json");
        let mut problems = Vec::new();
        let index = match std::fs::read(&index_path) {
            Ok(bytes) => match serde_json::from_slice::<Index>(&bytes) {
                Ok(ix) if ix.format == INDEX_FORMAT && ix.version <= INDEX_VERSION => ix,
                Ok(ix) => {
                    return Err(Error::Output {
                        path: index_path,
                        problem: format!(
                            "a {} index of version {}, newer than this plumb reads ({}); \
                             use a newer plumb",
                            ix.format, ix.version, INDEX_VERSION
                        ),
                    });
                }
                Err(e) => {
                    problems.push(Problem {
                        file: "index.json".into(),
                        what: format!("unreadable ({e}); rebuilt from the snapshots"),
                    });
                    Self::rebuild(dir, &mut problems)?
                }
            },
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
                let rebuilt = Self::rebuild(dir, &mut problems)?;
                if !rebuilt.entries.is_empty() {
                    problems.push(Problem {
                        file: "index.json".into(),
                        what: format!("missing; rebuilt from {} snapshots", rebuilt.entries.len()),
                    });
                }
                rebuilt
            }
            Err(e) => return Err(io(&index_path, "read")(e)),
        };
        // Snapshots the index lists but that cannot be read are reported, not fatal.
        let loaded = index
            .entries
            .iter()
            .map(|e| match load_snapshot(&dir.join(&e.file)) {
                Ok(r) => Some(r),
                Err(what) => {
                    problems.push(Problem {
                        file: e.file.clone(),
                        what,
                    });
                    None
                }
            })
            .collect();
        Ok(History {
            dir: dir.to_path_buf(),
            index,
            problems,
            loaded,
        })
    }

    /// An index from the snapshot files themselves, in file-name (sequence) order.
    fn rebuild(dir: &Path, problems: &mut Vec<Problem>) -> Result<Index> {
        let snaps = dir.join("snapshots");
        let mut files: Vec<String> = match std::fs::read_dir(&snaps) {
            Ok(rd) => rd
                .filter_map(|e| e.ok())
                .map(|e| e.file_name().to_string_lossy().into_owned())
                .filter(|n| n.ends_with(".json"))
                .collect(),
            Err(_) => Vec::new(),
        };
        files.sort();
        let mut entries = Vec::new();
        for name in files {
            let rel = format!("snapshots/{name}");
            match load_snapshot(&dir.join(&rel)) {
                Ok(r) => {
                    let label = name
                        .trim_end_matches(".json")
                        .split_once('-')
                        .map_or(name.clone(), |(_, l)| l.to_string());
                    entries.push(Entry {
                        seq: entries.len() as u64 + 1,
                        label,
                        file: rel,
                        input_xxh3: r.input.xxh3.clone(),
                        input_bytes: r.input.bytes,
                        baseline: false,
                    });
                }
                Err(what) => problems.push(Problem { file: rel, what }),
            }
        }
        if let Some(first) = entries.first_mut() {
            first.baseline = true;
        }
        Ok(Index {
            format: INDEX_FORMAT.into(),
            version: INDEX_VERSION,
            entries,
        })
    }

    /// The entry whose input has this checksum, if any.
    pub fn find_input(&self, xxh3: &str) -> Option<&Entry> {
        self.index
            .entries
            .iter()
            .find(|e| e.input_xxh3.as_deref() == Some(xxh3))
    }

    /// The latest readable snapshot, and the pinned baseline (first entry unless one is pinned).
    pub fn latest(&self) -> Option<(&Entry, &Report)> {
        self.index
            .entries
            .iter()
            .zip(&self.loaded)
            .rev()
            .find_map(|(e, r)| r.as_ref().map(|r| (e, r)))
    }

    /// The pinned baseline (the first snapshot unless another was pinned), when readable.
    pub fn baseline(&self) -> Option<(&Entry, &Report)> {
        let i = self
            .index
            .entries
            .iter()
            .position(|e| e.baseline)
            .or((!self.index.entries.is_empty()).then_some(0))?;
        self.loaded[i].as_ref().map(|r| (&self.index.entries[i], r))
    }

    /// Add `report` under `label` (the caller holds the lock); `pin` makes it the baseline.
    pub fn add(&mut self, report: &Report, label: &str, pin: bool) -> Result<Entry> {
        let seq = self.index.entries.iter().map(|e| e.seq).max().unwrap_or(0) + 1;
        let safe: String = label
            .chars()
            .map(|c| {
                if c.is_ascii_alphanumeric() || "-_.".contains(c) {
                    c
                } else {
                    '_'
                }
            })
            .collect();
        let file = format!("snapshots/{seq:06}-{safe}.json");
        let snaps = self.dir.join("snapshots");
        std::fs::create_dir_all(&snaps).map_err(io(&snaps, "create folder"))?;
        let mut text = serde_json::to_string_pretty(report).unwrap_or_default();
        text.push('\n');
        // The snapshot first, then the index that lists it: a crash between the two leaves an
        // unlisted snapshot, which is ignored.
        write_atomic(&self.dir.join(&file), text.as_bytes())?;
        if pin {
            for e in &mut self.index.entries {
                e.baseline = false;
            }
        }
        let entry = Entry {
            seq,
            label: label.to_string(),
            file,
            input_xxh3: report.input.xxh3.clone(),
            input_bytes: report.input.bytes,
            baseline: pin || self.index.entries.is_empty(),
        };
        self.index.entries.push(entry.clone());
        self.loaded.push(Some(report.clone()));
        self.write_index()?;
        Ok(entry)
    }

    fn write_index(&self) -> Result<()> {
        let mut text = serde_json::to_string_pretty(&self.index).unwrap_or_default();
        text.push('\n');
        write_atomic(&self.dir.join("index.json"), text.as_bytes())
    }

    /// Every readable snapshot in order, with its entry.
    pub fn reports(&self) -> Vec<(&Entry, &Report)> {
        self.index
            .entries
            .iter()
            .zip(&self.loaded)
            .filter_map(|(e, r)| r.as_ref().map(|r| (e, r)))
            .collect()
    }
}

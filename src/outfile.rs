//! Atomic output files: written to a temporary file beside the destination, synced, then
//! renamed over it, so a reader never sees half a file and a crash leaves the old one intact.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use crate::error::{Error, Result};

/// Paths that must not outlive an interrupted run: partial output files and scratch folders.
/// The interrupt handler removes them (see [`remove_leftovers`]); their owners unregister them
/// when they finish or clean up themselves.
static LEFTOVERS: std::sync::Mutex<Vec<(u64, PathBuf)>> = std::sync::Mutex::new(Vec::new());
static NEXT_LEFTOVER: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);

/// A path registered for removal on interrupt; unregistered when dropped.
pub(crate) struct Leftover(u64);

impl Leftover {
    pub(crate) fn register(path: &Path) -> Self {
        let id = NEXT_LEFTOVER.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
        if let Ok(mut l) = LEFTOVERS.lock() {
            l.push((id, path.to_path_buf()));
        }
        Leftover(id)
    }
}

impl Drop for Leftover {
    fn drop(&mut self) {
        if let Ok(mut l) = LEFTOVERS.lock() {
            l.retain(|(id, _)| *id != self.0);
        }
    }
}

static INTERRUPTED: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

/// Whether an interrupt is being handled: writers of scratch files stop creating them, so the
/// folders being removed stay removed.
pub(crate) fn interrupted() -> bool {
    INTERRUPTED.load(std::sync::atomic::Ordering::SeqCst)
}

/// Remove every partial output file and scratch folder still in use: the interrupt (Ctrl-C)
/// path, which exits without unwinding. Returns how many paths were removed.
pub fn remove_leftovers() -> usize {
    INTERRUPTED.store(true, std::sync::atomic::Ordering::SeqCst);
    let paths: Vec<PathBuf> = match LEFTOVERS.lock() {
        Ok(mut l) => l.drain(..).map(|(_, p)| p).collect(),
        Err(_) => return 0,
    };
    paths
        .iter()
        .filter(|p| {
            if p.is_dir() {
                // A worker may have been creating a file as the flag went up: try again
                // briefly until the folder is gone.
                (0..100).any(|_| {
                    let gone = std::fs::remove_dir_all(p).is_ok() || !p.exists();
                    if !gone {
                        std::thread::sleep(std::time::Duration::from_millis(10));
                    }
                    gone
                })
            } else {
                std::fs::remove_file(p).is_ok()
            }
        })
        .count()
}

/// A file written beside its destination and renamed over it on commit; dropped uncommitted, it
/// is removed (and removed by [`remove_leftovers`] on interrupt).
pub struct AtomicFile {
    dest: PathBuf,
    tmp: PathBuf,
    out: Option<BufWriter<File>>,
    committed: bool,
    _leftover: Leftover,
}

impl AtomicFile {
    /// Start writing `dest` (the temporary file is created beside it).
    pub fn create(dest: &Path) -> Result<Self> {
        let dir = match dest.parent() {
            Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let name = dest
            .file_name()
            .ok_or_else(|| Error::Output {
                path: dest.to_path_buf(),
                problem: "the output path names no file".into(),
            })?
            .to_string_lossy()
            .into_owned();
        let tmp = dir.join(format!(".{name}.{}.partial", std::process::id()));
        // Readable too, so a writer can read back what it wrote (the store's checksum).
        let file = std::fs::OpenOptions::new()
            .read(true)
            .write(true)
            .create(true)
            .truncate(true)
            .open(&tmp)
            .map_err(|e| Error::io(&tmp, "create", e))?;
        Ok(AtomicFile {
            dest: dest.to_path_buf(),
            _leftover: Leftover::register(&tmp),
            tmp,
            out: Some(BufWriter::with_capacity(1 << 20, file)),
            committed: false,
        })
    }

    /// The buffered writer.
    pub fn writer(&mut self) -> &mut BufWriter<File> {
        self.out.as_mut().expect("writer used after commit")
    }

    /// Map a write error to one naming the destination.
    pub fn fail(&self, e: std::io::Error) -> Error {
        Error::io(&self.dest, "write", e)
    }

    /// Flush, sync and move into place.
    pub fn commit(mut self) -> Result<()> {
        let out = self.out.take().expect("committed twice");
        let file = out
            .into_inner()
            .map_err(|e| Error::io(&self.dest, "write", e.into_error()))?;
        file.sync_all()
            .map_err(|e| Error::io(&self.dest, "sync", e))?;
        drop(file);
        std::fs::rename(&self.tmp, &self.dest).map_err(|e| Error::io(&self.dest, "rename", e))?;
        self.committed = true;
        Ok(())
    }

    /// Flush the buffer and hand out the file as written so far (to read it back, e.g. for a
    /// checksum over what was written out of order).
    pub(crate) fn flushed(&mut self) -> std::io::Result<&File> {
        let w = self.writer();
        w.flush()?;
        Ok(w.get_ref())
    }
}

impl Write for AtomicFile {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.writer().write(buf)
    }
    fn flush(&mut self) -> std::io::Result<()> {
        self.writer().flush()
    }
}

impl Drop for AtomicFile {
    fn drop(&mut self) {
        if !self.committed {
            self.out = None;
            let _ = std::fs::remove_file(&self.tmp);
        }
    }
}

/// Write `data` to `dest` atomically.
pub fn write_atomic(dest: &Path, data: &[u8]) -> Result<()> {
    let mut f = AtomicFile::create(dest)?;
    f.write_all(data).map_err(|e| f.fail(e))?;
    f.commit()
}

/// Compress `data` as independent zstd frames of about `frame_bytes` each (compressed in
/// parallel, and decodable in parallel by plumb) and write them atomically to `dest`.
pub fn write_zstd_frames(dest: &Path, data: &[u8], level: i32, frame_bytes: usize) -> Result<u64> {
    use rayon::prelude::*;
    let frames: Vec<std::io::Result<Vec<u8>>> = data
        .par_chunks(frame_bytes.max(1))
        .map(|c| {
            // A content checksum lets readers tell corruption from data.
            let mut z = zstd::bulk::Compressor::new(level)?;
            z.include_checksum(true)?;
            z.compress(c)
        })
        .collect();
    let mut out = AtomicFile::create(dest)?;
    let mut total = 0u64;
    for f in frames {
        let f = f.map_err(|e| out.fail(e))?;
        out.write_all(&f).map_err(|e| out.fail(e))?;
        total += f.len() as u64;
    }
    out.commit()?;
    Ok(total)
}

/// Frames compressed together per parallel batch by [`EdgeWriter`].
const BATCH_FRAMES: usize = 8;

/// Streams edges as `u<TAB>v` lines to a file, atomically: plain text, or independent zstd
/// frames (compressed a batch at a time in parallel) when `zstd_level` is given. Holds at most
/// one batch of text, however many edges pass through.
pub struct EdgeWriter {
    out: AtomicFile,
    zstd_level: Option<i32>,
    frame_bytes: usize,
    pending: Vec<Vec<u8>>,
    current: Vec<u8>,
    /// Edge lines written.
    pub edges: u64,
    /// Bytes written (compressed, when compressing).
    pub bytes_out: u64,
    error: Option<std::io::Error>,
}

impl EdgeWriter {
    /// zstd when `dest` ends in `.zst` (level 3), else plain.
    pub fn create(dest: &Path) -> Result<Self> {
        let zstd = dest.extension().is_some_and(|e| e == "zst");
        Ok(EdgeWriter {
            out: AtomicFile::create(dest)?,
            zstd_level: zstd.then_some(3),
            frame_bytes: 4 << 20,
            pending: Vec::new(),
            current: Vec::with_capacity(4 << 20),
            edges: 0,
            bytes_out: 0,
            error: None,
        })
    }

    /// Write a comment line (`# …`) that the readers skip.
    pub fn comment(&mut self, text: &str) {
        for line in text.lines() {
            self.current.extend_from_slice(b"# ");
            self.current.extend_from_slice(line.as_bytes());
            self.current.push(b'\n');
        }
    }

    /// Write the edge `a b` with integer ids.
    pub fn edge(&mut self, a: u32, b: u32) {
        self.labelled(itoa_u32(a).as_bytes(), itoa_u32(b).as_bytes());
    }

    /// An edge between two nodes named by their original ids.
    pub fn labelled(&mut self, a: &[u8], b: &[u8]) {
        self.current.extend_from_slice(a);
        self.current.push(b'\t');
        self.current.extend_from_slice(b);
        self.current.push(b'\n');
        self.edges += 1;
        if self.current.len() >= self.frame_bytes {
            let full = std::mem::replace(&mut self.current, Vec::with_capacity(self.frame_bytes));
            self.pending.push(full);
            if self.pending.len() >= BATCH_FRAMES {
                self.drain();
            }
        }
    }

    fn drain(&mut self) {
        use rayon::prelude::*;
        if self.error.is_some() {
            self.pending.clear();
            return;
        }
        let chunks = std::mem::take(&mut self.pending);
        let encoded: Vec<std::io::Result<Vec<u8>>> = match self.zstd_level {
            Some(level) => chunks
                .into_par_iter()
                .map(|c| {
                    let mut z = zstd::bulk::Compressor::new(level)?;
                    z.include_checksum(true)?;
                    z.compress(&c)
                })
                .collect(),
            None => chunks.into_iter().map(Ok).collect(),
        };
        for e in encoded {
            let r = e.and_then(|bytes| {
                self.out.write_all(&bytes)?;
                self.bytes_out += bytes.len() as u64;
                Ok(())
            });
            if let Err(e) = r {
                self.error = Some(e);
                return;
            }
        }
    }

    /// Write what is left and move the file into place.
    pub fn finish(mut self) -> Result<(u64, u64)> {
        if !self.current.is_empty() {
            let last = std::mem::take(&mut self.current);
            self.pending.push(last);
        }
        self.drain();
        if let Some(e) = self.error.take() {
            return Err(self.out.fail(e));
        }
        let (edges, bytes) = (self.edges, self.bytes_out);
        self.out.commit()?;
        Ok((edges, bytes))
    }
}

/// Decimal digits of `x` without allocation through `fmt`.
fn itoa_u32(mut x: u32) -> SmallDigits {
    let mut d = SmallDigits {
        buf: [0; 10],
        start: 10,
    };
    loop {
        d.start -= 1;
        d.buf[d.start] = b'0' + (x % 10) as u8;
        x /= 10;
        if x == 0 {
            return d;
        }
    }
}

struct SmallDigits {
    buf: [u8; 10],
    start: usize,
}

impl SmallDigits {
    fn as_bytes(&self) -> &[u8] {
        &self.buf[self.start..]
    }
}

/// Refuse an output path that names the input file: plumb never modifies its inputs. `-`
/// (standard input or output) never names a file.
pub fn refuse_overwrite(out: &Path, input: &Path) -> Result<()> {
    if out.as_os_str() == "-" || input.as_os_str() == "-" {
        return Ok(());
    }
    if let (Ok(a), Ok(b)) = (out.canonicalize(), input.canonicalize())
        && a == b
    {
        return Err(Error::Parameters {
            problem: format!(
                "{} is the input; plumb never writes over its input (choose another output file)",
                out.display()
            ),
        });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edge_writer_round_trips_plain_and_zstd() {
        let dir = tempfile::tempdir().unwrap();
        for name in ["e.tsv", "e.tsv.zst"] {
            let path = dir.path().join(name);
            let mut w = EdgeWriter::create(&path).unwrap();
            w.frame_bytes = 64; // many frames and batches
            w.comment("test\nsecond line");
            for i in 0..1000u32 {
                w.edge(i, i.wrapping_mul(2_654_435_761) % 4_000_000_000);
            }
            let (edges, _) = w.finish().unwrap();
            assert_eq!(edges, 1000);
            let raw = std::fs::read(&path).unwrap();
            let text = if name.ends_with(".zst") {
                zstd::decode_all(&raw[..]).unwrap()
            } else {
                raw
            };
            let text = String::from_utf8(text).unwrap();
            let lines: Vec<&str> = text.lines().collect();
            assert_eq!(lines[0], "# test");
            assert_eq!(lines[2], "0\t0");
            assert_eq!(lines[3], format!("1\t{}", 2_654_435_761u32));
            assert_eq!(lines.len(), 1002);
        }
    }
}

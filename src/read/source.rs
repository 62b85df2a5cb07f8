//! Getting input bytes: memory-mapped files, standard input, compression sniffed from magic bytes,
//! and decoding compressed streams into newline-aligned text chunks.

use std::io::Read;
use std::path::{Path, PathBuf};

use crate::read::parquet::{ParquetFault, ParquetPlan};

use crate::error::{Error, Result};
use crate::read::magic;

/// Compression of an input, recognised by its first bytes (never by its name).
#[derive(
    Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize, schemars::JsonSchema,
)]
#[serde(rename_all = "lowercase")]
pub enum Compression {
    /// Not compressed.
    None,
    /// zstd (RFC 8878), one frame or several.
    Zstd,
    /// gzip (RFC 1952), one member or several.
    Gzip,
    /// Apache Parquet: a columnar file whose two id columns are decoded row group by row group
    /// (see `read::parquet`).
    Parquet,
}

/// What the first bytes of an input say it is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Sniffed {
    /// Text (possibly malformed).
    Text,
    /// A compression plumb decodes.
    Compressed(Compression),
    /// A plumb store file.
    Store,
    /// A compression plumb does not read, by name.
    Unsupported(&'static str),
    /// Not text and no format plumb knows: many control bytes, or bytes that are not UTF-8
    /// beside control bytes, in the first few KiB.
    Binary,
}

/// Classify an input by its magic bytes.
pub fn sniff(data: &[u8]) -> Sniffed {
    let starts = |m: &[u8]| data.starts_with(m);
    if starts(&magic::ZSTD) {
        return Sniffed::Compressed(Compression::Zstd);
    }
    // A zstd skippable frame (magic 0x184D2A50..=0x184D2A5F, little-endian) may lead a zstd file.
    if data.len() >= 4 && data[1..4] == [0x2A, 0x4D, 0x18] && data[0] & 0xF0 == 0x50 {
        return Sniffed::Compressed(Compression::Zstd);
    }
    if starts(&magic::GZIP) {
        return Sniffed::Compressed(Compression::Gzip);
    }
    // A text line may start with the id "PAR1"; a Parquet page header never has a blank there.
    if starts(&magic::PARQUET) && !matches!(data.get(4), Some(b' ' | b'\t' | b',' | b'\n' | b'\r'))
    {
        return Sniffed::Compressed(Compression::Parquet);
    }
    if starts(magic::STORE) {
        return Sniffed::Store;
    }
    if starts(&magic::XZ) {
        return Sniffed::Unsupported("xz");
    }
    if starts(&magic::BZIP2) && data.len() > 3 && data[3].is_ascii_digit() {
        return Sniffed::Unsupported("bzip2");
    }
    if starts(&magic::LZ4) {
        return Sniffed::Unsupported("lz4");
    }
    if starts(&magic::ZIP) {
        return Sniffed::Unsupported("zip");
    }
    if looks_binary(data) {
        return Sniffed::Binary;
    }
    Sniffed::Text
}

/// Bytes sampled from the start of an input to tell text from binary.
const SAMPLE: usize = 4096;

/// Whether the start of `data` is binary rather than text with a stray bad byte: any control
/// byte (other than tab, line feed, carriage return and form feed) in a sample that is not
/// UTF-8, or over a quarter control bytes in one that is. Short inputs are always treated as text, so a bad line in a tiny
/// file is still reported by line and byte offset.
fn looks_binary(data: &[u8]) -> bool {
    let sample = &data[..data.len().min(SAMPLE)];
    if sample.len() < 32 {
        return false;
    }
    let control = sample
        .iter()
        .filter(|&&b| (b < 0x20 && !b"\t\n\r\x0c".contains(&b)) || b == 0x7f)
        .count();
    let utf8 = match std::str::from_utf8(sample) {
        Ok(_) => true,
        // A character cut by the sample's end is not evidence of binary.
        Err(e) => e.error_len().is_none(),
    };
    control * 4 > sample.len() || (control > 0 && !utf8)
}

/// The first bytes of `data` in hex, for messages about inputs that are not text.
pub fn hex_head(data: &[u8]) -> String {
    data.iter()
        .take(16)
        .map(|b| format!("{b:02x}"))
        .collect::<Vec<_>>()
        .join(" ")
}

/// The part files an input names, when it names several: every regular file of a directory
/// (those whose names start with `.` or `_`, such as checksums and success markers that batch
/// jobs leave beside their parts, are passed over), or the files matching a pattern with `*`,
/// `?` or `[...]` when no file has that name. Sorted by path, so the parts and their order do
/// not depend on the directory's listing order. `None` for one plain file (or standard input).
pub fn list_parts(path: &Path) -> Result<Option<Vec<PathBuf>>> {
    let shown = path.to_string_lossy();
    if shown == "-" {
        return Ok(None);
    }
    let mut parts = if path.is_dir() {
        let rd = std::fs::read_dir(path).map_err(|e| Error::io(path, "list", e))?;
        let mut v = Vec::new();
        for entry in rd {
            let entry = entry.map_err(|e| Error::io(path, "list", e))?;
            let name = entry.file_name();
            let name = name.to_string_lossy();
            if name.starts_with('.') || name.starts_with('_') {
                continue;
            }
            let p = entry.path();
            // Follows links, so a folder of links to parts reads like the parts.
            if p.is_file() {
                v.push(p);
            }
        }
        v
    } else if !path.exists() && shown.contains(['*', '?', '[']) {
        let found = glob::glob(&shown).map_err(|e| Error::Parameters {
            problem: format!("{shown}: not a usable file pattern ({e})"),
        })?;
        let mut v = Vec::new();
        for p in found {
            let p = p.map_err(|e| Error::io(e.path().to_path_buf(), "list", e.into()))?;
            if p.is_file() {
                v.push(p);
            }
        }
        v
    } else {
        return Ok(None);
    };
    if parts.is_empty() {
        return Err(Error::Empty {
            path: path.to_path_buf(),
            detail: if path.is_dir() {
                "the folder holds no part files (names starting with '.' or '_' are passed over)"
                    .into()
            } else {
                "no file matches the pattern".into()
            },
        });
    }
    parts.sort();
    Ok(Some(parts))
}

/// The bytes of one input, mapped or read, never modified.
pub struct InputBytes {
    /// The path as given (`-` for standard input).
    pub path: PathBuf,
    bytes: Backing,
}

enum Backing {
    Mapped(memmap2::Mmap),
    Owned(Vec<u8>),
}

impl InputBytes {
    /// Open `path` read-only and map it; `-` reads all of standard input into memory.
    pub fn open(path: &Path) -> Result<Self> {
        if path.as_os_str() == "-" {
            let mut buf = Vec::new();
            std::io::stdin()
                .lock()
                .read_to_end(&mut buf)
                .map_err(|e| Error::io("<stdin>", "read standard input", e))?;
            return Ok(InputBytes {
                path: PathBuf::from("<stdin>"),
                bytes: Backing::Owned(buf),
            });
        }
        let file = std::fs::File::open(path).map_err(|e| Error::io(path, "open", e))?;
        let meta = file.metadata().map_err(|e| Error::io(path, "stat", e))?;
        if meta.is_dir() {
            return Err(Error::io(
                path,
                "read",
                std::io::Error::other("it is a directory"),
            ));
        }
        if meta.len() == 0 {
            // Mapping an empty file fails on some systems; an empty buffer says the same.
            return Ok(InputBytes {
                path: path.to_path_buf(),
                bytes: Backing::Owned(Vec::new()),
            });
        }
        // SAFETY: the map is read-only. plumb never writes its inputs; if another process
        // truncates the file while it is mapped, reads fault (SIGBUS), which no file API can
        // prevent short of copying the whole input.
        let map = unsafe { memmap2::Mmap::map(&file) }.map_err(|e| Error::io(path, "map", e))?;
        #[cfg(unix)]
        {
            let _ = map.advise(memmap2::Advice::Sequential);
        }
        Ok(InputBytes {
            path: path.to_path_buf(),
            bytes: Backing::Mapped(map),
        })
    }

    /// Wrap bytes already in memory (tests, benchmarks, generated data).
    pub fn from_vec(path: impl Into<PathBuf>, bytes: Vec<u8>) -> Self {
        InputBytes {
            path: path.into(),
            bytes: Backing::Owned(bytes),
        }
    }

    /// The file map behind the bytes, if they are mapped (not read from a pipe).
    pub(crate) fn map(&self) -> Option<&memmap2::Mmap> {
        match &self.bytes {
            Backing::Mapped(m) => Some(m),
            Backing::Owned(_) => None,
        }
    }

    /// The bytes, as stored.
    pub fn bytes(&self) -> &[u8] {
        match &self.bytes {
            Backing::Mapped(m) => m,
            Backing::Owned(v) => v,
        }
    }

    /// Hand the bytes over as a read-only map (the store opener keeps it alive for zero-copy
    /// access). Bytes read from a pipe are copied into an anonymous map once.
    pub(crate) fn into_map(self) -> std::io::Result<memmap2::Mmap> {
        match self.bytes {
            Backing::Mapped(m) => Ok(m),
            Backing::Owned(v) => {
                let mut m = memmap2::MmapMut::map_anon(v.len().max(1))?;
                m[..v.len()].copy_from_slice(&v);
                let m = m.make_read_only()?;
                Ok(m)
            }
        }
    }
}

/// A newline-aligned piece of (decompressed) text.
pub struct TextChunk {
    /// Position in the stream of chunks.
    pub index: usize,
    /// Offset of the chunk's first byte in the decompressed text.
    pub byte_base: u64,
    /// Decoded text, ending at a line end (or the end of the input).
    pub bytes: Vec<u8>,
}

/// What went wrong while producing chunks.
#[derive(Debug)]
pub enum StreamFault {
    /// The compressed data is corrupt or truncated.
    Codec {
        /// What the decoder said.
        problem: String,
        /// Compressed byte offset where it failed.
        offset: u64,
    },
    /// No newline within the line-length limit; the overlong line starts the chunk `index`.
    LongLine {
        /// The chunk with the line.
        index: usize,
        /// Text offset where the chunk starts.
        byte_base: u64,
    },
}

/// Split decompressed data into newline-aligned chunks of about `target` bytes.
struct Stitcher {
    buf: Vec<u8>,
    target: usize,
    max_line: usize,
    index: usize,
    byte_base: u64,
}

impl Stitcher {
    fn new(target: usize, max_line: usize) -> Self {
        Stitcher {
            buf: Vec::with_capacity(target + 64 * 1024),
            target,
            max_line,
            index: 0,
            byte_base: 0,
        }
    }

    /// Emit every full chunk the buffer holds. Returns false when the consumer asked to stop.
    fn drain(
        &mut self,
        emit: &mut dyn FnMut(TextChunk) -> bool,
        at_end: bool,
    ) -> Result<bool, StreamFault> {
        let mut head = 0;
        let result = loop {
            let avail = self.buf.len() - head;
            if !(avail >= self.target || (at_end && avail > 0)) {
                break Ok(true);
            }
            // Cut at the last newline within the target size, or the first one after it.
            let rest = &self.buf[head..];
            let window = self.target.min(rest.len());
            let cut = memchr::memrchr(b'\n', &rest[..window])
                .map(|i| i + 1)
                .or_else(|| memchr::memchr(b'\n', &rest[window..]).map(|i| window + i + 1));
            let cut = match cut {
                Some(c) => c,
                None if at_end => avail,
                None if avail > self.max_line => {
                    break Err(StreamFault::LongLine {
                        index: self.index,
                        byte_base: self.byte_base,
                    });
                }
                None => break Ok(true),
            };
            let bytes = if head == 0 && avail - cut <= cut {
                // Hand the buffer over and keep the short remainder: one small copy.
                let tail = self.buf[cut..].to_vec();
                let mut b = std::mem::replace(&mut self.buf, tail);
                b.truncate(cut);
                b
            } else {
                head += cut;
                self.buf[head - cut..head].to_vec()
            };
            let chunk = TextChunk {
                index: self.index,
                byte_base: self.byte_base,
                bytes,
            };
            self.index += 1;
            self.byte_base += cut as u64;
            if !emit(chunk) {
                break Ok(false);
            }
        };
        if head > 0 {
            self.buf.drain(..head);
        }
        result
    }
}

/// Summary of a decode run.
#[derive(Debug, Default, Clone, Copy)]
pub struct DecodeInfo {
    /// zstd frames decoded.
    pub frames: u64,
    /// Bytes of text after decoding.
    pub text_bytes: u64,
}

/// Decode `data` and hand newline-aligned chunks to `emit` in order. `emit` returns false to stop
/// early. zstd files with several frames are decoded frame-parallel; single-frame zstd and gzip
/// stream on this thread. `consumed(a, b)` hears of each range of `data` decoded and no longer
/// needed (whole batches of frames), so a caller can drop its pages.
pub fn decode_chunks(
    data: &[u8],
    compression: Compression,
    parquet: Option<&ParquetPlan>,
    target: usize,
    max_line: usize,
    consumed: &dyn Fn(usize, usize),
    emit: &mut dyn FnMut(TextChunk) -> bool,
) -> Result<DecodeInfo, StreamFault> {
    let mut st = Stitcher::new(target, max_line);
    let mut info = DecodeInfo::default();
    match compression {
        Compression::None => {
            // Used for standard input and in-memory text: copy through the same stitcher.
            for piece in data.chunks(target.max(1)) {
                st.buf.extend_from_slice(piece);
                if !st.drain(emit, false)? {
                    return Ok(info);
                }
            }
        }
        Compression::Zstd => {
            let frames = zstd_frames_releasing(data, consumed)?;
            info.frames = frames.len() as u64;
            // Decoding touches each frame again only when its turn comes.
            consumed(0, data.len());
            if frames.len() == 1 {
                let (start, end) = frames[0];
                let dec =
                    zstd::stream::read::Decoder::with_buffer(&data[start..end]).map_err(|e| {
                        StreamFault::Codec {
                            problem: format!("unreadable ({e})"),
                            offset: start as u64,
                        }
                    })?;
                if !stream_into(dec, &mut st, emit, |e| StreamFault::Codec {
                    problem: format!("corrupt in the frame starting at byte {start} ({e})"),
                    offset: start as u64,
                })? {
                    return Ok(info);
                }
            } else {
                // Frames decode in parallel a few ahead of the one being stitched, in order.
                let threads = rayon::current_num_threads().max(1);
                let whole = in_order(
                    frames.len(),
                    threads + 1,
                    threads,
                    |i| {
                        let (s, e) = frames[i];
                        decode_zstd_frame(&data[s..e], s as u64)
                    },
                    |i, d| {
                        consumed(frames[i].0, frames[i].1);
                        st.buf.extend_from_slice(&d?);
                        st.drain(emit, false)
                    },
                )?;
                if !whole {
                    return Ok(info);
                }
            }
        }
        Compression::Parquet => {
            let Some(plan) = parquet else {
                return Err(StreamFault::Codec {
                    problem: "a Parquet source came without its column plan".into(),
                    offset: 0,
                });
            };
            // Row groups decode in parallel a few ahead of the one being stitched (as frames).
            let threads = rayon::current_num_threads().max(1);
            let whole = in_order(
                plan.row_groups(),
                threads + 1,
                threads,
                |rg| crate::read::parquet::render_row_group(data, plan, rg),
                |_, d| {
                    let text = d.map_err(|f| StreamFault::Codec {
                        problem: match f {
                            ParquetFault::Unreadable(p) | ParquetFault::Columns(p) => p,
                        },
                        offset: 0,
                    })?;
                    st.buf.extend_from_slice(&text);
                    st.drain(emit, false)
                },
            )?;
            if !whole {
                return Ok(info);
            }
        }
        Compression::Gzip => {
            let dec = flate2::bufread::MultiGzDecoder::new(data);
            info.frames = 1;
            if !stream_into(dec, &mut st, emit, |e| StreamFault::Codec {
                problem: if e.kind() == std::io::ErrorKind::UnexpectedEof {
                    "truncated (it ends inside a member)".into()
                } else {
                    format!("corrupt ({e})")
                },
                offset: data.len() as u64,
            })? {
                return Ok(info);
            }
        }
    }
    st.drain(emit, true)?;
    info.text_bytes = st.byte_base;
    Ok(info)
}

/// Run `work(i)` for `i` in `0..n` on `threads` scoped threads, never more than `window` past
/// the result `emit` takes next, and hand the results to `emit` in order on this thread. `emit`
/// returns false (or an error) to stop; work in flight then finishes and is dropped. Returns
/// whether every result was taken. Unlike decoding in fixed batches, no worker waits for the
/// slowest of a batch before starting on the next.
fn in_order<T: Send, E>(
    n: usize,
    window: usize,
    threads: usize,
    work: impl Fn(usize) -> T + Sync,
    mut emit: impl FnMut(usize, T) -> Result<bool, E>,
) -> Result<bool, E> {
    use std::collections::VecDeque;
    use std::sync::{Condvar, Mutex, MutexGuard};
    struct State<T> {
        /// Results from index `base` on (`None` while in flight).
        slots: VecDeque<Option<T>>,
        base: usize,
        /// Next index a worker claims.
        next: usize,
        stop: bool,
        /// A worker's panic, re-raised on the emitting thread.
        panic: Option<Box<dyn std::any::Any + Send>>,
    }
    let state = Mutex::new(State {
        slots: VecDeque::new(),
        base: 0,
        next: 0,
        stop: false,
        panic: None,
    });
    let changed = Condvar::new();
    // Nothing inside holds the lock across a panic, so a poisoned lock still guards sound state.
    let lock = || state.lock().unwrap_or_else(|e| e.into_inner());
    fn wait<'a, S>(cv: &Condvar, g: MutexGuard<'a, S>) -> MutexGuard<'a, S> {
        cv.wait(g).unwrap_or_else(|e| e.into_inner())
    }
    std::thread::scope(|s| {
        for _ in 0..threads.min(n) {
            s.spawn(|| {
                loop {
                    let i = {
                        let mut g = lock();
                        loop {
                            if g.stop || g.next >= n {
                                return;
                            }
                            if g.next < g.base + window.max(1) {
                                break;
                            }
                            g = wait(&changed, g);
                        }
                        g.next += 1;
                        g.next - 1
                    };
                    let r = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| work(i)));
                    let mut g = lock();
                    match r {
                        Ok(r) => {
                            let k = i - g.base;
                            while g.slots.len() <= k {
                                g.slots.push_back(None);
                            }
                            g.slots[k] = Some(r);
                        }
                        Err(p) => {
                            g.stop = true;
                            g.panic = Some(p);
                        }
                    }
                    changed.notify_all();
                }
            });
        }
        for i in 0..n {
            let r = {
                let mut g = lock();
                loop {
                    if let Some(p) = g.panic.take() {
                        drop(g);
                        std::panic::resume_unwind(p);
                    }
                    if matches!(g.slots.front(), Some(Some(_))) {
                        break;
                    }
                    g = wait(&changed, g);
                }
                let Some(Some(r)) = g.slots.pop_front() else {
                    unreachable!("the loop above waits until the front result is in");
                };
                g.base += 1;
                changed.notify_all();
                r
            };
            let go_on = emit(i, r);
            if !matches!(go_on, Ok(true)) {
                lock().stop = true;
                changed.notify_all();
                return go_on;
            }
        }
        Ok(true)
    })
}

fn stream_into(
    mut r: impl Read,
    st: &mut Stitcher,
    emit: &mut dyn FnMut(TextChunk) -> bool,
    fault: impl Fn(std::io::Error) -> StreamFault,
) -> Result<bool, StreamFault> {
    loop {
        let len = st.buf.len();
        let want = (st.target + 64 * 1024).saturating_sub(len).max(64 * 1024);
        st.buf.resize(len + want, 0);
        let got = match r.read(&mut st.buf[len..]) {
            Ok(n) => n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => 0,
            Err(e) => {
                st.buf.truncate(len);
                return Err(fault(e));
            }
        };
        st.buf.truncate(len + got);
        if got == 0 {
            return Ok(true);
        }
        if !st.drain(emit, false)? {
            return Ok(false);
        }
    }
}

/// Byte ranges of the zstd frames in `data`, checked for truncation before anything is decoded.
pub fn zstd_frames(data: &[u8]) -> Result<Vec<(usize, usize)>, StreamFault> {
    zstd_frames_releasing(data, &|_, _| {})
}

/// [`zstd_frames`], telling `consumed` of every 64 MiB walked: finding a frame's end reads each
/// of its block headers, which would otherwise leave much of a mapped file resident.
fn zstd_frames_releasing(
    data: &[u8],
    consumed: &dyn Fn(usize, usize),
) -> Result<Vec<(usize, usize)>, StreamFault> {
    const STEP: usize = 64 << 20;
    let mut frames = Vec::new();
    let mut pos = 0;
    let mut released = 0;
    while pos < data.len() {
        if pos - released >= STEP {
            consumed(released, pos);
            released = pos;
        }
        let rest = &data[pos..];
        let len = zstd::zstd_safe::find_frame_compressed_size(rest).map_err(|code| {
            let name = zstd::zstd_safe::get_error_name(code);
            if name.contains("Src size is incorrect") || rest.len() < 18 {
                StreamFault::Codec {
                    problem: format!(
                        "truncated: the frame starting at byte {pos} is cut off at the end of \
                         the file"
                    ),
                    offset: data.len() as u64,
                }
            } else {
                StreamFault::Codec {
                    problem: format!("corrupt in the frame starting at byte {pos} ({name})"),
                    offset: pos as u64,
                }
            }
        })?;
        // Skippable frames carry no data.
        if !(rest.len() >= 4 && rest[1..4] == [0x2A, 0x4D, 0x18] && rest[0] & 0xF0 == 0x50) {
            frames.push((pos, pos + len));
        }
        pos += len;
    }
    if frames.is_empty() {
        frames.push((0, 0));
    }
    Ok(frames)
}

fn decode_zstd_frame(frame: &[u8], offset: u64) -> Result<Vec<u8>, StreamFault> {
    let mut out = Vec::new();
    if let Ok(Some(size)) = zstd::zstd_safe::get_frame_content_size(frame) {
        // The declared size is only a hint; never trust it with an unbounded allocation.
        out.reserve(size.min(1 << 30) as usize);
    }
    if frame.is_empty() {
        return Ok(out);
    }
    let mut dec =
        zstd::stream::read::Decoder::with_buffer(frame).map_err(|e| StreamFault::Codec {
            problem: format!("unreadable ({e})"),
            offset,
        })?;
    dec.read_to_end(&mut out).map_err(|e| StreamFault::Codec {
        problem: format!("corrupt in the frame starting at byte {offset} ({e})"),
        offset,
    })?;
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn collect(data: &[u8], c: Compression, target: usize) -> Vec<Vec<u8>> {
        let mut out = Vec::new();
        decode_chunks(data, c, None, target, 1 << 20, &|_, _| {}, &mut |ch| {
            out.push(ch.bytes);
            true
        })
        .unwrap();
        out
    }

    #[test]
    fn chunks_are_line_aligned_and_complete() {
        let text: Vec<u8> = (0..5000)
            .flat_map(|i| format!("{i} {}\n", i + 1).into_bytes())
            .collect();
        let z = zstd::encode_all(&text[..], 3).unwrap();
        for (data, c) in [(&text[..], Compression::None), (&z[..], Compression::Zstd)] {
            let chunks = collect(data, c, 1000);
            assert!(chunks.len() > 10);
            assert!(chunks.iter().all(|c| c.ends_with(b"\n")));
            assert_eq!(chunks.concat(), text);
        }
    }

    #[test]
    fn multi_frame_zstd() {
        let a = zstd::encode_all(&b"1 2\n3 "[..], 1).unwrap();
        let b = zstd::encode_all(&b"4\n5 6"[..], 1).unwrap();
        let both = [a, b].concat();
        assert_eq!(zstd_frames(&both).unwrap().len(), 2);
        assert_eq!(
            collect(&both, Compression::Zstd, 2).concat(),
            b"1 2\n3 4\n5 6"
        );
    }

    #[test]
    fn truncated_zstd_is_reported() {
        let text: Vec<u8> = (0..1000)
            .flat_map(|i| format!("{i} 7\n").into_bytes())
            .collect();
        let z = zstd::encode_all(&text[..], 3).unwrap();
        let cut = &z[..z.len() - 5];
        let err = decode_chunks(
            cut,
            Compression::Zstd,
            None,
            1000,
            1 << 20,
            &|_, _| {},
            &mut |_| true,
        )
        .unwrap_err();
        assert!(
            matches!(err, StreamFault::Codec { ref problem, .. } if problem.contains("truncated")),
            "{err:?}"
        );
    }

    #[test]
    fn in_order_hands_results_over_in_order_within_the_window() {
        use std::sync::atomic::{AtomicUsize, Ordering::SeqCst};
        for (n, window, threads) in [(0, 4, 2), (1, 1, 1), (50, 1, 3), (200, 4, 2), (37, 8, 5)] {
            let running = AtomicUsize::new(0);
            let most = AtomicUsize::new(0);
            let taken = AtomicUsize::new(0);
            let mut seen = Vec::new();
            let whole = in_order::<usize, ()>(
                n,
                window,
                threads,
                |i| {
                    let now = running.fetch_add(1, SeqCst) + 1;
                    most.fetch_max(now, SeqCst);
                    // Later items finish first now and then, to exercise reordering.
                    if i % 7 == 0 {
                        std::thread::sleep(std::time::Duration::from_millis(1));
                    }
                    // Never more than `window` ahead of what was taken (plus the one taken
                    // off the queue and not yet handed over).
                    assert!(
                        i < taken.load(SeqCst) + 1 + window.max(1),
                        "{i} ran too far ahead"
                    );
                    running.fetch_sub(1, SeqCst);
                    i * i
                },
                |i, r| {
                    assert_eq!(r, i * i);
                    seen.push(i);
                    taken.fetch_add(1, SeqCst);
                    Ok(true)
                },
            );
            assert_eq!(whole, Ok(true));
            assert_eq!(seen, (0..n).collect::<Vec<_>>());
            assert!(most.load(SeqCst) <= threads.min(window.max(1)).max(1));
        }
        // Stopping early, and an error from `emit`, end the run.
        let mut got = 0;
        assert_eq!(
            in_order::<usize, ()>(
                100,
                4,
                2,
                |i| i,
                |_, _| {
                    got += 1;
                    Ok(got < 10)
                }
            ),
            Ok(false)
        );
        assert_eq!(got, 10);
        assert_eq!(
            in_order(
                100,
                4,
                2,
                |i| i,
                |i, _| if i == 5 { Err(i) } else { Ok(true) }
            ),
            Err(5)
        );
    }

    #[test]
    fn in_order_passes_a_workers_panic_on() {
        let r = std::panic::catch_unwind(|| {
            in_order::<usize, ()>(
                20,
                4,
                2,
                |i| if i == 3 { panic!("boom") } else { i },
                |_, _| Ok(true),
            )
        });
        assert!(r.is_err());
    }

    #[test]
    fn sniffing() {
        assert_eq!(sniff(b"1 2\n"), Sniffed::Text);
        assert_eq!(
            sniff(&zstd::encode_all(&b"x"[..], 1).unwrap()),
            Sniffed::Compressed(Compression::Zstd)
        );
        assert_eq!(
            sniff(b"\x1f\x8b\x08"),
            Sniffed::Compressed(Compression::Gzip)
        );
        assert_eq!(sniff(b"\xfd7zXZ\x00"), Sniffed::Unsupported("xz"));
        assert_eq!(
            sniff(b"PAR1\x15\x04 ... PAR1"),
            Sniffed::Compressed(Compression::Parquet)
        );
        assert_eq!(sniff(b"PAR1 PAR2\n"), Sniffed::Text);
    }
}

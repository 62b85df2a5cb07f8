//! The store file: a built graph saved so it reopens in place (memory-mapped, no copy).
//!
//! Layout, all little-endian, every section starting on a 64-byte boundary:
//!
//! | bytes   | field |
//! |---------|-------|
//! | 0..8    | magic `\x89PLB\r\n\x1a\n` |
//! | 8..12   | format version (1; 2 when the graph is directed) |
//! | 12..16  | header length (128) |
//! | 16..20  | flags (bit 0: directed; version 2 only) |
//! | 20..24  | id kind: 0 range, 1 integer table, 2 text |
//! | 24..32  | nodes n |
//! | 32..40  | adjacency entries (2 x edges) |
//! | 40..48  | first id (id kind 0) |
//! | 48..104 | byte positions of: offsets, targets, ids, id bytes, id bytes length, intake, intake length |
//! | 104..112| file length |
//! | 112..120| checksum |
//! | 120..128| byte position of the directions (version 2), else zero |
//!
//! Sections: offsets `[u64; n+1]`, targets `[u32; 2m]`, ids (`[u64; n]` for an integer table,
//! `[u64; n+1]` offsets into the id bytes for text), id bytes, the intake report as JSON, and
//! for a directed graph the directions `[u8; 2m]` (each entry's flags: 1 out, 2 in, 3 both).
//! The checksum is xxh3-64 of the first 112 header bytes (version 2: and bytes 120..128)
//! followed by the xxh3-64 digests of the body (everything after the header) cut into 16 MiB
//! blocks, so it is computed in parallel. Undirected graphs are written as version 1, byte for
//! byte as before, so older builds still read them; they refuse version 2 by its number.

use std::io::{Seek, SeekFrom, Write};
use std::path::Path;
use std::sync::Arc;

use rayon::prelude::*;
use xxhash_rust::xxh3::xxh3_64;

use crate::error::{Error, Result};
use crate::outfile::AtomicFile;
use crate::read::source::InputBytes;
use crate::store::csr::Csr;
use crate::store::graph::{Graph, NodeIds};
use crate::store::intake::Intake;
use crate::store::slab::Slab;

#[cfg(target_endian = "big")]
compile_error!(
    "the store format is little-endian and read in place; big-endian hosts are not supported"
);

pub(crate) const MAGIC: &[u8; 8] = crate::read::magic::STORE;
/// The newest version of the store layout this build reads (and writes for directed graphs;
/// undirected ones are written as version 1).
pub const VERSION: u32 = 2;
/// Header flag: the store keeps each entry's direction.
const DIRECTED: u32 = 1;
const HEADER: usize = 128;
const ALIGN: u64 = 64;
const BLOCK: usize = 16 << 20;

/// Header fields after the magic.
#[derive(Debug, Clone, Copy, Default)]
struct Header {
    version: u32,
    header_len: u32,
    flags: u32,
    id_kind: u32,
    n: u64,
    entries: u64,
    id_first: u64,
    offsets_at: u64,
    targets_at: u64,
    ids_at: u64,
    id_bytes_at: u64,
    id_bytes_len: u64,
    intake_at: u64,
    intake_len: u64,
    file_len: u64,
    checksum: u64,
    directions_at: u64,
}

impl Header {
    fn encode(&self) -> [u8; HEADER] {
        let mut b = [0u8; HEADER];
        b[..8].copy_from_slice(MAGIC);
        let words32 = [self.version, self.header_len, self.flags, self.id_kind];
        for (i, w) in words32.iter().enumerate() {
            b[8 + 4 * i..12 + 4 * i].copy_from_slice(&w.to_le_bytes());
        }
        let words64 = [
            self.n,
            self.entries,
            self.id_first,
            self.offsets_at,
            self.targets_at,
            self.ids_at,
            self.id_bytes_at,
            self.id_bytes_len,
            self.intake_at,
            self.intake_len,
            self.file_len,
            self.checksum,
            self.directions_at,
        ];
        for (i, w) in words64.iter().enumerate() {
            b[24 + 8 * i..32 + 8 * i].copy_from_slice(&w.to_le_bytes());
        }
        b
    }

    fn decode(b: &[u8]) -> Header {
        let u32_at = |i: usize| u32::from_le_bytes(b[i..i + 4].try_into().unwrap());
        let u64_at = |i: usize| u64::from_le_bytes(b[i..i + 8].try_into().unwrap());
        Header {
            version: u32_at(8),
            header_len: u32_at(12),
            flags: u32_at(16),
            id_kind: u32_at(20),
            n: u64_at(24),
            entries: u64_at(32),
            id_first: u64_at(40),
            offsets_at: u64_at(48),
            targets_at: u64_at(56),
            ids_at: u64_at(64),
            id_bytes_at: u64_at(72),
            id_bytes_len: u64_at(80),
            intake_at: u64_at(88),
            intake_len: u64_at(96),
            file_len: u64_at(104),
            checksum: u64_at(112),
            directions_at: u64_at(120),
        }
    }
}

fn checksum(header: &[u8], body: &[u8]) -> u64 {
    let digests: Vec<u64> = body.par_chunks(BLOCK).map(xxh3_64).collect();
    seal(header, &digests)
}

/// The checksum from the header's first 112 bytes (version 2: and bytes 120..128, the
/// directions' position) and the body's block digests, in order.
fn seal(header: &[u8], digests: &[u64]) -> u64 {
    let mut all = header[..112].to_vec();
    if u32::from_le_bytes(header[8..12].try_into().unwrap()) >= 2 {
        all.extend_from_slice(&header[120..128]);
    }
    all.extend(digests.iter().flat_map(|d| d.to_le_bytes()));
    xxh3_64(&all)
}

/// The checksum of a store file as written: blocks read back in parallel with positioned reads
/// (a map would count the whole file in the resident set while it is hashed).
fn file_checksum(file: &std::fs::File, header: &[u8], len: u64) -> std::io::Result<u64> {
    let body = len.saturating_sub(HEADER as u64);
    let blocks = body.div_ceil(BLOCK as u64);
    let digests: Vec<std::io::Result<u64>> = (0..blocks)
        .into_par_iter()
        .map_init(
            || vec![0u8; BLOCK],
            |buf, i| {
                let at = HEADER as u64 + i * BLOCK as u64;
                let k = (len - at).min(BLOCK as u64) as usize;
                read_at(file, &mut buf[..k], at)?;
                Ok(xxh3_64(&buf[..k]))
            },
        )
        .collect();
    let digests = digests.into_iter().collect::<std::io::Result<Vec<u64>>>()?;
    Ok(seal(header, &digests))
}

#[cfg(unix)]
fn read_at(file: &std::fs::File, buf: &mut [u8], at: u64) -> std::io::Result<()> {
    std::os::unix::fs::FileExt::read_exact_at(file, buf, at)
}

#[cfg(windows)]
fn read_at(file: &std::fs::File, mut buf: &mut [u8], mut at: u64) -> std::io::Result<()> {
    while !buf.is_empty() {
        let k = std::os::windows::fs::FileExt::seek_read(file, buf, at)?;
        if k == 0 {
            return Err(std::io::ErrorKind::UnexpectedEof.into());
        }
        buf = &mut buf[k..];
        at += k as u64;
    }
    Ok(())
}

fn align(pos: u64) -> u64 {
    pos.next_multiple_of(ALIGN)
}

/// Byte position of the targets section in a store of `n` nodes: right after the offsets.
fn targets_at(n: u64) -> u64 {
    align(HEADER as u64 + (n + 1) * 8)
}

/// Writes a store file whose targets arrive first, as a stream (from memory, or from the
/// merge of the build on disk), and whose offsets, ids and intake follow once known. Both
/// builds go through it, so their files agree byte for byte.
pub(crate) struct StoreWriter {
    file: AtomicFile,
    path: std::path::PathBuf,
    n: u64,
}

impl StoreWriter {
    /// Start a store of `n` nodes at `dest` (atomically: nothing appears there before
    /// [`StoreWriter::finish`]).
    pub(crate) fn create(dest: &Path, n: u64) -> Result<Self> {
        let mut file = AtomicFile::create(dest)?;
        file.writer()
            .seek(SeekFrom::Start(targets_at(n)))
            .map_err(|e| file.fail(e))?;
        Ok(StoreWriter {
            file,
            path: dest.to_path_buf(),
            n,
        })
    }

    /// Where the targets go, in order.
    pub(crate) fn targets(&mut self) -> &mut (dyn Write + Send) {
        self.file.writer()
    }

    /// Map a write error to one naming the store.
    pub(crate) fn fail(&self, e: std::io::Error) -> Error {
        self.file.fail(e)
    }

    /// Write the offsets (whose last entry is the number of targets written), the ids and the
    /// intake, then the header with its checksum (read back from the file), and move the file
    /// into place. Returns the file size.
    pub(crate) fn finish(
        self,
        offsets: &[u64],
        ids: &NodeIds,
        intake: &Intake,
        directions: Option<&[u8]>,
    ) -> Result<u64> {
        let StoreWriter { mut file, path, n } = self;
        let intake = serde_json::to_vec(intake).map_err(|e| Error::Output {
            path: path.clone(),
            problem: format!("cannot encode the intake report: {e}"),
        })?;
        debug_assert_eq!(offsets.len() as u64, n + 1);
        let entries = offsets.last().copied().unwrap_or(0);
        let mut h = Header {
            version: if directions.is_some() { 2 } else { 1 },
            flags: if directions.is_some() { DIRECTED } else { 0 },
            header_len: HEADER as u32,
            n,
            entries,
            offsets_at: HEADER as u64,
            targets_at: targets_at(n),
            ..Header::default()
        };
        let w = file.writer();
        let result = (|| -> std::io::Result<()> {
            // Sections are padded with explicit zeros (not holes) up to each boundary.
            let mut pos = h.targets_at + entries * 4;
            let pad_to = |w: &mut std::io::BufWriter<std::fs::File>, pos: &mut u64| {
                let next = align(*pos);
                w.write_all(&vec![0u8; (next - *pos) as usize])?;
                *pos = next;
                Ok::<u64, std::io::Error>(next)
            };
            h.ids_at = pad_to(w, &mut pos)?;
            let put = |w: &mut std::io::BufWriter<std::fs::File>, b: &[u8], pos: &mut u64| {
                *pos += b.len() as u64;
                w.write_all(b)
            };
            match ids {
                NodeIds::Range { first, .. } => {
                    h.id_kind = 0;
                    h.id_first = *first;
                }
                NodeIds::Ints(v) => {
                    h.id_kind = 1;
                    put(w, bytemuck::cast_slice(v), &mut pos)?;
                }
                NodeIds::Text { offsets, bytes } => {
                    h.id_kind = 2;
                    put(w, bytemuck::cast_slice(offsets), &mut pos)?;
                    h.id_bytes_at = pad_to(w, &mut pos)?;
                    h.id_bytes_len = bytes.len() as u64;
                    put(w, bytes, &mut pos)?;
                }
            }
            h.intake_at = pad_to(w, &mut pos)?;
            h.intake_len = intake.len() as u64;
            put(w, &intake, &mut pos)?;
            if let Some(d) = directions {
                h.directions_at = pad_to(w, &mut pos)?;
                put(w, d, &mut pos)?;
            }
            h.file_len = pos;
            w.seek(SeekFrom::Start(0))?;
            w.write_all(&[0u8; HEADER])?;
            w.write_all(bytemuck::cast_slice(offsets))?;
            let gap = h.targets_at - (HEADER as u64 + offsets.len() as u64 * 8);
            w.write_all(&vec![0u8; gap as usize])?;
            Ok(())
        })();
        result.map_err(|e| file.fail(e))?;
        let body_digest = {
            let f = file.flushed().map_err(|e| Error::io(&path, "write", e))?;
            let len = f
                .metadata()
                .map_err(|e| Error::io(&path, "write", e))?
                .len();
            if len != h.file_len {
                return Err(Error::Output {
                    path: path.clone(),
                    problem: format!(
                        "the store came out {len} bytes long, not the {} its sections take",
                        h.file_len
                    ),
                });
            }
            file_checksum(f, &h.encode(), len).map_err(|e| Error::io(&path, "read back", e))?
        };
        h.checksum = body_digest;
        let w = file.writer();
        w.seek(SeekFrom::Start(0))
            .and_then(|_| w.write_all(&h.encode()))
            .map_err(|e| Error::io(&path, "write", e))?;
        file.commit()?;
        Ok(h.file_len)
    }
}

/// Save `graph` to `path` atomically. Returns the file size.
pub fn write(graph: &Graph, path: &Path) -> Result<u64> {
    let mut w = StoreWriter::create(path, graph.csr.node_count() as u64)?;
    w.targets()
        .write_all(bytemuck::cast_slice(graph.csr.targets()))
        .map_err(|e| w.fail(e))?;
    w.finish(
        graph.csr.offsets(),
        &graph.ids,
        &graph.intake,
        graph.directions.as_deref(),
    )
}

/// Open a store file in place.
pub fn open(path: &Path) -> Result<Graph> {
    open_input(InputBytes::open(path)?)
}

/// Open a store this process has just written and checksummed (the build on disk), skipping
/// the checksum and the scan of every neighbour index, which would bring the whole file into
/// the resident set; the merge that wrote it checked every index. The header and offsets are
/// still checked.
pub(crate) fn open_fresh(path: &Path) -> Result<Graph> {
    let input = InputBytes::open(path)?;
    let len = input.bytes().len();
    let map = input.into_map().map_err(|e| Error::io(path, "map", e))?;
    open_with(path, Arc::new(map), len, false)
}

/// Open store bytes already opened (mapped files are used in place; standard input is copied
/// into an anonymous map first).
pub fn open_input(input: InputBytes) -> Result<Graph> {
    let path = input.path.clone();
    let len = input.bytes().len();
    // An anonymous map (for piped bytes) may be longer than `len`; only `len` bytes count.
    let map = input.into_map().map_err(|e| Error::io(&path, "map", e))?;
    open_with(&path, Arc::new(map), len, true)
}

fn open_with(path: &Path, map: Arc<memmap2::Mmap>, len: usize, verify: bool) -> Result<Graph> {
    let bad = |problem: String| Error::Store {
        path: path.to_path_buf(),
        problem,
    };
    let data: &[u8] = &map[..len];
    if data.len() < HEADER || &data[..8] != MAGIC {
        return Err(bad(format!(
            "too short or wrong magic ({} bytes; a store starts with a {HEADER}-byte header)",
            data.len()
        )));
    }
    let h = Header::decode(data);
    if h.version > VERSION {
        return Err(bad(format!(
            "written by a newer plumb (format version {}); this build reads version {VERSION}",
            h.version
        )));
    }
    let flags_allowed = if h.version >= 2 { DIRECTED } else { 0 };
    if h.version == 0 || h.header_len as usize != HEADER || h.flags & !flags_allowed != 0 {
        return Err(bad("the header is corrupt".into()));
    }
    if h.file_len != data.len() as u64 {
        return Err(bad(format!(
            "the header says {} bytes but the file has {} ({})",
            h.file_len,
            data.len(),
            if (data.len() as u64) < h.file_len {
                "truncated"
            } else {
                "trailing bytes"
            }
        )));
    }
    if verify && checksum(&data[..HEADER], &data[HEADER..]) != h.checksum {
        return Err(bad(
            "checksum mismatch: the file is corrupt (re-create it with `plumb pack`)".into(),
        ));
    }
    // The checksum guards against accidents; the checks below make a crafted file unable to
    // cause out-of-bounds reads later.
    if h.n > crate::store::ids::MAX_NODES {
        return Err(bad(format!("claims {} nodes", h.n)));
    }
    let n = h.n as usize;
    let section = |what: &str, at: u64, len: u64, size: u64| -> Result<(usize, usize)> {
        len.checked_mul(size)
            .and_then(|b| at.checked_add(b))
            .filter(|&end| end <= h.file_len && at >= HEADER as u64)
            .ok_or_else(|| bad(format!("the {what} section lies outside the file")))?;
        Ok((at as usize, len as usize))
    };
    let (at, len) = section("offsets", h.offsets_at, h.n + 1, 8)?;
    let offsets: Slab<u64> =
        Slab::mapped(&map, at, len).ok_or_else(|| bad("misaligned offsets".into()))?;
    let (at, len) = section("targets", h.targets_at, h.entries, 4)?;
    let targets: Slab<u32> =
        Slab::mapped(&map, at, len).ok_or_else(|| bad("misaligned targets".into()))?;
    check_offsets(&offsets, h.entries).map_err(&bad)?;
    if verify && targets.par_iter().any(|&t| t as u64 >= h.n) {
        return Err(bad("a neighbour index is out of range".into()));
    }
    let ids = match h.id_kind {
        0 => {
            // The last id is first + n - 1, which may be 2^64 - 1 itself.
            if h.n > 0 && h.id_first.checked_add(h.n - 1).is_none() {
                return Err(bad("the id range overflows".into()));
            }
            NodeIds::Range {
                first: h.id_first,
                len: n,
            }
        }
        1 => {
            let (at, len) = section("ids", h.ids_at, h.n, 8)?;
            NodeIds::Ints(Slab::mapped(&map, at, len).ok_or_else(|| bad("misaligned ids".into()))?)
        }
        2 => {
            let (at, len) = section("ids", h.ids_at, h.n + 1, 8)?;
            let offs: Slab<u64> =
                Slab::mapped(&map, at, len).ok_or_else(|| bad("misaligned ids".into()))?;
            check_offsets(&offs, h.id_bytes_len).map_err(&bad)?;
            let (at, len) = section("id bytes", h.id_bytes_at, h.id_bytes_len, 1)?;
            let bytes = Slab::mapped(&map, at, len).ok_or_else(|| bad("bad id bytes".into()))?;
            NodeIds::Text {
                offsets: offs,
                bytes,
            }
        }
        k => return Err(bad(format!("unknown id kind {k}"))),
    };
    let directions = if h.flags & DIRECTED != 0 {
        let (at, len) = section("directions", h.directions_at, h.entries, 1)?;
        let d: Slab<u8> =
            Slab::mapped(&map, at, len).ok_or_else(|| bad("bad directions".into()))?;
        if verify && d.par_iter().any(|&f| f == 0 || f > 3) {
            return Err(bad("a direction flag is not out, in or both".into()));
        }
        Some(d)
    } else {
        None
    };
    let (at, len) = section("intake", h.intake_at, h.intake_len, 1)?;
    let mut intake: Intake = serde_json::from_slice(&data[at..at + len])
        .map_err(|e| bad(format!("the intake report is unreadable: {e}")))?;
    // The input now is the store file; the text it was packed from is kept apart.
    intake.packed_from = Some(std::mem::replace(
        &mut intake.source,
        path.display().to_string(),
    ));
    Ok(Graph {
        csr: Csr::from_parts(offsets, targets),
        ids,
        intake,
        directions,
    })
}

fn check_offsets(o: &[u64], end: u64) -> Result<(), String> {
    if o.first() != Some(&0) || o.last() != Some(&end) {
        return Err("offsets do not span their array".into());
    }
    if o.par_windows(2).any(|w| w[0] > w[1]) {
        return Err("offsets decrease".into());
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A store whose header was edited, then resealed with a valid checksum: the structural
    /// checks must still refuse it.
    fn tampered(edit: impl Fn(&mut Header)) -> String {
        let text = b"1 2\n2 3\n3 1\n".to_vec();
        let g = crate::store::load::load_input(
            InputBytes::from_vec("t", text),
            &crate::store::load::LoadOptions::default(),
            &crate::progress::Quiet,
        )
        .unwrap();
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("s.plumb");
        write(&g, &p).unwrap();
        let mut bytes = std::fs::read(&p).unwrap();
        let mut h = Header::decode(&bytes);
        edit(&mut h);
        bytes[..HEADER].copy_from_slice(&h.encode());
        h.checksum = checksum(&bytes[..HEADER], &bytes[HEADER..]);
        bytes[..HEADER].copy_from_slice(&h.encode());
        open_input(InputBytes::from_vec("t", bytes))
            .unwrap_err()
            .to_string()
    }

    #[test]
    fn header_claims_beyond_the_file_are_refused() {
        assert!(tampered(|h| h.n = 1 << 31).contains("outside the file"));
        assert!(tampered(|h| h.entries = u64::MAX / 2).contains("outside the file"));
        assert!(tampered(|h| h.intake_len = 1 << 40).contains("outside the file"));
        assert!(tampered(|h| h.n = u64::MAX).contains("claims"));
        assert!(tampered(|h| h.id_kind = 7).contains("unknown id kind"));
        assert!(tampered(|h| h.offsets_at = 131).contains("misaligned"));
        assert!(tampered(|h| h.n = 2).contains("offsets do not span"));
    }
}

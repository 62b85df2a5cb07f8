//! Atomic output files: written to a temporary file beside the destination, synced, then
//! renamed over it, so a reader never sees half a file and a crash leaves the old one intact.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use crate::error::{Error, Result};

pub struct AtomicFile {
    dest: PathBuf,
    tmp: PathBuf,
    out: Option<BufWriter<File>>,
}

impl AtomicFile {
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
        let file = File::create(&tmp).map_err(|e| Error::io(&tmp, "create", e))?;
        Ok(AtomicFile {
            dest: dest.to_path_buf(),
            tmp,
            out: Some(BufWriter::with_capacity(1 << 20, file)),
        })
    }

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
        Ok(())
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
        if self.out.is_some() {
            self.out = None;
            let _ = std::fs::remove_file(&self.tmp);
        }
    }
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

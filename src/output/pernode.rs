//! The per-node table: one TSV row per node in the user's ids, written atomically; zstd
//! (multi-frame) when the file name ends in `.zst`.

use std::io::Write;
use std::path::Path;

use crate::error::Result;
use crate::outfile::{AtomicFile, write_zstd_frames};
use crate::profile::NodeTable;
use crate::store::graph::Graph;

/// The per-node table's header line.
pub const HEADER: &str = "id\tdegree\ttriangles\tclustering\tcomponent\teccentricity\n";

/// Render the table as TSV text. Clustering has 6 decimals; a figure that was not computed
/// (eccentricity beyond the diameter search, triangles when clustering was estimated) is empty.
pub fn render(g: &Graph, t: &NodeTable) -> Vec<u8> {
    let n = g.node_count();
    let mut out = Vec::with_capacity(n * 32 + HEADER.len());
    out.extend_from_slice(HEADER.as_bytes());
    for v in 0..n as u32 {
        out.extend_from_slice(&g.ids.label_bytes(v));
        let i = v as usize;
        let _ = write!(out, "\t{}\t", g.csr.degree(v));
        if let (Some(tri), Some(c)) = (&t.triangles, &t.clustering) {
            let _ = write!(out, "{}\t{:.6}", tri[i], c[i]);
        } else {
            out.push(b'\t');
        }
        let _ = write!(out, "\t{}\t", t.component[i]);
        if let Some(e) = t.eccentricity[i] {
            let _ = write!(out, "{e}");
        }
        out.push(b'\n');
    }
    out
}

/// Write the table to `path` (zstd when it ends in `.zst`).
pub fn write(g: &Graph, t: &NodeTable, path: &Path) -> Result<()> {
    let text = render(g, t);
    if path.extension().is_some_and(|e| e == "zst") {
        write_zstd_frames(path, &text, 3, 4 << 20)?;
    } else {
        let mut f = AtomicFile::create(path)?;
        f.write_all(&text).map_err(|e| f.fail(e))?;
        f.commit()?;
    }
    Ok(())
}

//! Reading: from the bytes of a file to parsed lines. Owns the magic bytes of every format, the
//! sources (memory maps, standard input, zstd and gzip decoders), the edge-line and Matrix Market
//! grammars (pure functions over byte slices, no I/O) and the chunk scanner that applies them.
//! Uses only `error` and `progress`.

/// Choosing the two id columns of a delimited export.
pub mod columns;
pub(crate) mod edgeline;
pub(crate) mod magic;
pub(crate) mod mtx;
/// Parquet files' id columns.
pub mod parquet;
pub(crate) mod pieces;
/// The chunk scanner, public for the fuzz targets only (feature `reference`).
#[cfg(feature = "reference")]
pub mod scan;
#[cfg(not(feature = "reference"))]
pub(crate) mod scan;
pub mod source;

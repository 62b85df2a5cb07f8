//! Reading: from the bytes of a file to parsed lines. Owns the magic bytes of every format, the
//! sources (memory maps, standard input, zstd and gzip decoders), the edge-line and Matrix Market
//! grammars (pure functions over byte slices, no I/O) and the chunk scanner that applies them.
//! Uses only `error` and `progress`.

pub mod edgeline;
pub(crate) mod magic;
pub mod mtx;
pub mod pieces;
pub mod scan;
pub mod source;

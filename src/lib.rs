//! plumb: structure profiles of very large undirected networks, straight from edge-list dumps.
//!
//! The library holds every algorithm; the `plumb` binary only parses arguments and presents.
//! Start with [`ingest::load`], which reads an edge file (plain, zstd or gzip; edge list or
//! Matrix Market) or a store file into a [`Graph`].

pub mod csr;
pub mod demo;
pub mod error;
pub mod graph;
pub mod ingest;
pub mod input;
pub mod intake;
pub mod limits;
pub mod outfile;
pub mod progress;
pub mod slab;
pub mod store;

pub use error::{Error, Result};
pub use graph::Graph;

//! plumb: structure profiles of very large undirected networks, straight from edge-list dumps.
//!
//! The library holds every algorithm; the `plumb` binary only parses arguments and presents.
//! Start with [`ingest::load`], which reads an edge file (plain, zstd or gzip; edge list or
//! Matrix Market) or a store file into a [`Graph`].

pub mod bfs;
pub mod clustering;
pub mod components;
pub mod csr;
pub mod degrees;
pub mod demo;
pub mod diameter;
pub mod distances;
pub mod drift;
pub mod error;
pub mod estimate;
pub mod figure;
pub mod generate;
pub mod graph;
pub mod history;
pub mod html;
pub mod ingest;
pub mod input;
pub mod intake;
pub mod limits;
pub mod numeric;
pub mod outfile;
pub mod pernode;
pub mod plan;
pub mod profile;
pub mod progress;
pub mod randomize;
pub mod report;
pub mod sketch;
pub mod slab;
pub mod smallworld;
pub mod store;
pub mod svg;
pub mod sweep;
pub mod trend;
pub mod triangles;

pub use error::{Error, Result};
pub use graph::Graph;

//! plumb: structure profiles of very large undirected networks, straight from edge-list dumps.
//!
//! The library owns every workflow; the `plumb` binary only parses arguments, calls one of them,
//! prints what it returns and maps errors to exit codes. The data flows through one folder per
//! stage, each using only those listed before it:
//!
//! | stage | folder | owns |
//! |---|---|---|
//! | read | [`read`] | magic bytes, sources (maps, decoders), the line grammars, chunk scanning |
//! | build and store | [`store`] | id tables, the CSR fill, the [`Graph`], the store file, resource limits |
//! | exact | [`exact`] | degrees, components, triangles, clustering, BFS, distances, diameter, costs |
//! | estimate | [`estimate`] | wedge and node sampling, sampled-source BFS, HyperBall, id sketches, intervals |
//! | models | [`models`] | generators, degree-preserving swaps, small-world references, the sweep |
//! | profile | [`profile`] | the planner, one unit per figure group, the report document |
//! | output | [`output`] | text, HTML and SVG, the per-node table, the number formatter |
//! | monitor | [`monitor`] | history directories, comparisons, `track`, trend pages |
//! | spread | [`spread`] | the profile computed by several processes on timely dataflow |
//!
//! Start with [`store::load::load`], which reads an edge file (plain, zstd or gzip; edge list or
//! Matrix Market) or a store file into a [`Graph`], then [`profile::profile`].

#![warn(missing_docs)]

pub mod error;
pub mod estimate;
pub mod exact;
pub mod figure;
pub mod models;
pub mod monitor;
pub(crate) mod numeric;
pub mod outfile;
pub mod output;
pub mod profile;
pub mod progress;
pub mod read;
pub mod spread;
pub mod store;

pub use error::{Error, Result};
pub use store::graph::Graph;

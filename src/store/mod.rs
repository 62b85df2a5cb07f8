//! Building and the store: from parsed lines to the graph. Owns the id tables (integer and text ids, ranked so
//! results never depend on threads), the CSR fill, the [`graph::Graph`] with its intake facts,
//! the versioned store file (`file`), and the resource limits. Uses `read` below it.

pub mod csr;
pub mod file;
pub(crate) mod fill;
pub mod graph;
pub(crate) mod ids;
pub mod intake;
pub mod limits;
pub mod load;
pub(crate) mod pages;
/// The naive reference reader, for tests and fuzzing (feature `reference`).
#[cfg(any(test, feature = "reference"))]
pub mod reference;
pub(crate) mod slab;
pub(crate) mod spill;

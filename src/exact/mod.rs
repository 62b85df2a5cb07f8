//! Exact measures on a built graph: degrees, components, triangles and clustering, BFS,
//! all-pairs distances, the diameter, and the cost model that predicts what each of them takes.
//! Uses `build` (the CSR) and the shared `figure` type.

pub mod bfs;
pub mod clustering;
pub mod components;
pub mod cost;
pub mod degrees;
pub mod diameter;
pub mod directed;
pub mod distances;
pub mod triangles;

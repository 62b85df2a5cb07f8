//! Models and references: seeded generators (lattice, Watts–Strogatz, G(n,m), G(n,p),
//! preferential attachment), degree-preserving swaps and the configuration model, the
//! small-world references and coefficients, the Watts–Strogatz sweep, and the demo data.
//! Uses `estimate`, `exact` and `build`.

pub mod demo;
pub mod generate;
pub mod measure;
pub mod randomize;
pub mod smallworld;
pub mod sweep;
pub mod synth;

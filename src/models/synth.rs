//! The `synth` workflow: write a seeded model graph, or a randomised copy of an input, as an edge
//! list (plain, or zstd when the name ends in `.zst`), streaming, so the same seed gives a
//! byte-identical file. Degree-preserving swaps follow Maslov & Sneppen, Science 296 (2002) 910;
//! the configuration model follows Newman, SIAM Review 45 (2003) 167–256.

use std::path::{Path, PathBuf};
use std::time::Instant;

use crate::error::{Error, Result};
use crate::models::generate::{self, Model};
use crate::models::randomize;
use crate::outfile::{EdgeWriter, refuse_overwrite};
use crate::progress::Progress;
use crate::store::load::{LoadOptions, load};

/// What to write.
#[derive(Debug, Clone)]
pub enum Recipe {
    /// A generator model with its parameters.
    Model(Model),
    /// Degree-preserving randomisation of an input by double-edge swaps (original ids kept).
    Shuffle {
        /// The input graph.
        input: PathBuf,
        /// How to read it.
        load: LoadOptions,
        /// Attempted swaps per edge.
        swaps_per_edge: f64,
    },
    /// Configuration model with an input's degree sequence (original ids kept).
    Configuration {
        /// The input graph.
        input: PathBuf,
        /// How to read it.
        load: LoadOptions,
    },
}

/// What the written graph lost or kept, beyond its size.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Detail {
    /// Nodes of the model with no edge, absent from the edge list.
    Lonely {
        /// How many.
        nodes: u64,
    },
    /// Swaps made of those attempted (the rest would have made a loop or a repeat).
    Swaps {
        /// Swaps made.
        accepted: u64,
        /// Swaps attempted.
        attempted: u64,
    },
    /// Stubs paired into a loop or a repeated pair, erased.
    Erased {
        /// Self-loops erased.
        loops: u64,
        /// Repeated pairs erased.
        repeats: u64,
    },
}

/// What `synth` wrote.
#[derive(Debug, Clone, PartialEq)]
pub struct Synthesised {
    /// One line naming the model, its parameters and the seed (also the file's first comment).
    pub description: String,
    /// Nodes of the graph.
    pub nodes: u64,
    /// Edge lines written.
    pub edges: u64,
    /// Bytes written.
    pub bytes: u64,
    /// Wall time.
    pub seconds: f64,
    /// What was lost or kept.
    pub detail: Detail,
}

/// Write `recipe` with `seed` to `out`. Impossible parameters are refused before the output is
/// created; the output is written atomically and may not name the input.
///
/// ```
/// use plumb::models::generate::Model;
/// use plumb::models::synth::{Recipe, synth};
/// use plumb::progress::Quiet;
///
/// let out = std::env::temp_dir().join(format!("plumb-doc-synth-{}.tsv", std::process::id()));
/// let lattice = Recipe::Model(Model::Lattice { n: 100, k: 4 });
/// let s = synth(&lattice, &out, 7, &Quiet)?;
/// assert_eq!((s.nodes, s.edges), (100, 200));
/// // The same seed writes the same bytes.
/// let first = std::fs::read(&out).unwrap();
/// synth(&lattice, &out, 7, &Quiet)?;
/// assert_eq!(first, std::fs::read(&out).unwrap());
/// # std::fs::remove_file(&out).ok();
/// # Ok::<(), plumb::Error>(())
/// ```
pub fn synth(
    recipe: &Recipe,
    out: &Path,
    seed: u64,
    progress: &dyn Progress,
) -> Result<Synthesised> {
    let t = Instant::now();
    match recipe {
        Recipe::Model(m) => m.validate()?,
        Recipe::Shuffle {
            input,
            swaps_per_edge,
            ..
        } => {
            if swaps_per_edge.is_nan() || *swaps_per_edge < 0.0 {
                return Err(Error::Parameters {
                    problem: "--swaps-per-edge must be >= 0".into(),
                });
            }
            refuse_overwrite(out, input)?;
        }
        Recipe::Configuration { input, .. } => refuse_overwrite(out, input)?,
    }
    let mut w = EdgeWriter::create(out)?;
    let (description, nodes, detail) = match recipe {
        Recipe::Model(m) => {
            let what = format!("{}, seed {seed}", m.describe());
            w.comment(&format!("plumb synth: {what}"));
            let n = m.nodes() as usize;
            let mut touched = vec![false; n];
            generate::stream(m, seed, &mut |a, b| {
                touched[a as usize] = true;
                touched[b as usize] = true;
                w.edge(a, b)
            })?;
            let lonely = touched.iter().filter(|&&t| !t).count() as u64;
            (what, n as u64, Detail::Lonely { nodes: lonely })
        }
        Recipe::Shuffle {
            input,
            load: opts,
            swaps_per_edge,
        } => {
            let g = load(input, opts, progress)?;
            let (r, rep) = randomize::degree_preserving(&g.csr, *swaps_per_edge, seed);
            let what = format!(
                "degree-preserving randomisation of {} by double-edge swaps (Maslov & Sneppen \
                 2002), seed {seed}",
                input.display()
            );
            w.comment(&format!("plumb synth: {what}"));
            for (a, b) in randomize::edge_list(&r) {
                w.labelled(&g.ids.label_bytes(a), &g.ids.label_bytes(b));
            }
            let detail = Detail::Swaps {
                accepted: rep.accepted,
                attempted: rep.attempted,
            };
            (what, g.node_count() as u64, detail)
        }
        Recipe::Configuration { input, load: opts } => {
            let g = load(input, opts, progress)?;
            let degrees: Vec<u32> = (0..g.node_count() as u32)
                .map(|v| g.csr.degree(v))
                .collect();
            let what = format!(
                "configuration model with the degrees of {}, seed {seed}",
                input.display()
            );
            w.comment(&format!("plumb synth: {what}"));
            let rep = randomize::configuration(&degrees, seed, &mut |a, b| {
                w.labelled(&g.ids.label_bytes(a), &g.ids.label_bytes(b))
            })?;
            let detail = Detail::Erased {
                loops: rep.loops_erased,
                repeats: rep.repeats_erased,
            };
            (what, g.node_count() as u64, detail)
        }
    };
    let (edges, bytes) = w.finish()?;
    Ok(Synthesised {
        description,
        nodes,
        edges,
        bytes,
        seconds: t.elapsed().as_secs_f64(),
        detail,
    })
}

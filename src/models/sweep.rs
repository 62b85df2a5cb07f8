//! Model fitting by sweep: Watts–Strogatz graphs of one size and degree over a list of rewiring
//! probabilities, with C(p)/C(0) and L(p)/L(0) — the two curves of Watts & Strogatz (1998,
//! Fig. 2) — measured on seeded graphs, C(0) and L(0) exact from the ring lattice's closed forms.

use crate::error::ParamError;
use serde::{Deserialize, Serialize};

use crate::estimate::interval::t_for;
use crate::figure::{Figure, Interval};
use crate::models::generate::Model;
use crate::models::measure::{Measure, measure_reference};
use crate::models::smallworld::{lattice_clustering, lattice_mean_distance};
use crate::numeric::mean_variance;

/// One rewiring probability of the sweep.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct SweepRow {
    /// The rewiring probability.
    pub p: f64,
    /// Seeded graphs measured.
    pub graphs: u64,
    /// Transitivity C(p), mean over the graphs.
    pub clustering: Figure,
    /// Mean distance L(p) (on each graph's giant component), mean over the graphs.
    pub mean_distance: Figure,
    /// C(p)/C(0), with its interval.
    pub clustering_ratio: Figure,
    /// L(p)/L(0), with its interval.
    pub distance_ratio: Figure,
}

/// The Watts–Strogatz sweep (Watts & Strogatz, Nature 393, 1998, Fig. 2).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Sweep {
    /// Nodes of each graph.
    pub nodes: u32,
    /// Lattice degree K.
    pub degree: u32,
    /// C(0) and L(0), exact for the ring lattice.
    pub lattice_clustering: f64,
    /// L(0), exact for the ring lattice.
    pub lattice_mean_distance: f64,
    /// One row per probability.
    pub rows: Vec<SweepRow>,
}

/// Mean of per-graph values, with the t interval of the model's expected value (df = r − 1);
/// one graph gives its value with no interval of its own, marked as a single graph.
fn mean_of(values: &[f64], level: f64, what: &str) -> Figure {
    let r = values.len();
    let (mean, var) = mean_variance(values);
    if r < 2 {
        return Figure::exact_over(mean, &format!("{what}, one graph"), 1);
    }
    let se = (var / r as f64).sqrt();
    let half = t_for(level, r as u64 - 1) * se;
    Figure::estimate(
        mean,
        &format!("{what}, mean over {r} seeded graphs, t interval"),
        r as u64,
        se,
        Interval::around(mean, half, level),
    )
}

/// Sweep `ps` with `graphs` seeded graphs each; `row_done` is told after each p.
pub fn watts_strogatz(
    n: u32,
    k: u32,
    ps: &[f64],
    graphs: usize,
    opts: &Measure,
    seed: u64,
    row_done: &mut dyn FnMut(&SweepRow),
) -> Result<Sweep, ParamError> {
    if graphs == 0 {
        return Err("a sweep needs at least one graph per p".into());
    }
    for &p in ps {
        Model::WattsStrogatz { n, k, p }.validate()?;
    }
    let c0 = lattice_clustering(k);
    let l0 = lattice_mean_distance(n as u64, k as u64);
    let mut rows = Vec::with_capacity(ps.len());
    for (i, &p) in ps.iter().enumerate() {
        let measured: Vec<(f64, f64, f64)> = (0..graphs as u64)
            .map(|j| {
                let seed = seed
                    .wrapping_mul(1_000_003)
                    .wrapping_add(i as u64 * 1000 + j);
                let g = crate::models::generate::watts_strogatz(n, k, p, seed);
                measure_reference(&g, opts, seed)
            })
            .collect();
        let cs: Vec<f64> = measured.iter().map(|m| m.0).collect();
        let ls: Vec<f64> = measured.iter().map(|m| m.2).collect();
        let clustering = mean_of(&cs, opts.level, "transitivity");
        let mean_distance = mean_of(&ls, opts.level, "mean distance");
        let row = SweepRow {
            p,
            graphs: graphs as u64,
            clustering_ratio: Figure::scaled(&clustering, c0),
            distance_ratio: Figure::scaled(&mean_distance, l0),
            clustering,
            mean_distance,
        };
        row_done(&row);
        rows.push(row);
    }
    Ok(Sweep {
        nodes: n,
        degree: k,
        lattice_clustering: c0,
        lattice_mean_distance: l0,
        rows,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_curves_fall_as_in_the_paper() {
        // Watts & Strogatz (1998), Fig. 2 (n = 1000, k = 10): L(p)/L(0) falls steeply by
        // p = 0.01 while C(p)/C(0) stays near 1; both are near their random values at p = 1.
        let opts = crate::profile::ProfileOptions::default().measure();
        let s = watts_strogatz(1000, 10, &[0.0, 0.01, 1.0], 2, &opts, 1, &mut |_| {}).unwrap();
        let r = &s.rows;
        assert!((r[0].clustering_ratio.value() - 1.0).abs() < 1e-12);
        assert!((r[0].distance_ratio.value() - 1.0).abs() < 1e-9);
        assert!(r[1].clustering_ratio.value() > 0.9 && r[1].distance_ratio.value() < 0.4);
        assert!(r[2].clustering_ratio.value() < 0.05 && r[2].distance_ratio.value() < 0.1);
        assert!(watts_strogatz(1000, 10, &[1.5], 1, &opts, 1, &mut |_| {}).is_err());
    }
}

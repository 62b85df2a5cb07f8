//! The `compare` workflow: two profile reports, or two graphs profiled here, judged figure by
//! figure ([`crate::monitor::drift`]); for two graphs also the exact node and edge churn by
//! original id, for two reports the churn estimated from their id sketches (HyperLogLog++:
//! Heule, Nunkesser & Hall, EDBT 2013).

use std::path::Path;

use crate::error::Result;
use crate::estimate::sketch::Churn;
use crate::monitor::drift::{self, Drift, ExactChurn};
use crate::monitor::history::read_report;
use crate::monitor::track::ChangeRules;
use crate::profile::report::Report;
use crate::profile::{ProfileOptions, profile};
use crate::progress::Progress;
use crate::store::graph::Graph;
use crate::store::load::{LoadOptions, load};

/// What `compare` found.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Comparison {
    /// Figure by figure.
    pub drift: Drift,
    /// Exact churn by original id, when both sides were graphs.
    pub churn: Option<ExactChurn>,
    /// Churn estimated from the reports' id sketches, when the graphs were not both at hand.
    pub estimated_churn: Option<Churn>,
}

/// A side is a report when its name ends in `.json`, else a graph to profile.
fn is_report(path: &Path) -> bool {
    path.extension().is_some_and(|e| e == "json")
}

fn side(
    path: &Path,
    load_opts: &LoadOptions,
    opts: &ProfileOptions,
    progress: &dyn Progress,
) -> Result<(Report, Option<Graph>)> {
    if is_report(path) {
        return Ok((read_report(path)?, None));
    }
    let g = load(path, load_opts, progress)?;
    let (p, _) = profile(&g, opts, progress);
    Ok((Report::new(p, Some(path), opts)?, Some(g)))
}

/// Compare `before` with `after` (each a `.json` report or a graph file read with `load_opts`).
///
/// ```
/// use plumb::monitor::compare::compare;
/// use plumb::monitor::track::ChangeRules;
/// use plumb::profile::ProfileOptions;
/// use plumb::progress::Quiet;
/// use plumb::store::load::LoadOptions;
///
/// let dir = std::env::temp_dir().join(format!("plumb-doc-compare-{}", std::process::id()));
/// std::fs::create_dir_all(&dir).unwrap();
/// let (a, b) = (dir.join("week1.tsv"), dir.join("week2.tsv"));
/// std::fs::write(&a, "ann bob\nbob cat\ncat ann\n").unwrap();
/// std::fs::write(&b, "ann bob\nbob cat\ncat dan\n").unwrap();
/// let c = compare(&a, &b, &LoadOptions::default(), &ProfileOptions::default(),
///                 &ChangeRules::default(), &Quiet)?;
/// let churn = c.churn.unwrap();
/// assert_eq!((churn.nodes_appeared, churn.edges_vanished), (1, 1));
/// # std::fs::remove_dir_all(&dir).ok();
/// # Ok::<(), plumb::Error>(())
/// ```
pub fn compare(
    before: &Path,
    after: &Path,
    load_opts: &LoadOptions,
    opts: &ProfileOptions,
    rules: &ChangeRules,
    progress: &dyn Progress,
) -> Result<Comparison> {
    let (ra, ga) = side(before, load_opts, opts, progress)?;
    let (rb, gb) = side(after, load_opts, opts, progress)?;
    let d = drift::compare(
        &ra,
        &rb,
        (&before.display().to_string(), &after.display().to_string()),
        rules.level,
        &rules.thresholds,
    );
    let churn = match (&ga, &gb) {
        (Some(a), Some(b)) => Some(drift::churn(a, b)),
        _ => None,
    };
    let estimated_churn = match (&churn, &ra.ids, &rb.ids) {
        (None, Some(a), Some(b)) => a.churn(b, rules.level).ok(),
        _ => None,
    };
    Ok(Comparison {
        drift: d,
        churn,
        estimated_churn,
    })
}

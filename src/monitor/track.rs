//! The `track` workflow: profile a new export, add it to a history directory, and compare it
//! with the previous snapshot and the pinned baseline (change tests as in [`crate::monitor::drift`]),
//! with node and edge churn against the previous snapshot estimated from the reports' id sketches
//! (HyperLogLog++: Heule, Nunkesser & Hall, EDBT 2013).

use std::path::Path;
use std::time::Duration;

use crate::error::{Error, Result};
use crate::estimate::sketch::Churn;
use crate::monitor::drift::{self, Drift, FigureKey, Threshold};
use crate::monitor::history::{self, Entry, History, Problem};
use crate::profile::report::{self, Report};
use crate::profile::{ProfileOptions, profile};
use crate::progress::Progress;
use crate::store::load::{LoadOptions, load};

/// How a change is judged: the family-wise level of the tests and per-figure minimum effects.
#[derive(Debug, Clone, PartialEq)]
pub struct ChangeRules {
    /// Family-wise confidence level of the change tests (e.g. 0.99).
    pub level: f64,
    /// Minimum effects that override [`FigureKey::default_threshold`].
    pub thresholds: Vec<(FigureKey, Threshold)>,
}

impl Default for ChangeRules {
    fn default() -> Self {
        ChangeRules {
            level: 0.99,
            thresholds: Vec::new(),
        }
    }
}

/// What `track` does besides profiling.
#[derive(Debug, Clone, PartialEq)]
pub struct TrackOptions {
    /// The snapshot's label (default: the input's file name).
    pub label: Option<String>,
    /// Make this snapshot the baseline.
    pub pin: bool,
    /// Add the input even when the history holds a file with the same checksum.
    pub again: bool,
    /// How changes are judged.
    pub rules: ChangeRules,
    /// How long to wait for another `track` holding the history's lock.
    pub lock_wait: Duration,
}

impl Default for TrackOptions {
    fn default() -> Self {
        TrackOptions {
            label: None,
            pin: false,
            again: false,
            rules: ChangeRules::default(),
            lock_wait: Duration::from_secs(600),
        }
    }
}

/// What `track` did.
#[derive(Debug, Clone)]
pub struct Tracked {
    /// The snapshot added.
    pub entry: Entry,
    /// Its report.
    pub report: Report,
    /// Against the previous snapshot, then against the baseline when that is another one.
    pub comparisons: Vec<Drift>,
    /// Node and edge churn since the previous snapshot, from the id sketches.
    pub churn_since_previous: Option<Churn>,
    /// Alerts over all comparisons.
    pub alerts: usize,
    /// Snapshots found unreadable on opening the history (reported, not fatal).
    pub problems: Vec<Problem>,
}

/// Profile `input` and add it to the history in `dir` (created on first use). The input is read
/// before the history is touched, so a missing input leaves no directory behind.
///
/// ```
/// use plumb::monitor::track::{TrackOptions, track};
/// use plumb::profile::ProfileOptions;
/// use plumb::progress::Quiet;
/// use plumb::store::load::LoadOptions;
///
/// let dir = std::env::temp_dir().join(format!("plumb-doc-track-{}", std::process::id()));
/// let export = dir.with_extension("tsv");
/// std::fs::write(&export, "1 2\n2 3\n3 1\n").unwrap();
/// let t = track(&dir, &export, &LoadOptions::default(), &ProfileOptions::default(),
///               &TrackOptions::default(), &Quiet)?;
/// assert_eq!(t.entry.seq, 1);
/// assert!(t.comparisons.is_empty()); // the first snapshot is the baseline
/// # std::fs::remove_dir_all(&dir).ok();
/// # std::fs::remove_file(&export).ok();
/// # Ok::<(), plumb::Error>(())
/// ```
pub fn track(
    dir: &Path,
    input: &Path,
    load_opts: &LoadOptions,
    profile_opts: &ProfileOptions,
    opts: &TrackOptions,
    progress: &dyn Progress,
) -> Result<Tracked> {
    let source = (input.as_os_str() != "-").then_some(input);
    let sum = source.map(report::checksum).transpose()?;
    let _lock = history::lock(dir, opts.lock_wait)?;
    let mut h = History::open(dir)?;
    if let Some((_, sum)) = &sum
        && let Some(e) = h.find_input(sum)
        && !opts.again
    {
        return Err(Error::Parameters {
            problem: format!(
                "{} is already in the history as snapshot {} ({}), same checksum {sum}; add it \
                 again with --again",
                input.display(),
                e.seq,
                e.label
            ),
        });
    }
    let g = load(input, load_opts, progress)?;
    let (p, _) = profile(&g, profile_opts, progress);
    let report = Report::with_checksum(p, source, sum, profile_opts).with_sketch(&g);
    let previous = h.latest().map(|(e, r)| (e.clone(), r.clone()));
    let baseline = h.baseline().map(|(e, r)| (e.clone(), r.clone()));
    let label = opts.label.clone().unwrap_or_else(|| {
        input
            .file_name()
            .map_or("stdin".into(), |n| n.to_string_lossy().into_owned())
    });
    let entry = h.add(&report, &label, opts.pin)?;
    let name = |e: &Entry| format!("#{} {}", e.seq, e.label);
    let mut against = Vec::new();
    against.extend(previous.as_ref());
    if let Some(b) = &baseline
        && previous.as_ref().is_none_or(|(p, _)| p.seq != b.0.seq)
    {
        against.push(b);
    }
    let comparisons: Vec<Drift> = against
        .iter()
        .map(|(e, r)| {
            drift::compare(
                r,
                &report,
                (&name(e), &name(&entry)),
                opts.rules.level,
                &opts.rules.thresholds,
            )
        })
        .collect();
    let churn_since_previous = match (&previous, &report.ids) {
        (Some((_, r)), Some(now)) => r
            .ids
            .as_ref()
            .and_then(|before| before.churn(now, opts.rules.level).ok()),
        _ => None,
    };
    Ok(Tracked {
        alerts: comparisons.iter().map(|d| d.alerts).sum(),
        entry,
        report,
        comparisons,
        churn_since_previous,
        problems: h.problems.clone(),
    })
}

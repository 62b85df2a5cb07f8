//! Did the structure change between two profiles? For each figure both carry, the difference, its
//! standard error from both figures' standard errors (independent samples: se² = se_a² + se_b²),
//! an interval, and whether the change is significant — a two-sided z test, with the level split
//! over the estimated figures compared (Bonferroni), so one comparison of many figures raises a
//! false alarm about as often as the level says. A change alerts when it is significant *and* at
//! least the user's minimum effect for that figure. Exact figures have no sampling error: any
//! difference is real, and the minimum effect alone decides.

use crate::error::ParamError;
use serde::{Deserialize, Serialize};

use crate::estimate::interval::z_for;
use crate::figure::{Figure, Interval};
use crate::profile::Distances;
use crate::profile::report::Report;

/// A minimum effect worth alerting on: absolute, or relative to the earlier value.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(tag = "kind", content = "value", rename_all = "lowercase")]
pub enum Threshold {
    /// At least this much, in the figure's units.
    Absolute(f64),
    /// At least this share of the earlier value.
    Relative(f64),
}

impl Threshold {
    fn met(&self, before: f64, diff: f64) -> bool {
        match *self {
            Threshold::Absolute(t) => diff.abs() >= t,
            Threshold::Relative(t) => diff.abs() >= t * before.abs(),
        }
    }
}

/// The figures a comparison looks at. Their kebab-case names are the keys of `--alert-on` and of
/// the comparison JSON.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub enum FigureKey {
    /// Node count.
    Nodes,
    /// Edge count.
    Edges,
    /// Mean degree 2m/n.
    MeanDegree,
    /// Number of connected components.
    Components,
    /// Share of nodes in the giant component.
    GiantShare,
    /// Transitivity 3 triangles / wedges.
    Transitivity,
    /// Average local clustering, degree < 2 counted as 0.
    AverageClustering,
    /// Mean distance on the distance node set.
    MeanDistance,
    /// Effective diameter at 90%.
    EffectiveDiameter,
}

impl FigureKey {
    /// Every key, in report order.
    pub const ALL: [FigureKey; 9] = [
        FigureKey::Nodes,
        FigureKey::Edges,
        FigureKey::MeanDegree,
        FigureKey::Components,
        FigureKey::GiantShare,
        FigureKey::Transitivity,
        FigureKey::AverageClustering,
        FigureKey::MeanDistance,
        FigureKey::EffectiveDiameter,
    ];

    /// The key as written on the command line and in JSON.
    pub fn key(self) -> &'static str {
        match self {
            FigureKey::Nodes => "nodes",
            FigureKey::Edges => "edges",
            FigureKey::MeanDegree => "mean-degree",
            FigureKey::Components => "components",
            FigureKey::GiantShare => "giant-share",
            FigureKey::Transitivity => "transitivity",
            FigureKey::AverageClustering => "average-clustering",
            FigureKey::MeanDistance => "mean-distance",
            FigureKey::EffectiveDiameter => "effective-diameter",
        }
    }

    /// The figure's name in reports.
    pub fn label(self) -> &'static str {
        match self {
            FigureKey::Nodes => "nodes",
            FigureKey::Edges => "edges",
            FigureKey::MeanDegree => "mean degree",
            FigureKey::Components => "components",
            FigureKey::GiantShare => "share of nodes in the giant component",
            FigureKey::Transitivity => "transitivity",
            FigureKey::AverageClustering => "average local clustering (degree < 2 as 0)",
            FigureKey::MeanDistance => "mean distance",
            FigureKey::EffectiveDiameter => "effective diameter (90%)",
        }
    }

    /// The default minimum effect. These are this project's own choice (common practice, no
    /// published source): large enough that ordinary week-to-week growth of a live network does
    /// not page anyone.
    pub fn default_threshold(self) -> Threshold {
        match self {
            FigureKey::Nodes | FigureKey::Edges | FigureKey::MeanDegree => {
                Threshold::Relative(0.10)
            }
            // A few small components come and go every week; the giant component's share is
            // the figure that catches a real split.
            FigureKey::Components => Threshold::Absolute(100.0),
            FigureKey::GiantShare => Threshold::Absolute(0.02),
            FigureKey::Transitivity | FigureKey::AverageClustering => Threshold::Absolute(0.01),
            FigureKey::MeanDistance => Threshold::Relative(0.02),
            FigureKey::EffectiveDiameter => Threshold::Relative(0.05),
        }
    }
}

impl std::fmt::Display for FigureKey {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.key())
    }
}

impl std::str::FromStr for FigureKey {
    type Err = ParamError;
    fn from_str(s: &str) -> Result<Self, ParamError> {
        FigureKey::ALL
            .into_iter()
            .find(|k| k.key() == s)
            .ok_or_else(|| {
                let keys: Vec<&str> = FigureKey::ALL.iter().map(|k| k.key()).collect();
                ParamError::from(format!("unknown figure {s:?}; one of: {}", keys.join(", ")))
            })
    }
}

/// The figures of a report by key.
pub fn figures_of(r: &Report) -> Vec<(FigureKey, Figure)> {
    let p = &r.profile;
    let d = &p.degrees;
    let mut out = vec![
        (FigureKey::Nodes, Figure::exact(d.nodes as f64, "count")),
        (FigureKey::Edges, Figure::exact(d.edges as f64, "count")),
        (FigureKey::MeanDegree, Figure::exact(d.mean, "2m/n")),
        (
            FigureKey::Components,
            Figure::exact(p.components.count as f64, "union-find"),
        ),
        (
            FigureKey::GiantShare,
            Figure::exact(p.components.giant_fraction, "union-find"),
        ),
    ];
    if let Some(c) = &p.clustering {
        out.push((FigureKey::Transitivity, c.transitivity.clone()));
        out.push((FigureKey::AverageClustering, c.average_zeros.clone()));
    }
    let distance = match &p.distances {
        Distances::Exact(s) => Some((&s.mean, &s.effective_diameter)),
        Distances::Estimated(e) => Some((&e.mean, &e.effective_diameter)),
        _ => None,
    };
    if let Some((mean, effective)) = distance {
        out.push((FigureKey::MeanDistance, mean.clone()));
        out.push((FigureKey::EffectiveDiameter, effective.clone()));
    }
    out
}

/// What one figure's change means.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub enum Verdict {
    /// No difference at all.
    Same,
    /// A difference smaller than the figure's minimum effect (significant or not).
    WithinThreshold,
    /// At least the minimum effect, but within the estimates' sampling error.
    BeyondThresholdNotSignificant,
    /// Significant and at least the minimum effect.
    Alert,
}

/// One figure's change.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Change {
    /// Which figure.
    pub key: FigureKey,
    /// The figure's name in reports.
    pub label: String,
    /// The earlier value.
    pub before: f64,
    /// The later value.
    pub after: f64,
    /// after − before, with its standard error and interval (at the comparison's level,
    /// Bonferroni-adjusted for estimated figures).
    pub difference: Figure,
    /// Beyond the sampling error (any difference, for exact figures).
    pub significant: bool,
    /// The minimum effect that applied.
    pub threshold: Threshold,
    /// Significant and at least the threshold.
    pub alert: bool,
    /// What the change means, in one word.
    pub verdict: Verdict,
}

/// One comparison of two reports, figure by figure.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Drift {
    /// Labels of the two sides, e.g. snapshot labels or file names.
    pub before: String,
    /// Label of the later side.
    pub after: String,
    /// Family-wise level of the significance tests.
    pub level: f64,
    /// Estimated figures among those compared (the Bonferroni family size).
    pub tested: usize,
    /// Every figure both reports carry.
    pub changes: Vec<Change>,
    /// Changes that alert.
    pub alerts: usize,
}

/// Compare `a` (before) with `b` (after) at `level` (e.g. 0.99), with per-figure thresholds
/// overriding the defaults.
pub fn compare(
    a: &Report,
    b: &Report,
    names: (&str, &str),
    level: f64,
    thresholds: &[(FigureKey, Threshold)],
) -> Drift {
    let fa = figures_of(a);
    let fb = figures_of(b);
    let pairs: Vec<(FigureKey, &Figure, &Figure)> = fa
        .iter()
        .filter_map(|(k, x)| fb.iter().find(|(j, _)| j == k).map(|(_, y)| (*k, x, y)))
        .collect();
    let se = |f: &Figure| f.std_error().unwrap_or(0.0);
    let tested = pairs
        .iter()
        .filter(|(_, x, y)| se(x) > 0.0 || se(y) > 0.0)
        .count();
    // Each test at 1 − (1 − level)/tested, so that all together alarm at most 1 − level.
    let each = 1.0 - (1.0 - level) / tested.max(1) as f64;
    let z = z_for(each);
    let mut changes = Vec::new();
    for (key, x, y) in pairs {
        let threshold = thresholds
            .iter()
            .find(|(k, _)| *k == key)
            .map_or(key.default_threshold(), |(_, t)| *t);
        let diff = y.value() - x.value();
        let s = (se(x).powi(2) + se(y).powi(2)).sqrt();
        let significant = if s > 0.0 {
            diff.abs() > z * s
        } else {
            diff != 0.0
        };
        let difference = if s > 0.0 {
            Figure::estimate(
                diff,
                "difference of independent estimates, z interval (Bonferroni over the estimated figures)",
                2,
                s,
                Interval {
                    low: diff - z * s,
                    high: diff + z * s,
                    level: each,
                },
            )
        } else {
            Figure::exact(diff, "difference of exact figures")
        };
        let beyond = threshold.met(x.value(), diff);
        let alert = significant && beyond;
        let verdict = match (diff == 0.0, beyond, significant) {
            (true, _, _) => Verdict::Same,
            (false, false, _) => Verdict::WithinThreshold,
            (false, true, false) => Verdict::BeyondThresholdNotSignificant,
            (false, true, true) => Verdict::Alert,
        };
        changes.push(Change {
            key,
            label: key.label().into(),
            before: x.value(),
            after: y.value(),
            difference,
            significant,
            threshold,
            alert,
            verdict,
        });
    }
    let alerts = changes.iter().filter(|c| c.alert).count();
    Drift {
        before: names.0.into(),
        after: names.1.into(),
        level,
        tested,
        changes,
        alerts,
    }
}

/// Parse `key=value` thresholds: `transitivity=0.01` (absolute) or `mean-distance=2%`
/// (relative).
pub fn parse_threshold(s: &str) -> Result<(FigureKey, Threshold), ParamError> {
    let (k, v) = s
        .split_once('=')
        .ok_or_else(|| format!("expected FIGURE=VALUE such as transitivity=0.01, got {s:?}"))?;
    let k: FigureKey = k.parse()?;
    let t = match v.strip_suffix('%') {
        Some(p) => p
            .parse::<f64>()
            .map(|x| Threshold::Relative(x / 100.0))
            .map_err(|_| format!("bad percentage {v:?}"))?,
        None => v
            .parse::<f64>()
            .map(Threshold::Absolute)
            .map_err(|_| format!("bad number {v:?}"))?,
    };
    Ok((k, t))
}

/// Nodes and edges that appeared or vanished between two graphs, by their original ids (exact
/// up to 128-bit hash collisions of the ids, about 10⁻²⁰ for a billion edges).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct ExactChurn {
    /// Nodes in the later graph only.
    pub nodes_appeared: u64,
    /// Nodes in the earlier graph only.
    pub nodes_vanished: u64,
    /// Nodes in both.
    pub nodes_kept: u64,
    /// Edges in the later graph only.
    pub edges_appeared: u64,
    /// Edges in the earlier graph only.
    pub edges_vanished: u64,
    /// Edges in both.
    pub edges_kept: u64,
}

fn node_keys(g: &crate::Graph) -> Vec<u128> {
    (0..g.node_count() as u32)
        .map(|v| xxhash_rust::xxh3::xxh3_128(&g.ids.label_bytes(v)))
        .collect()
}

fn edge_keys(g: &crate::Graph, nodes: &[u128]) -> rustc_hash::FxHashSet<u128> {
    let mut out = rustc_hash::FxHashSet::default();
    out.reserve(g.edge_count() as usize);
    for u in 0..g.node_count() as u32 {
        for &v in g.csr.neighbors(u) {
            if u < v {
                let (a, b) = (nodes[u as usize], nodes[v as usize]);
                let (lo, hi) = if a <= b { (a, b) } else { (b, a) };
                let mut bytes = [0u8; 32];
                bytes[..16].copy_from_slice(&lo.to_le_bytes());
                bytes[16..].copy_from_slice(&hi.to_le_bytes());
                out.insert(xxhash_rust::xxh3::xxh3_128(&bytes));
            }
        }
    }
    out
}

/// Churn from `a` (before) to `b` (after).
pub fn churn(a: &crate::Graph, b: &crate::Graph) -> ExactChurn {
    let (na, nb) = (node_keys(a), node_keys(b));
    let sa: rustc_hash::FxHashSet<u128> = na.iter().copied().collect();
    let kept_nodes = nb.iter().filter(|k| sa.contains(k)).count() as u64;
    let ea = edge_keys(a, &na);
    let eb = edge_keys(b, &nb);
    let kept_edges = eb.iter().filter(|k| ea.contains(k)).count() as u64;
    ExactChurn {
        nodes_appeared: nb.len() as u64 - kept_nodes,
        nodes_vanished: na.len() as u64 - kept_nodes,
        nodes_kept: kept_nodes,
        edges_appeared: eb.len() as u64 - kept_edges,
        edges_vanished: ea.len() as u64 - kept_edges,
        edges_kept: kept_edges,
    }
}

//! Comparisons as text: one block per comparison, a row per figure worded by what its change
//! means, and the churn of nodes and edges (exact, or estimated from id sketches).

use std::fmt::Write as _;

use crate::estimate::sketch::Churn;
use crate::figure::{Figure, Method};
use crate::monitor::drift::{Change, Drift, ExactChurn};
use crate::output::number::count;
use crate::output::text::row;

/// One comparison as text: a verdict row, then a row per figure, then the exact churn when
/// known.
pub fn drift_text(d: &Drift, churn: Option<&ExactChurn>) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "  ── {} → {}", d.before, d.after);
    row(
        &mut out,
        "verdict",
        format!(
            "{} alert{} · {}",
            d.alerts,
            if d.alerts == 1 { "" } else { "s" },
            if d.tested == 0 {
                "every figure exact: any difference is real, thresholds decide".to_string()
            } else {
                format!(
                    "{} estimated figures tested at {:.0}% family-wise",
                    d.tested,
                    100.0 * d.level
                )
            }
        ),
    );
    for c in &d.changes {
        change_row(&mut out, c, d.level);
    }
    if let Some(ch) = churn {
        row(
            &mut out,
            "churn",
            format!(
                "nodes +{} −{} ({} kept) · edges +{} −{} ({} kept), by original id",
                count(ch.nodes_appeared),
                count(ch.nodes_vanished),
                count(ch.nodes_kept),
                count(ch.edges_appeared),
                count(ch.edges_vanished),
                count(ch.edges_kept)
            ),
        );
    }
    out
}

/// Churn estimated from two reports' id sketches, as one row.
pub fn sketch_churn_text(c: &Churn) -> String {
    let mut out = String::new();
    let f = |x: &Figure| match x.interval() {
        Some(iv) => format!(
            "{} ({}–{})",
            count(x.value().round() as u64),
            count(iv.low.max(0.0).round() as u64),
            count(iv.high.round() as u64)
        ),
        None => count(x.value().round() as u64),
    };
    row(
        &mut out,
        "churn",
        format!(
            "nodes +{} −{} · edges +{} −{} (estimated from the reports' id sketches, {:.0}% intervals)",
            f(&c.appeared_nodes),
            f(&c.vanished_nodes),
            f(&c.appeared_edges),
            f(&c.vanished_edges),
            100.0 * c.appeared_nodes.interval().map_or(0.95, |i| i.level)
        ),
    );
    out
}

/// One figure's change, worded by what it means: the same, within its minimum effect, beyond it
/// but within the sampling error, or an alert. Values print with the digits that tell them apart.
fn change_row(out: &mut String, c: &Change, level: f64) {
    use crate::monitor::drift::{Threshold, Verdict};
    use crate::output::number::{places_for, plain, signed};
    let diff = &c.difference;
    let places = places_for(diff.value(), 4);
    let iv = match (&diff.method(), diff.interval()) {
        (Method::Estimate { .. }, Some(iv)) => {
            format!(" (interval {} to {})", signed(iv.low), signed(iv.high))
        }
        _ => " (exact)".to_string(),
    };
    let min = match c.threshold {
        Threshold::Absolute(t) => format!("{t}"),
        Threshold::Relative(t) => format!("{}%", 100.0 * t),
    };
    let (label, meaning) = match c.verdict {
        Verdict::Same => ("same", "no difference".to_string()),
        Verdict::WithinThreshold => ("within", format!("within the minimum effect {min}")),
        Verdict::BeyondThresholdNotSignificant => (
            "unsettled",
            format!(
                "beyond the minimum effect {min}, but not significant at {:.0}%",
                100.0 * level
            ),
        ),
        Verdict::Alert if diff.is_exact() => ("ALERT", format!("beyond the minimum effect {min}")),
        Verdict::Alert => (
            "ALERT",
            format!(
                "beyond the minimum effect {min} and significant at {:.0}%",
                100.0 * level
            ),
        ),
    };
    let text = if c.verdict == Verdict::Same {
        format!("{}: {} · {meaning}", c.label, plain(c.before, places))
    } else {
        format!(
            "{}: {} → {} · {}{iv} · {meaning}",
            c.label,
            plain(c.before, places),
            plain(c.after, places),
            signed(diff.value())
        )
    };
    row(out, label, text);
}

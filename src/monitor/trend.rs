//! The trend page of a history: each figure over the snapshots, with interval bars where it was
//! estimated, and the snapshots where a change alert fired (against the previous one) marked with
//! a second marker shape. Self-contained like the report page.

use std::fmt::Write as _;

use crate::monitor::drift::{FigureKey, Threshold, compare, figures_of};
use crate::monitor::history::{Entry, History};
use crate::output::html::point;
use crate::output::svg::{Axis, Mark, Series, chart, esc};
use crate::profile::report::Report;

/// The trend page of a history: each figure over the snapshots with interval bars where
/// estimated, alerts against the previous snapshot marked, at `level` with `thresholds`.
pub fn page(h: &History, level: f64, thresholds: &[(FigureKey, Threshold)]) -> String {
    let snaps = h.reports();
    let labels: Vec<String> = snaps
        .iter()
        .map(|(e, _)| format!("#{} {}", e.seq, e.label))
        .collect();
    let names: Vec<&str> = labels.iter().map(String::as_str).collect();
    // Alerts of each snapshot against the one before it.
    let mut alerts: Vec<Vec<FigureKey>> = vec![Vec::new(); snaps.len()];
    for i in 1..snaps.len() {
        let d = compare(
            snaps[i - 1].1,
            snaps[i].1,
            (&labels[i - 1], &labels[i]),
            level,
            thresholds,
        );
        alerts[i] = d
            .changes
            .iter()
            .filter(|c| c.alert)
            .map(|c| c.key)
            .collect();
    }
    let mut charts = String::new();
    // Structure first, then size.
    let order = [
        FigureKey::Transitivity,
        FigureKey::AverageClustering,
        FigureKey::MeanDistance,
        FigureKey::EffectiveDiameter,
        FigureKey::GiantShare,
        FigureKey::Nodes,
        FigureKey::Edges,
        FigureKey::MeanDegree,
        FigureKey::Components,
    ];
    for key in order {
        if let Some(svg) = figure_chart(key, &snaps, &names, &alerts) {
            let _ = write!(charts, "<figure>{svg}</figure>");
        }
    }
    let mut alert_list = String::new();
    for (i, a) in alerts.iter().enumerate() {
        if !a.is_empty() {
            let _ = write!(
                alert_list,
                "<li><strong>{}</strong>: {}</li>",
                esc(&labels[i]),
                esc(&a.iter().map(|k| k.key()).collect::<Vec<_>>().join(", "))
            );
        }
    }
    if alert_list.is_empty() {
        alert_list = "<li>none</li>".into();
    }
    format!(
        r#"<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>plumb trend: {dir}</title><style>{style}</style></head><body><main><header><h1>Structure over time <span>{dir}</span></h1><p class="meta">{n} snapshots · alerts tested at {lvl:.0}% family-wise against the previous snapshot</p></header><h2>Alerts</h2><ul>{alert_list}</ul><h2>Figures</h2><div class="charts">{charts}</div><footer>Written by plumb {v}.</footer></main></body></html>
"#,
        // The folder's own name: a page is shared beyond the machine whose path it was.
        dir = esc(&h.dir.file_name().map_or_else(
            || h.dir.display().to_string(),
            |n| n.to_string_lossy().into_owned()
        )),
        style = crate::output::html::STYLE,
        n = snaps.len(),
        lvl = 100.0 * level,
        v = env!("CARGO_PKG_VERSION"),
    )
}

/// The trend chart of one figure over the snapshots, alerts marked; none when no snapshot has it.
fn figure_chart(
    key: FigureKey,
    snaps: &[(&Entry, &Report)],
    names: &[&str],
    alerts: &[Vec<FigureKey>],
) -> Option<String> {
    let label = key.label();
    let mut normal = Vec::new();
    let mut flagged = Vec::new();
    for (i, (_, r)) in snaps.iter().enumerate() {
        if let Some((_, f)) = figures_of(r).into_iter().find(|(k, _)| *k == key) {
            let p = point(i as f64 + 1.0, &f);
            if alerts[i].contains(&key) {
                flagged.push(p);
            }
            normal.push(p);
        }
    }
    if normal.is_empty() {
        return None;
    }
    let x = Axis::categories("snapshot", names);
    let y = Axis::fit(
        label,
        false,
        normal.iter().flat_map(|p| {
            let (a, b) = p.interval.unwrap_or((p.y, p.y));
            [a, b]
        }),
        false,
    );
    let mut series = vec![Series {
        name: (*label).to_string(),
        mark: Mark::Circle,
        line: true,
        points: normal,
    }];
    if !flagged.is_empty() {
        series.push(Series {
            name: "alert: changed beyond its threshold".into(),
            mark: Mark::Diamond,
            line: false,
            points: flagged,
        });
    }
    Some(chart(
        &format!("trend-{key}"),
        &format!("{label} over time"),
        &format!(
            "{label} in each snapshot, with interval bars when estimated; diamonds mark alerts against the previous snapshot."
        ),
        &x,
        &y,
        &series,
        &[],
    ))
}

//! The profile as one self-contained HTML page: inline CSS and inline SVG charts drawn by
//! the crate's own SVG code, no scripts, no fonts or images fetched from anywhere. Real text throughout;
//! every chart has a title, axis labels with units and a text description; series differ by
//! marker shape as well as shade, so the page reads printed in grey scale.

use std::fmt::Write as _;

use crate::figure::{Figure, Method};
use crate::models::smallworld::SmallWorld;
use crate::output::svg::{Axis, Guide, Mark, Point, Series, chart, esc};
use crate::profile::report::Report;
use crate::profile::{Distances, Profile};

/// The pages' shared style sheet (inlined; no fonts or images fetched).
pub const STYLE: &str = r#"
:root { --ink: #1c2630; --soft: #5b6770; --rule: #d5d9dc; --paper: #fbfaf7; --a: #7a3b1d; --b: #2f5d62; --c: #6b6b6b; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink); font: 15px/1.45 system-ui, -apple-system, "Segoe UI", sans-serif; }
main { max-width: 1180px; margin: 0 auto; padding: 28px 24px 48px; }
header { border-bottom: 3px double var(--ink); padding-bottom: 10px; margin-bottom: 18px; }
h1 { font-size: 24px; margin: 0 0 4px; letter-spacing: .01em; }
h1 span { font-weight: 400; color: var(--soft); }
h2 { font-size: 17px; margin: 26px 0 8px; border-bottom: 1px solid var(--rule); padding-bottom: 3px; }
.meta { color: var(--soft); font-size: 13px; margin: 2px 0; }
.meta code { color: var(--ink); }
.charts { display: grid; grid-template-columns: repeat(auto-fit, minmax(500px, 1fr)); gap: 18px; }
figure { margin: 0; background: #fff; border: 1px solid var(--rule); padding: 6px; }
figcaption { font-size: 12.5px; color: var(--soft); padding: 2px 6px 4px; }
svg.chart { width: 100%; height: auto; display: block; }
svg .frame { fill: none; stroke: var(--ink); stroke-width: 1; }
svg .grid { stroke: var(--rule); stroke-width: .7; }
svg .guide { stroke: var(--ink); stroke-width: 1; stroke-dasharray: 5 4; }
svg .ct { font-size: 14px; font-weight: 600; fill: var(--ink); }
svg .tk, svg .gl, svg .lg { font-size: 11px; fill: var(--soft); }
svg .al { font-size: 12px; fill: var(--ink); }
svg .ln { fill: none; stroke-width: 1.4; }
svg .bar { fill: none; stroke-width: 1.2; }
svg .s0 { fill: var(--a); stroke: var(--a); } svg .s0 .ln { stroke: var(--a); }
svg .s1 { fill: var(--b); stroke: var(--b); } svg .s1 .ln { stroke: var(--b); }
svg .s2 { fill: var(--c); stroke: var(--c); } svg .s2 .ln { stroke: var(--c); }
svg .s3 { fill: var(--ink); stroke: var(--ink); }
svg .pt path.bar { stroke: inherit; }
table { border-collapse: collapse; width: 100%; font-size: 13.5px; background: #fff; }
th, td { text-align: left; padding: 5px 8px; border-bottom: 1px solid var(--rule); vertical-align: top; }
th { font-weight: 600; background: #f1efe9; }
td.num { font-variant-numeric: tabular-nums; white-space: nowrap; }
.how { color: var(--soft); font-size: 12.5px; }
.verdict { margin: 4px 0; }
footer { margin-top: 30px; color: var(--soft); font-size: 12px; }
@media print { body { background: #fff; } figure { break-inside: avoid; } }
"#;

fn number(v: f64, places: usize) -> String {
    crate::output::number::decimal(v, places)
}

/// A figure's value and interval as table cells: value, interval, method.
fn cells(f: &Figure, places: usize) -> (String, String, String) {
    let mut value = number(f.value(), places);
    let (interval, how) = match (&f.method(), &f.interval()) {
        (Method::Estimate { estimator }, Some(iv)) => (
            {
                // As many digits as the interval needs to show, however small the figure.
                let p = crate::output::number::precision(
                    f.value(),
                    ((iv.high - iv.low) / 2.0).abs(),
                    places,
                );
                value = p.show(f.value());
                format!(
                    "{}–{} ({:.0}%)",
                    p.show(iv.low),
                    p.show(iv.high),
                    100.0 * iv.level
                )
            },
            format!(
                "estimate: {estimator}{}",
                f.sample_size()
                    .map_or(String::new(), |k| format!("; sample {k}"))
            ),
        ),
        (Method::Bounds { algorithm }, Some(iv)) => (
            format!(
                "certainly {}–{}",
                number(iv.low, places),
                number(iv.high, places)
            ),
            format!("bounds: {algorithm}"),
        ),
        (Method::Exact { algorithm }, _) => ("exact".into(), format!("exact: {algorithm}")),
        _ => (String::new(), String::new()),
    };
    (value, interval, how)
}

/// A chart point for `f` at `x`, with an interval bar when `f` is an estimate.
pub(crate) fn point(x: f64, f: &Figure) -> Point {
    Point {
        x,
        y: f.value(),
        interval: f.estimate_interval().map(|iv| (iv.low, iv.high)),
    }
}

/// A row of the figures table: name, figure, decimals.
type Row = (String, Figure, usize);
/// A chart: its SVG and its caption.
type Chart = (String, String);

/// The page for `r`: charts, the figures table, the small-world reading and the methods.
pub fn page(r: &Report) -> String {
    let p = &r.profile;
    let (distribution, mean_distance, effective) = distance_figures(p);
    let rows = figure_rows(p, mean_distance.as_ref(), effective.as_ref());
    let mut charts = Vec::new();
    degree_chart(p, &mut charts);
    clustering_chart(p, &mut charts);
    distance_chart(p, &distribution, &mut charts);
    if let Some(sw) = &p.small_world {
        small_world_charts(p, sw, mean_distance.as_ref(), &mut charts);
    }
    render(r, &charts, &rows)
}

/// The distance distribution (shares of pairs), mean and effective diameter.
fn distance_figures(p: &Profile) -> (Vec<Figure>, Option<Figure>, Option<Figure>) {
    match &p.distances {
        Distances::Exact(s) => {
            let pairs = s.pairs.max(1) as f64;
            let dist = s.distribution[1..]
                .iter()
                .map(|&c| Figure::exact(c as f64 / pairs, "all-pairs BFS"))
                .collect();
            (
                dist,
                Some(s.mean.clone()),
                Some(s.effective_diameter.clone()),
            )
        }
        Distances::Estimated(e) => (
            e.distribution.clone(),
            Some(e.mean.clone()),
            Some(e.effective_diameter.clone()),
        ),
        _ => (Vec::new(), None, None),
    }
}

fn figure_rows(
    p: &Profile,
    mean_distance: Option<&Figure>,
    effective: Option<&Figure>,
) -> Vec<Row> {
    let mut rows: Vec<Row> = Vec::new();
    let d = &p.degrees;
    let exact = |v: f64, what: &str| Figure::exact(v, what);
    rows.push(("nodes".into(), exact(d.nodes as f64, "count"), 0));
    let symmetrised = if p.directed.is_some() {
        " (symmetrised: u–v when u → v or v → u; every figure below the directed ones is on it)"
    } else {
        ""
    };
    rows.push((
        format!("edges{symmetrised}"),
        exact(d.edges as f64, "count"),
        0,
    ));
    rows.push(("mean degree".into(), exact(d.mean, "2m/n"), 3));
    rows.push((
        "components".into(),
        exact(p.components.count as f64, "union-find"),
        0,
    ));
    rows.push((
        "share of nodes in the giant component".into(),
        exact(p.components.giant_fraction, "union-find"),
        4,
    ));
    if let Some(k) = &p.directed {
        rows.push((
            "directed edges".into(),
            exact(k.directed_edges as f64, "count"),
            0,
        ));
        rows.push((
            "mutual pairs (listed both ways)".into(),
            exact(k.mutual_pairs as f64, "count"),
            0,
        ));
        if let Some(r) = k.reciprocity {
            rows.push((
                "reciprocity".into(),
                exact(r, "2 · mutual pairs / directed edges"),
                4,
            ));
        }
        rows.push((
            "largest out-degree".into(),
            exact(k.out_degree.max as f64, "count"),
            0,
        ));
        rows.push((
            "largest in-degree".into(),
            exact(k.in_degree.max as f64, "count"),
            0,
        ));
        rows.push((
            "strongly connected components".into(),
            exact(k.strong_components as f64, "Tarjan 1972"),
            0,
        ));
        rows.push((
            "share of nodes in the largest strongly connected component".into(),
            exact(k.largest_strong_fraction, "Tarjan 1972"),
            4,
        ));
        if let Some(c) = &k.clustering {
            rows.push((
                "directed clustering, average (Fagiolo total)".into(),
                exact(c.average, "Fagiolo 2007, eq. 9"),
                6,
            ));
            rows.push((
                "directed clustering, ratio (Fagiolo total)".into(),
                exact(
                    c.transitivity,
                    "Fagiolo 2007, eq. 9, summed before dividing",
                ),
                6,
            ));
        }
    }
    if let Some(c) = &p.clustering {
        rows.push(("triangles".into(), c.triangles.clone(), 0));
        rows.push(("transitivity".into(), c.transitivity.clone(), 6));
        rows.push((
            "average local clustering (degree < 2 as 0)".into(),
            c.average_zeros.clone(),
            6,
        ));
        rows.push((
            "average local clustering (degree ≥ 2 only)".into(),
            c.average_deg2.clone(),
            6,
        ));
    }
    if let Some(dm) = &p.diameter {
        rows.push(("diameter (hops)".into(), dm.diameter.clone(), 0));
    }
    if let Some(m) = mean_distance {
        rows.push(("mean distance (hops)".into(), m.clone(), 4));
    }
    if let Some(e) = effective {
        rows.push(("effective diameter, 90% (hops)".into(), e.clone(), 3));
    }
    if let Some(sw) = &p.small_world {
        for c in &sw.coefficients {
            // An undefined coefficient (a reference without clustering) has no row; the
            // verdicts below say why.
            for (name, f) in [
                ("sigma", &c.sigma),
                ("omega", &c.omega),
                ("small-world propensity", &c.propensity),
            ] {
                if let Some(f) = f {
                    rows.push((format!("{name}, with {}", c.clustering), f.clone(), 3));
                }
            }
        }
    }

    rows
}

/// Degree distribution: complementary CDF, log-log.
fn degree_chart(p: &Profile, charts: &mut Vec<Chart>) {
    let d = &p.degrees;
    let hist = &d.histogram;
    let total: u64 = hist.iter().sum();
    let mut ccdf = Vec::new();
    let mut above = total;
    for (k, &c) in hist.iter().enumerate() {
        if c > 0 && k > 0 {
            ccdf.push(Point {
                x: k as f64,
                y: above as f64 / total as f64,
                interval: None,
            });
        }
        above -= c;
    }
    if !ccdf.is_empty() {
        let x = Axis::fit("degree k", true, ccdf.iter().map(|p| p.x), false);
        let y = Axis::fit(
            "share of nodes with degree ≥ k",
            true,
            ccdf.iter().map(|p| p.y),
            false,
        );
        charts.push((
            chart(
                "degree-ccdf",
                "Degree distribution (complementary CDF)",
                "Share of nodes whose degree is at least k, on logarithmic axes; exact.",
                &x,
                &y,
                &[Series {
                    name: "nodes".into(),
                    mark: Mark::Circle,
                    line: true,
                    points: ccdf,
                }],
                &[],
            ),
            "Exact. A straight fall on these axes suggests a heavy tail.".to_string(),
        ));
    }
}

fn clustering_chart(p: &Profile, charts: &mut Vec<Chart>) {
    // C(k) with interval bars.
    if let Some(c) = &p.clustering {
        let pts: Vec<Point> = c
            .by_degree
            .iter()
            .map(|b| point(((b.low as f64) * (b.high as f64)).sqrt(), &b.mean))
            .collect();
        if !pts.is_empty() {
            let x = Axis::fit(
                "degree k (bin centre, log scale)",
                true,
                c.by_degree
                    .iter()
                    .flat_map(|b| [b.low as f64, b.high as f64]),
                false,
            );
            let y = Axis::fit(
                "mean local clustering C(k)",
                false,
                pts.iter()
                    .flat_map(|p| [p.y, p.interval.map_or(p.y, |i| i.1)]),
                true,
            );
            let exact = c.transitivity.is_exact();
            charts.push((
                chart(
                    "clustering-by-degree",
                    "Clustering against degree, C(k)",
                    "Mean local clustering of the nodes in each power-of-two degree bin, with interval bars when estimated.",
                    &x,
                    &y,
                    &[Series {
                        name: "C(k)".into(),
                        mark: Mark::Square,
                        line: true,
                        points: pts,
                    }],
                    &[],
                ),
                if exact {
                    "Exact, from triangle counts.".to_string()
                } else {
                    "Estimated by wedge sampling within each bin; bars are intervals.".to_string()
                },
            ));
        }
    }
}

fn distance_chart(p: &Profile, distribution: &[Figure], charts: &mut Vec<Chart>) {
    // Distance distribution.
    if !distribution.is_empty() {
        let pts: Vec<Point> = distribution
            .iter()
            .enumerate()
            .map(|(i, f)| point(i as f64 + 1.0, f))
            .collect();
        let x = Axis::fit(
            "distance (hops)",
            false,
            pts.iter().map(|p| p.x).chain([0.0]),
            true,
        );
        let y = Axis::fit(
            "share of connected pairs",
            false,
            pts.iter()
                .flat_map(|p| [p.y, p.interval.map_or(p.y, |i| i.1)]),
            true,
        );
        charts.push((
            chart(
                "distance-distribution",
                "Distance distribution",
                "Share of pairs of the giant component at each distance, with interval bars when estimated.",
                &x,
                &y,
                &[Series {
                    name: "pairs".into(),
                    mark: Mark::Circle,
                    line: true,
                    points: pts,
                }],
                &[],
            ),
            format!("On the {}.", p.distance_node_set),
        ));
    }
}

/// Small-world: the plane of clustering against mean distance, then the coefficients.
fn small_world_charts(
    p: &Profile,
    sw: &SmallWorld,
    mean_distance: Option<&Figure>,
    charts: &mut Vec<Chart>,
) {
    let mut series = Vec::new();
    if let (Some(c), Some(l)) = (&p.clustering, mean_distance) {
        series.push(Series {
            name: "this graph".into(),
            mark: Mark::Circle,
            line: false,
            points: vec![Point {
                x: l.value(),
                y: c.transitivity.value(),
                interval: point(0.0, &c.transitivity).interval,
            }],
        });
    }
    // The first random reference (sampled ones come first), the first degree-preserving
    // one, and the lattice: one marker shape each.
    let pick = |prefix: &str| sw.references.iter().find(|r| r.name.starts_with(prefix));
    for (label, r, mark) in [
        ("random", pick("random,"), Mark::Square),
        (
            "random, same degrees",
            pick("random with the same degrees"),
            Mark::Diamond,
        ),
        ("ring lattice", pick("ring lattice"), Mark::Triangle),
    ] {
        if let Some(r) = r
            && let (Some(t), Some(l)) = (&r.transitivity, &r.mean_distance)
        {
            series.push(Series {
                name: label.into(),
                mark,
                line: false,
                points: vec![Point {
                    x: l.value(),
                    y: t.value(),
                    interval: point(0.0, t).interval,
                }],
            });
        }
    }
    let xs: Vec<f64> = series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.x))
        .collect();
    let ys: Vec<f64> = series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.y))
        .collect();
    let x = Axis::fit("mean distance L (hops, log scale)", true, xs, false);
    let y = Axis::fit("transitivity C (log scale)", true, ys, false);
    charts.push((
        chart(
            "small-world-plane",
            "The graph among its references",
            "Transitivity against mean distance for the graph, its random references and the ring lattice.",
            &x,
            &y,
            &series,
            &[],
        ),
        "Small-world graphs sit high like the lattice and left like the random graphs."
            .to_string(),
    ));
    coefficient_chart(sw, charts);
}

/// Omega and propensity against their thresholds, with intervals.
fn coefficient_chart(sw: &SmallWorld, charts: &mut Vec<Chart>) {
    let names: Vec<String> = sw
        .coefficients
        .iter()
        .flat_map(|c| {
            let short = if c.clustering == "transitivity" {
                "C"
            } else {
                "avg C"
            };
            [format!("omega ({short})"), format!("propensity ({short})")]
        })
        .collect();
    let refs: Vec<&str> = names.iter().map(String::as_str).collect();
    let pts: Vec<Point> = sw
        .coefficients
        .iter()
        .enumerate()
        .flat_map(|(i, c)| {
            [
                c.omega.as_ref().map(|f| point(2.0 * i as f64 + 1.0, f)),
                c.propensity
                    .as_ref()
                    .map(|f| point(2.0 * i as f64 + 2.0, f)),
            ]
        })
        .flatten()
        .collect();
    if !pts.is_empty() {
        let x = Axis::categories("coefficient (clustering used)", &refs);
        let y = Axis::fit(
            "value",
            false,
            pts.iter()
                .flat_map(|p| {
                    let (a, b) = p.interval.unwrap_or((p.y, p.y));
                    [a, b]
                })
                .chain([-1.0, 1.0]),
            false,
        );
        charts.push((
            chart(
                "small-world-coefficients",
                "Small-world coefficients against their thresholds",
                "Omega (small-world between -0.5 and 0.5) and small-world propensity (small-world above 0.6), with intervals.",
                &x,
                &y,
                &[Series {
                    name: "coefficient".into(),
                    mark: Mark::Diamond,
                    line: false,
                    points: pts,
                }],
                &[
                    Guide {
                        y: 0.5,
                        label: "omega +0.5".into(),
                        at_left: false,
                    },
                    Guide {
                        y: -0.5,
                        label: "omega -0.5".into(),
                        at_left: false,
                    },
                    Guide {
                        y: 0.6,
                        label: "propensity 0.6".into(),
                        at_left: true,
                    },
                ],
            ),
            "Sigma is in the table: its scale grows with n.".to_string(),
        ));
    }
}

fn render(r: &Report, charts: &[Chart], rows: &[Row]) -> String {
    let p = &r.profile;
    let d = &p.degrees;
    let mut out = String::new();
    let i = &p.intake;
    let _ = write!(
        out,
        r#"<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>plumb profile: {}</title><style>{STYLE}</style></head><body><main><header><h1>Structure profile <span>{}</span></h1>"#,
        esc(&r.input.path),
        esc(&r.input.path)
    );
    let _ = write!(
        out,
        r#"<p class="meta">{} nodes · {} edges · {} edge lines read{} · plumb {} · report schema {} v{}</p><p class="meta">seed <code>{}</code> · intervals at {:.0}% · exact methods allowed {} s each · input checksum (XXH3-64) <code>{}</code></p></header>"#,
        d.nodes,
        d.edges,
        i.edge_lines,
        r.input
            .bytes
            .map_or(String::new(), |b| format!(" from {b} bytes")),
        esc(&r.plumb_version),
        esc(&r.schema),
        r.schema_version,
        r.settings.seed,
        100.0 * r.settings.level,
        r.settings.exact_seconds,
        r.input
            .xxh3
            .as_deref()
            .unwrap_or("not computed (standard input)")
    );
    if !charts.is_empty() {
        out.push_str(r#"<h2>Charts</h2><div class="charts">"#);
        for (svg, caption) in charts {
            let _ = write!(
                out,
                "<figure>{svg}<figcaption>{}</figcaption></figure>",
                esc(caption)
            );
        }
        out.push_str("</div>");
    }
    out.push_str(r#"<h2>Figures</h2><table><thead><tr><th scope="col">figure</th><th scope="col">value</th><th scope="col">interval</th><th scope="col">how it was obtained</th></tr></thead><tbody>"#);
    for (name, f, places) in rows {
        let (v, iv, how) = cells(f, *places);
        let _ = write!(
            out,
            r#"<tr><td>{}</td><td class="num">{}</td><td class="num">{}</td><td class="how">{}</td></tr>"#,
            esc(name),
            esc(&v),
            esc(&iv),
            esc(&how)
        );
    }
    out.push_str("</tbody></table>");
    if let Some(sw) = &p.small_world {
        let _ = write!(
            out,
            "<h2>Small-world reading</h2><p class=\"how\">On the {}.</p>",
            esc(&sw.node_set)
        );
        for c in &sw.coefficients {
            let _ = write!(
                out,
                "<p class=\"verdict\"><strong>With {} against {}:</strong> {}.</p>",
                esc(&c.clustering),
                esc(&c.compared_with),
                esc(&c.verdicts.join("; "))
            );
        }
        out.push_str("<ul class=\"how\">");
        for c in &sw.caveats {
            let _ = write!(out, "<li>{}</li>", esc(c));
        }
        out.push_str("</ul>");
    }
    out.push_str(r#"<h2>How each group was computed</h2><table><thead><tr><th scope="col">group</th><th scope="col">method</th><th scope="col">why</th></tr></thead><tbody>"#);
    for dcs in &p.plan {
        let _ = write!(
            out,
            "<tr><td>{}</td><td>{}</td><td class=\"how\">{}</td></tr>",
            esc(dcs.group.label()),
            esc(&dcs.method),
            esc(&dcs.reason)
        );
    }
    out.push_str("</tbody></table>");
    let stages: Vec<String> = p
        .stages
        .iter()
        .map(|s| format!("{} {:.2} s", s.name, s.seconds))
        .collect();
    let _ = writeln!(
        out,
        "<footer>Timings: {}. Written by plumb {}; figures and intervals also in the JSON report (same schema name and version).</footer></main></body></html>",
        esc(&stages.join(" · ")),
        esc(&r.plumb_version)
    );
    out
}

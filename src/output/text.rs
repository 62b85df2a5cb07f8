//! The reports as text for a 100-column terminal: intake, profile and sweep (comparisons are in
//! [`crate::monitor::changes`]). Numbers go through [`crate::output::number`], as in the HTML
//! page.

use std::fmt::Write as _;

pub use crate::output::number::{bytes, count};
use crate::output::number::{decimal, precision};

use crate::figure::{Figure, Method};
use crate::profile::{Distances, Profile};
use crate::read::source::Compression;
use crate::store::graph::Graph;
use crate::store::intake::{IdKind, InputFormat};

/// Columns a row's text may take, so that reports fit a 100-column terminal.
const TEXT_WIDTH: usize = 87;

/// A labelled row; long text continues on indented lines, broken between " · " parts where it
/// can and between words otherwise.
pub(crate) fn row(out: &mut String, label: &str, text: impl AsRef<str>) {
    let mut lines: Vec<String> = vec![String::new()];
    for part in text.as_ref().split(" · ") {
        let last = lines.last_mut().expect("one line");
        let joined = if last.is_empty() {
            part.chars().count()
        } else {
            last.chars().count() + 3 + part.chars().count()
        };
        if joined <= TEXT_WIDTH || last.is_empty() {
            if !last.is_empty() {
                last.push_str(" · ");
            }
            last.push_str(part);
        } else {
            lines.push(part.to_string());
        }
    }
    let lines: Vec<String> = lines
        .into_iter()
        .flat_map(|l| {
            if l.chars().count() > TEXT_WIDTH {
                wrap(&l, TEXT_WIDTH)
            } else {
                vec![l]
            }
        })
        .collect();
    for (i, l) in lines.iter().enumerate() {
        let _ = writeln!(out, "  {:<11}{l}", if i == 0 { label } else { "" });
    }
}

/// What was read, headed by the command that read it (`intake`, `pack`, `profile`).
pub fn intake_text(g: &Graph, command: &str) -> String {
    let mut out = read_rows(&g.intake, command);
    graph_rows(&mut out, g);
    out
}

/// What reading found, from the intake alone (no graph at hand, as in a distributed run).
fn read_rows(i: &crate::store::intake::Intake, command: &str) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "plumb {command} · {}", i.source);
    let codec = match i.compression {
        _ if i.parts.is_some() => format!(
            "{} part files read in parallel",
            count(i.parts.unwrap_or(0))
        ),
        Compression::None => "plain text".to_string(),
        Compression::Zstd => match i.frames {
            Some(f) if f > 1 => format!("zstd ({f} frames, decoded in parallel)"),
            _ => "zstd (1 frame)".to_string(),
        },
        Compression::Gzip => "gzip".to_string(),
        Compression::Parquet => "Parquet".to_string(),
    };
    let grammar = match i.format {
        InputFormat::EdgeList => "edge list",
        InputFormat::MatrixMarket => "Matrix Market coordinate",
        InputFormat::Parquet => "two id columns",
    };
    let ids = match i.id_kind {
        IdKind::Integer => "integer ids",
        IdKind::Text => "text ids",
    };
    let size = if i.text_bytes == i.input_bytes
        || matches!(i.compression, Compression::None | Compression::Parquet) && i.parts.is_none()
    {
        bytes(i.input_bytes)
    } else {
        format!("{} → {} of text", bytes(i.input_bytes), bytes(i.text_bytes))
    };
    let read = format!("{size}, {codec}, {grammar}, {ids}");
    match &i.packed_from {
        Some(text) => row(
            &mut out,
            "read",
            format!("store file, mapped in place · packed from {text}: {read}"),
        ),
        None => row(&mut out, "read", read),
    }
    if let Some(d) = &i.on_disk {
        row(
            &mut out,
            "built",
            format!(
                "on disk, within a memory budget of {}: {} sorted runs ({}) merged into a \
                 store file; the analyses read it as mapped pages, from disk as needed",
                bytes(d.memory_budget),
                count(d.runs),
                bytes(d.run_bytes)
            ),
        );
    }
    // A Parquet file's lines are its rows.
    let line_word = if i.format == InputFormat::Parquet {
        "row"
    } else {
        "line"
    };
    if let Some(f) = &i.first_text_id {
        let line_word = match &f.part {
            Some(part) => format!("{part}, {line_word}"),
            None => line_word.to_string(),
        };
        let why = if f.integer_too_large {
            format!(
                "{:?} on {} {} is an integer beyond 2^64-1, so every id is read as text \
                 (007 and 7 are then different nodes)",
                f.id,
                line_word,
                count(f.line)
            )
        } else {
            format!(
                "text because of {:?} on {} {}, the first id that is not an integer",
                f.id,
                line_word,
                count(f.line)
            )
        };
        row(&mut out, "ids", why);
    }
    let mut lines = format!(
        "{} = {} edge lines + {} comment + {} blank",
        count(i.lines),
        count(i.edge_lines),
        count(i.comment_lines),
        count(i.blank_lines)
    );
    match (&i.header_line, i.header_lines) {
        (Some(h), Some(n)) if n > 1 => {
            let _ = write!(lines, " + {} headers {h:?}", count(n));
        }
        (Some(h), _) => {
            let _ = write!(lines, " + 1 header {h:?}");
        }
        _ => {}
    }
    if i.malformed_skipped > 0 {
        let _ = write!(
            lines,
            " + {} malformed (skipped)",
            count(i.malformed_skipped)
        );
    }
    row(&mut out, "lines", lines);
    if let Some(c) = &i.id_columns {
        row(&mut out, "ids from", c.clone());
    }
    for b in &i.malformed_examples {
        row(
            &mut out,
            "",
            format!(
                "  skipped {}line {} (byte {}): {} — {:?}",
                b.part.as_ref().map_or(String::new(), |p| format!("{p}, ")),
                count(b.line),
                count(b.byte),
                b.problem,
                b.excerpt
            ),
        );
    }
    row(
        &mut out,
        "cleaned",
        if i.directed {
            format!(
                "{} self-loops dropped · {} repeated lines merged · read as directed: {} pairs \
                 listed both ways kept as mutual edges",
                count(i.self_loops),
                count(i.repeated_lines),
                count(i.reciprocal_pairs)
            )
        } else {
            format!(
                "{} self-loops dropped · {} repeated lines and {} reciprocal pairs merged",
                count(i.self_loops),
                count(i.repeated_lines),
                count(i.reciprocal_pairs)
            )
        },
    );
    if i.extra_column_lines > 0 {
        row(
            &mut out,
            "columns",
            format!(
                "{} lines carried extra columns (ignored)",
                count(i.extra_column_lines)
            ),
        );
    }
    out
}

/// Nodes, edges and isolated nodes, from what reading found.
fn graph_row(out: &mut String, i: &crate::store::intake::Intake) {
    row(
        out,
        "graph",
        format!(
            "{} nodes · {} edges · {} isolated nodes",
            count(i.nodes),
            count(i.edges),
            count(i.isolated_nodes)
        ),
    );
}

/// The graph built: size, degrees, the store's footprint and the stage timings.
fn graph_rows(out: &mut String, g: &Graph) {
    let i = &g.intake;
    graph_row(out, i);
    let d = g.degree_summary();
    row(
        out,
        "degree",
        format!(
            "min {} · mean {:.2} · max {}",
            count(d.min as u64),
            d.mean,
            count(d.max as u64)
        ),
    );
    let n = g.node_count().max(1) as f64;
    let m = g.edge_count().max(1) as f64;
    row(
        out,
        "store",
        format!(
            "{} resident: {:.1} B per edge + {:.1} B per node (offsets and ids){}",
            bytes(g.store_bytes()),
            (g.csr.targets().len() as f64 * 4.0
                + g.directions.as_ref().map_or(0.0, |d| d.len() as f64))
                / m,
            (g.csr.offsets().len() as f64 * 8.0 + g.ids.bytes() as f64) / n,
            if g.csr.is_mapped() {
                ", mapped from the store file"
            } else {
                ""
            }
        ),
    );
    if !i.stages.is_empty() {
        let parts: Vec<String> = i
            .stages
            .iter()
            .map(|s| format!("{} {:.2} s", s.name, s.seconds))
            .collect();
        row(
            out,
            "time",
            format!("{} = {:.2} s", parts.join(" · "), i.total_seconds()),
        );
    }
}

pub(crate) fn section(out: &mut String, title: &str) {
    let _ = writeln!(out, "  ── {title}");
}

fn fixed(v: f64, places: usize) -> String {
    decimal(v, places)
}

/// Break `text` into lines of at most `width` characters at spaces.
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = vec![String::new()];
    for word in text.split(' ') {
        let last = lines.last_mut().expect("one line at least");
        if !last.is_empty() && last.chars().count() + 1 + word.chars().count() > width {
            lines.push(word.to_string());
        } else {
            if !last.is_empty() {
                last.push(' ');
            }
            last.push_str(word);
        }
    }
    lines
}

/// A figure as text: exact ones as the value; estimates with their half-width and interval.
fn fig(f: &Figure, places: usize) -> String {
    match (&f.method(), &f.interval()) {
        (Method::Estimate { .. }, Some(iv)) => {
            let half = ((iv.high - iv.low) / 2.0).abs();
            let p = precision(f.value(), half, places);
            format!(
                "{} ± {} ({:.0}%: {}–{})",
                p.show(f.value()),
                p.show_half(half),
                100.0 * iv.level,
                p.show(iv.low),
                p.show(iv.high)
            )
        }
        (Method::Bounds { .. }, Some(iv)) => format!(
            "between {} and {}",
            fixed(iv.low, places),
            fixed(iv.high, places)
        ),
        _ => fixed(f.value(), places),
    }
}

/// The profile as text: what was read, then one section per figure group and the methods.
pub fn profile_text(g: &Graph, p: &Profile, per_node: Option<&std::path::Path>) -> String {
    let mut out = intake_text(g, "profile");
    size_text(&mut out, p);
    if let Some(d) = &p.directed {
        directed_text(&mut out, d);
    }
    if let Some(k) = &p.clustering {
        clustering_text(&mut out, k);
    }
    distance_text(&mut out, p);
    if let Some(sw) = &p.small_world {
        small_world_text(&mut out, sw);
    }
    method_text(&mut out, p, per_node);
    out
}

/// A distributed profile as text: what was read, how the run went, then the figure groups.
pub fn spread_text(p: &Profile, run: &crate::profile::report::SpreadRun) -> String {
    let mut out = read_rows(&p.intake, "spread");
    graph_row(&mut out, &p.intake);
    row(
        &mut out,
        "run",
        format!(
            "{} processes · {} workers · {} items exchanged · components in {} label rounds{}",
            count(run.processes),
            count(run.workers),
            count(run.exchanged_items),
            count(run.label_rounds),
            if run.wedge_rounds > 0 {
                format!(" · triangles in {} wedge rounds", count(run.wedge_rounds))
            } else {
                String::new()
            }
        ) + &if run.ball_rounds > 0 {
            format!(" · HyperBall in {} rounds", count(run.ball_rounds))
        } else {
            String::new()
        },
    );
    size_text(&mut out, p);
    if let Some(k) = &p.clustering {
        clustering_text(&mut out, k);
    }
    distance_text(&mut out, p);
    if let Some(sw) = &p.small_world {
        small_world_text(&mut out, sw);
    }
    section(&mut out, "not distributed yet");
    row(
        &mut out,
        "left out",
        "the exact diameter and the sampled reference graphs: profile a store of the graph on \
         one machine for them",
    );
    let times: Vec<String> = p
        .stages
        .iter()
        .map(|s| format!("{} {:.2} s", s.name.label(), s.seconds))
        .collect();
    row(&mut out, "time", times.join(" · "));
    out
}

fn size_text(out: &mut String, p: &Profile) {
    let out = &mut *out;
    let d = &p.degrees;
    section(out, "size and degrees");
    row(
        out,
        "size",
        format!(
            "{} nodes · {} edges · density {:.3e} · {} isolated",
            count(d.nodes),
            count(d.edges),
            d.density,
            count(d.isolated)
        ),
    );
    row(
        out,
        "degree",
        format!(
            "min {} · mean {:.3} · max {} · <k²> {:.2} · assortativity {}",
            count(d.min as u64),
            d.mean,
            count(d.max as u64),
            d.second_moment,
            d.assortativity
                .map_or("undefined".to_string(), |r| format!("{r:+.4}"))
        ),
    );
    let bins: Vec<String> = d
        .log_bins
        .iter()
        .map(|b| {
            if b.low == b.high {
                format!("{}: {}", b.low, count(b.nodes))
            } else {
                format!("{}–{}: {}", b.low, b.high, count(b.nodes))
            }
        })
        .collect();
    row(out, "by degree", bins.join(" · "));
    let c = &p.components;
    section(out, "components");
    row(
        out,
        "count",
        format!(
            "{} · giant {} nodes ({:.2}%), {} edges · {} singletons",
            count(c.count),
            count(c.giant_nodes),
            100.0 * c.giant_fraction,
            count(c.giant_edges),
            count(c.singletons)
        ),
    );
}

/// The directed figures, and a reminder that the other sections are on the symmetrised graph.
fn directed_text(out: &mut String, d: &crate::exact::directed::DirectedStats) {
    section(out, "directed");
    row(
        out,
        "edges",
        format!(
            "{} directed · {} mutual pairs · reciprocity {}",
            count(d.directed_edges),
            count(d.mutual_pairs),
            d.reciprocity
                .map_or("undefined".to_string(), |r| { decimal(r, 4) })
        ),
    );
    for (label, s) in [("out-degree", &d.out_degree), ("in-degree", &d.in_degree)] {
        row(
            out,
            label,
            format!(
                "min {} · mean {:.3} · max {} · <k²> {:.2} · {} nodes at 0",
                count(s.min as u64),
                s.mean,
                count(s.max as u64),
                s.second_moment,
                count(s.zero)
            ),
        );
    }
    row(
        out,
        "weakly",
        format!(
            "{} components · largest {} nodes",
            count(d.weak_components),
            count(d.largest_weak)
        ),
    );
    row(
        out,
        "strongly",
        format!(
            "{} components · largest {} nodes ({:.2}%) · {} single nodes",
            count(d.strong_components),
            count(d.largest_strong),
            100.0 * d.largest_strong_fraction,
            count(d.strong_singletons)
        ),
    );
    match &d.clustering {
        Some(c) => row(
            out,
            "clustering",
            format!(
                "Fagiolo total: average {} · ratio {} · {} directed triangles",
                decimal(c.average, 4),
                decimal(c.transitivity, 4),
                count(c.directed_triangles)
            ),
        ),
        None => row(
            out,
            "clustering",
            "not computed: directed clustering runs when clustering is exact (--clustering exact)",
        ),
    }
    row(
        out,
        "note",
        "every other section is computed on the symmetrised graph (u–v when u → v or v → u)",
    );
}

fn clustering_text(out: &mut String, k: &crate::exact::clustering::ClusteringStats) {
    let exact = k.transitivity.is_exact();
    section(
        out,
        if exact {
            "clustering (exact, forward triangle listing)"
        } else {
            "clustering (estimated by wedge sampling; ± is the interval's half-width)"
        },
    );
    if exact {
        row(
            out,
            "triangles",
            format!(
                "{} · wedges {} · transitivity {}",
                count(k.triangles.value() as u64),
                u64::try_from(k.wedges).map_or(k.wedges.to_string(), count),
                fixed(k.transitivity.value(), 6)
            ),
        );
    } else {
        row(
            out,
            "triangles",
            format!(
                "{} · transitivity {}",
                fig(&k.triangles, 0),
                fig(&k.transitivity, 4)
            ),
        );
        row(
            out,
            "",
            format!(
                "from {} sampled wedges of {}",
                count(k.transitivity.sample_size().unwrap_or(0)),
                u64::try_from(k.wedges).map_or(k.wedges.to_string(), count),
            ),
        );
    }
    let places = if exact { 6 } else { 4 };
    row(
        out,
        "local",
        format!(
            "average {} with degree<2 as 0",
            fig(&k.average_zeros, places),
        ),
    );
    row(
        out,
        "",
        format!(
            "average {} over degree≥2 only",
            fig(&k.average_deg2, places)
        ),
    );
    let ck: Vec<String> = k
        .by_degree
        .iter()
        .map(|b| match &b.mean.interval() {
            Some(iv) if !b.mean.is_exact() => {
                let half = (iv.high - iv.low) / 2.0;
                let p = precision(b.mean.value(), half, 3);
                format!(
                    "{}–{}: {}±{}",
                    b.low,
                    b.high,
                    p.show(b.mean.value()),
                    p.show_half(half)
                )
            }
            _ => format!("{}–{}: {}", b.low, b.high, fixed(b.mean.value(), 3)),
        })
        .collect();
    row(out, "C(k)", ck.join(" · "));
}

fn distance_text(out: &mut String, p: &Profile) {
    if !matches!(p.distances, Distances::NotRequested) {
        section(out, &format!("distances on the {}", p.distance_node_set));
    }

    if let Some(dm) = &p.diameter {
        let f = &dm.diameter;
        let text = match (&f.method(), &f.interval()) {
            (Method::Bounds { .. }, Some(iv)) => format!(
                "between {} and {} for certain (double-sweep bound, then iFUB stopped at the \
                 --diameter-within budget after {} BFS runs)",
                iv.low,
                iv.high,
                count(dm.bfs_runs)
            ),
            (Method::Exact { algorithm }, _) if algorithm.contains("iFUB") => format!(
                "{} (exact: double-sweep bound {}, then iFUB; {} BFS runs)",
                f.value(),
                dm.double_sweep_bound,
                count(dm.bfs_runs)
            ),
            _ => format!(
                "{} (exact, from all-pairs distances; the double-sweep bound was {})",
                f.value(),
                dm.double_sweep_bound
            ),
        };
        row(out, "diameter", text);
    }
    match &p.distances {
        Distances::Exact(s) => {
            row(
                out,
                "mean",
                format!(
                    "{} over {} ordered pairs (exact, all-pairs BFS)",
                    fixed(s.mean.value(), 6),
                    count(s.pairs)
                ),
            );
            if let Some(r) = &s.radius {
                row(out, "radius", format!("{}", r.value()));
            }
            row(
                out,
                "effective",
                format!(
                    "diameter {:.3} (90% of pairs, interpolated, self pairs excluded; {:.3} with them)",
                    s.effective_diameter.value(),
                    s.effective_diameter_with_self
                ),
            );
            let dist: Vec<String> = s
                .distribution
                .iter()
                .enumerate()
                .skip(1)
                .map(|(d, &c)| format!("{d}: {}", count(c / 2)))
                .collect();
            row(
                out,
                "pairs at d",
                format!("{} (unordered)", dist.join(" · ")),
            );
        }
        Distances::Estimated(e) => {
            row(out, "mean", fig(&e.mean, 4));
            row(
                out,
                "effective",
                format!(
                    "diameter {} (90% of pairs, interpolated, self pairs excluded)",
                    fig(&e.effective_diameter, 3)
                ),
            );
            let dist: Vec<String> = e
                .distribution
                .iter()
                .enumerate()
                .filter(|(_, f)| f.value() >= 0.0005)
                .map(|(d, f)| format!("{}: {:.1}%", d + 1, 100.0 * f.value()))
                .collect();
            row(
                out,
                "pairs at d",
                format!("{} (share of pairs, estimated)", dist.join(" · ")),
            );
        }
        Distances::Empty => row(out, "mean", "no pairs: the graph has no edges"),
        Distances::NotRequested => {}
    }
    let unreachable = match &p.distances {
        Distances::Exact(s) => s.unreachable_pairs_in_graph,
        Distances::Estimated(e) => e.unreachable_pairs_in_graph,
        Distances::Empty | Distances::NotRequested => 0,
    };
    if unreachable > 0 {
        row(
            out,
            "unreached",
            format!(
                "{} unordered pairs of the whole graph are in different components",
                count(unreachable / 2)
            ),
        );
    }
}

fn small_world_text(out: &mut String, sw: &crate::models::smallworld::SmallWorld) {
    section(
        out,
        &format!("small-world comparison on the {}", sw.node_set),
    );
    for r in &sw.references {
        let part = |label: &str, f: &Option<Figure>, places: usize| {
            f.as_ref().map(|f| format!("{label} {}", fig(f, places)))
        };
        let parts: Vec<String> = [
            part("C", &r.transitivity, 4),
            part("avg C", &r.average_clustering, 4),
            part("L", &r.mean_distance, 3),
        ]
        .into_iter()
        .flatten()
        .collect();
        row(out, "reference", format!("{}:", r.name));
        row(out, "", parts.join(" · "));
    }
    for c in &sw.coefficients {
        row(
            out,
            "with",
            format!("{} against {}:", c.clustering, c.compared_with),
        );
        let shown = |f: &Option<Figure>| f.as_ref().map_or("undefined".to_string(), |f| fig(f, 3));
        row(out, "sigma", shown(&c.sigma));
        row(out, "omega", shown(&c.omega));
        row(out, "propensity", shown(&c.propensity));
        for (i, v) in c.verdicts.iter().enumerate() {
            row(out, if i == 0 { "reading" } else { "" }, v);
        }
    }
    for c in &sw.caveats {
        for (i, line) in wrap(c, 86).iter().enumerate() {
            row(out, if i == 0 { "note" } else { "" }, line);
        }
    }
}

fn method_text(out: &mut String, p: &Profile, per_node: Option<&std::path::Path>) {
    section(out, "method");
    for d in &p.plan {
        row(out, d.group.label(), &d.method);
        row(out, "", format!("why: {}", d.reason));
    }
    let parts: Vec<String> = p
        .stages
        .iter()
        .map(|s| format!("{} {:.2} s", s.name, s.seconds))
        .collect();
    row(out, "time", parts.join(" · "));
    if let Some(path) = per_node {
        row(out, "per node", format!("written to {}", path.display()));
    }
}

/// The Watts–Strogatz sweep as a table, with each ratio's interval half-width.
pub fn sweep_text(s: &crate::models::sweep::Sweep) -> String {
    let mut out = String::new();
    let graphs = s.rows.first().map_or(0, |r| r.graphs);
    let level = s
        .rows
        .iter()
        .find_map(|r| r.clustering_ratio.interval().map(|iv| iv.level))
        .unwrap_or(0.95);
    let _ = writeln!(
        out,
        "plumb sweep · Watts–Strogatz n={} k={} · {graphs} seeded graphs per p · ± half-width of \
         the {:.0}% interval",
        s.nodes,
        s.degree,
        100.0 * level
    );
    let _ = writeln!(
        out,
        "  C(0) = {:.6} (3(k-2)/(4(k-1))) · L(0) = {:.6} (exact, ring lattice)",
        s.lattice_clustering, s.lattice_mean_distance
    );
    let _ = writeln!(
        out,
        "  {:<8} {:<18} {:<18} {:<18} L(p)",
        "p", "C(p)/C(0)", "L(p)/L(0)", "C(p)"
    );
    let pm = |f: &Figure| match f.interval() {
        Some(iv) => {
            let half = (iv.high - iv.low) / 2.0;
            let p = precision(f.value(), half, 4);
            format!("{} ± {}", p.show(f.value()), p.show_half(half))
        }
        None => decimal(f.value(), 4),
    };
    for r in &s.rows {
        let _ = writeln!(
            out,
            "  {:<8} {:<18} {:<18} {:<18} {}",
            r.p,
            pm(&r.clustering_ratio),
            pm(&r.distance_ratio),
            pm(&r.clustering),
            pm(&r.mean_distance)
        );
    }
    out
}

//! The command line: each command parses its words (`args`), calls one library workflow, prints
//! what it returns and maps failures to exit codes. No figure is computed here.

mod args;
mod bars;
mod spread;

use std::path::{Path, PathBuf};
use std::process::ExitCode;

pub(crate) use args::Args;
use args::{CheckArgs, Command, InputArgs, SynthModel};
use plumb::error::{Error, ErrorClass};
use plumb::outfile::{refuse_overwrite, write_atomic};
use plumb::output::text as show;
use plumb::profile::settings::PlanSettings;
use plumb::store::load::load;

/// Exit codes (documented in the README).
const EXIT_USAGE: u8 = 2;
const EXIT_BAD_INPUT: u8 = 3;
pub(crate) const EXIT_IO: u8 = 4;
const EXIT_BUDGET: u8 = 5;
/// A change alert fired (track, compare).
const EXIT_ALERT: u8 = 6;

pub(crate) fn exit_code(e: &Error) -> ExitCode {
    ExitCode::from(exit_number(e))
}

fn exit_number(e: &Error) -> u8 {
    match e.class() {
        ErrorClass::BadInput => EXIT_BAD_INPUT,
        ErrorClass::Io => EXIT_IO,
        ErrorClass::Budget => EXIT_BUDGET,
        ErrorClass::Usage => EXIT_USAGE,
    }
}

fn usage(problem: impl Into<String>) -> Error {
    Error::Parameters {
        problem: problem.into(),
    }
}

fn is_stdout(p: &Path) -> bool {
    p.as_os_str() == "-"
}

/// Outputs that must be files (a store, an edge list, a page written beside others): `-` is
/// refused rather than creating a file named `-`.
fn file_only(option: &str, p: &Path) -> Result<(), Error> {
    if is_stdout(p) {
        return Err(usage(format!(
            "{option} needs a file name; `-` (standard output) is not accepted here"
        )));
    }
    Ok(())
}

/// Print `text()`, or with `json` write `json_text()` to that file (`-`: print it instead).
fn emit(
    json: Option<&Path>,
    json_text: impl FnOnce() -> String,
    text: impl FnOnce() -> String,
) -> Result<(), Error> {
    match json {
        Some(p) if is_stdout(p) => print!("{}", json_text()),
        Some(p) => {
            write_atomic(p, json_text().as_bytes())?;
            print!("{}", text());
            println!("  {:<11}JSON {}", "wrote", p.display());
        }
        None => print!("{}", text()),
    }
    Ok(())
}

fn alert_code(alerts: usize) -> ExitCode {
    if alerts > 0 {
        ExitCode::from(EXIT_ALERT)
    } else {
        ExitCode::SUCCESS
    }
}

pub(crate) fn run(args: Args) -> Result<ExitCode, Error> {
    if let Some(t) = args.threads {
        // Only fails if a pool exists already, which cannot happen this early.
        let _ = rayon::ThreadPoolBuilder::new()
            .num_threads(t)
            .build_global();
    }
    let bars = bars::Bars::new(args.quiet);
    match args.command {
        Command::Profile {
            input,
            json,
            html,
            per_node,
            plan,
        } => profile(&input, json, html, per_node, &plan, &bars)?,
        Command::Schema => print!("{}", plumb::profile::report::schema_json()),
        Command::Track {
            history,
            input,
            label,
            pin,
            again,
            check,
            plan,
        } => {
            let opts = plumb::monitor::track::TrackOptions {
                label,
                pin,
                again,
                rules: check.rules(),
                ..Default::default()
            };
            return track(&history, &input, &opts, &check, &plan, &bars);
        }
        Command::Compare {
            before,
            after,
            check,
            plan,
        } => return compare(&before, &after, &check, &plan, &bars),
        Command::Trend {
            history,
            out,
            check,
        } => trend(&history, &out, &check)?,
        Command::Spread {
            input,
            json,
            local,
            peers,
            rank,
            workers,
            no_clustering,
            sampled_clustering,
            clustering_margin,
            clustering_relative,
            sources,
            hyperball,
            ball_registers,
            ball_runs,
            no_small_world,
            level,
            seed,
        } => {
            use plumb::spread::{SpreadClustering, SpreadDistances};
            let defaults = plumb::profile::ProfileOptions::default();
            let clustering = if no_clustering {
                SpreadClustering::Off
            } else if sampled_clustering {
                SpreadClustering::Sampled {
                    margin: plumb::profile::Margin {
                        absolute: clustering_margin,
                        relative: clustering_relative,
                        ..defaults.clustering_margin
                    },
                    bin_margin: defaults.bin_margin,
                }
            } else {
                SpreadClustering::Exact
            };
            let distances = if hyperball {
                SpreadDistances::Ball(plumb::estimate::hyperball::BallOptions {
                    log2_registers: ball_registers.trailing_zeros() as u8,
                    repeats: ball_runs,
                    level,
                    seed,
                })
            } else if sources > 0 {
                SpreadDistances::Sources(sources)
            } else {
                SpreadDistances::Off
            };
            let how = spread::How {
                local,
                peers,
                rank,
                workers,
                want: plumb::spread::SpreadOptions {
                    clustering,
                    distances,
                    small_world: !no_small_world,
                    level,
                    seed,
                },
                quiet: args.quiet,
            };
            spread::run(&input, json.as_deref(), &how)?
        }
        Command::Intake { input, json } => {
            refuse_overwrite(json.as_deref().unwrap_or(Path::new("-")), &input.input)?;
            let g = load(&input.input, &input.options(), &bars)?;
            emit(
                json.as_deref(),
                || plumb::output::json::intake_json(&g),
                || show::intake_text(&g, "intake"),
            )?;
        }
        Command::Pack { input, out } => pack(&input, &out, &bars)?,
        Command::Verify { store } => verify(&store)?,
        Command::Synth { model, out, seed } => {
            let out = out.ok_or_else(|| usage("synth needs an output file: -o FILE"))?;
            synth(model, &out, seed, &bars)?;
        }
        Command::Sweep {
            nodes,
            degree,
            p,
            graphs,
            json,
            seed,
        } => sweep(nodes, degree, &p, graphs, json.as_deref(), seed, &bars)?,
        Command::DemoData { out, seed, weeks } => demo_data(&out, seed, weeks)?,
    }
    Ok(ExitCode::SUCCESS)
}

fn profile(
    input: &InputArgs,
    json: Option<PathBuf>,
    html: Option<PathBuf>,
    per_node: Option<PathBuf>,
    plan: &PlanSettings,
    bars: &bars::Bars,
) -> Result<(), Error> {
    let outputs = [json.as_deref(), html.as_deref(), per_node.as_deref()];
    for out in outputs.into_iter().flatten() {
        refuse_overwrite(out, &input.input)?;
    }
    let to_stdout = outputs
        .into_iter()
        .flatten()
        .filter(|p| is_stdout(p))
        .count();
    if to_stdout > 1 {
        return Err(usage(
            "only one of --json, --html and --per-node can be `-` (standard output)",
        ));
    }
    let opts = plan.options();
    let g = load(&input.input, &input.options(), bars)?;
    let (p, table) = plumb::profile::profile(&g, &opts, bars);
    let source = (!is_stdout(&input.input)).then_some(input.input.as_path());
    let mut report = plumb::profile::report::Report::new(p, source, &opts)?;
    if json.is_some() {
        // JSON reports are kept and compared later: carry the id sketches for churn.
        report = report.with_sketch(&g);
    }
    let mut written = Vec::new();
    let mut printed = None;
    if let Some(path) = &per_node {
        if is_stdout(path) {
            printed = Some(
                String::from_utf8_lossy(&plumb::output::pernode::render(&g, &table)).into_owned(),
            );
        } else {
            plumb::output::pernode::write(&g, &table, path)?;
        }
    }
    if let Some(path) = &html {
        let page = plumb::output::html::page(&report);
        if is_stdout(path) {
            printed = Some(page);
        } else {
            write_atomic(path, page.as_bytes())?;
            written.push(format!("HTML {}", path.display()));
        }
    }
    if let Some(path) = &json {
        let mut text = serde_json::to_string_pretty(&report).unwrap_or_default();
        text.push('\n');
        if is_stdout(path) {
            printed = Some(text);
        } else {
            write_atomic(path, text.as_bytes())?;
            written.insert(0, format!("JSON {}", path.display()));
        }
    }
    match printed {
        Some(text) => print!("{text}"),
        None => {
            let table_file = per_node.as_deref();
            print!("{}", show::profile_text(&g, &report.profile, table_file));
            if !written.is_empty() {
                println!("  {:<11}{}", "wrote", written.join(" · "));
            }
        }
    }
    Ok(())
}

fn track(
    dir: &Path,
    input: &InputArgs,
    opts: &plumb::monitor::track::TrackOptions,
    check: &CheckArgs,
    plan: &PlanSettings,
    bars: &bars::Bars,
) -> Result<ExitCode, Error> {
    let t = plumb::monitor::track::track(
        dir,
        &input.input,
        &input.options(),
        &plan.options(),
        opts,
        bars,
    )?;
    for p in &t.problems {
        eprintln!("plumb: {}: {}: {}", dir.display(), p.file, p.what);
    }
    emit(
        check.verdict_json.as_deref(),
        || {
            plumb::output::json::to_json(
                "track",
                &serde_json::json!({
                    "added": {"seq": t.entry.seq, "label": t.entry.label, "file": t.entry.file},
                    "comparisons": t.comparisons,
                    "estimated_churn_since_previous": t.churn_since_previous,
                    "alerts": t.alerts,
                }),
            )
        },
        || {
            let mut text = format!(
                "plumb track · {} · added snapshot #{} \"{}\" ({} nodes, {} edges)\n",
                dir.display(),
                t.entry.seq,
                t.entry.label,
                t.report.profile.degrees.nodes,
                t.report.profile.degrees.edges
            );
            if t.comparisons.is_empty() {
                text.push_str("  first snapshot: it is the baseline; nothing to compare yet\n");
            }
            for (i, d) in t.comparisons.iter().enumerate() {
                text.push_str(&plumb::monitor::changes::drift_text(d, None));
                if i == 0
                    && let Some(c) = &t.churn_since_previous
                {
                    text.push_str(&plumb::monitor::changes::sketch_churn_text(c));
                }
            }
            text
        },
    )?;
    Ok(alert_code(t.alerts))
}

fn compare(
    before: &Path,
    after: &Path,
    check: &CheckArgs,
    plan: &PlanSettings,
    bars: &bars::Bars,
) -> Result<ExitCode, Error> {
    let c = plumb::monitor::compare::compare(
        before,
        after,
        &plumb::store::load::LoadOptions::default(),
        &plan.options(),
        &check.rules(),
        bars,
    )?;
    emit(
        check.verdict_json.as_deref(),
        || plumb::output::json::to_json("comparison", &c),
        || {
            let mut t = plumb::monitor::changes::drift_text(&c.drift, c.churn.as_ref());
            if let Some(e) = &c.estimated_churn {
                t.push_str(&plumb::monitor::changes::sketch_churn_text(e));
            }
            t
        },
    )?;
    Ok(alert_code(c.drift.alerts))
}

fn trend(history: &Path, out: &Path, check: &CheckArgs) -> Result<(), Error> {
    file_only("trend -o", out)?;
    let h = plumb::monitor::history::History::open_existing(history)?;
    for p in &h.problems {
        eprintln!("plumb: {}: {}: {}", history.display(), p.file, p.what);
    }
    if h.reports().is_empty() {
        return Err(Error::Report {
            path: history.to_path_buf(),
            problem: "the history holds no readable snapshot (add one with plumb track)".into(),
        });
    }
    let page = plumb::monitor::trend::page(&h, check.alert_level, &check.alert_on);
    write_atomic(out, page.as_bytes())?;
    println!(
        "wrote {}: {} snapshots of {}",
        out.display(),
        h.index.entries.len(),
        history.display()
    );
    Ok(())
}

fn pack(input: &InputArgs, out: &Path, bars: &bars::Bars) -> Result<(), Error> {
    file_only("pack -o", out)?;
    refuse_overwrite(out, &input.input)?;
    let t = std::time::Instant::now();
    let (g, bytes) = plumb::store::load::pack(&input.input, out, &input.options(), bars)?;
    print!("{}", show::intake_text(&g, "pack"));
    println!(
        "  {:<11}{} ({}); {:.2} s from reading to the store on disk",
        "wrote",
        out.display(),
        show::bytes(bytes),
        t.elapsed().as_secs_f64()
    );
    Ok(())
}

fn verify(store: &Path) -> Result<(), Error> {
    let t = std::time::Instant::now();
    let g = plumb::store::file::open(store)?;
    let opened = t.elapsed().as_secs_f64();
    g.csr.verify().map_err(|v| Error::Store {
        path: store.to_path_buf(),
        problem: v.to_string(),
    })?;
    g.verify_directions().map_err(|problem| Error::Store {
        path: store.to_path_buf(),
        problem,
    })?;
    println!(
        "{}: ok — {} nodes, {} edges; checksum and layout checked on open ({:.3} s), lists \
         sorted and symmetric{} ({:.3} s)",
        store.display(),
        show::count(g.node_count() as u64),
        show::count(g.edge_count()),
        opened,
        if g.directions.is_some() {
            ", directions mirrored"
        } else {
            ""
        },
        t.elapsed().as_secs_f64() - opened
    );
    Ok(())
}

fn synth(model: SynthModel, out: &Path, seed: u64, bars: &bars::Bars) -> Result<(), Error> {
    use plumb::models::synth::Detail;
    file_only("synth -o", out)?;
    let s = plumb::models::synth::synth(&model.recipe(), out, seed, bars)?;
    let detail = match s.detail {
        Detail::Lonely { nodes: 0 } => "every node has an edge".to_string(),
        Detail::Lonely { nodes } => format!(
            "{} nodes have no edge and so do not appear in the edge list",
            show::count(nodes)
        ),
        Detail::Swaps {
            accepted,
            attempted,
        } => format!(
            "{} of {} attempted swaps made (the rest would have made a loop or a repeat)",
            show::count(accepted),
            show::count(attempted)
        ),
        Detail::Erased { loops, repeats } => format!(
            "{} self-loops and {} repeated pairs erased",
            show::count(loops),
            show::count(repeats)
        ),
    };
    println!("wrote {}: {}", out.display(), s.description);
    println!(
        "  {} nodes · {} edges · {} in {:.2} s ({:.1} M edges/s) · {detail}",
        show::count(s.nodes),
        show::count(s.edges),
        show::bytes(s.bytes),
        s.seconds,
        s.edges as f64 / s.seconds.max(1e-9) / 1e6
    );
    Ok(())
}

fn sweep(
    nodes: u32,
    degree: u32,
    ps: &[f64],
    graphs: usize,
    json: Option<&Path>,
    seed: u64,
    bars: &bars::Bars,
) -> Result<(), Error> {
    use plumb::progress::{Progress, Unit};
    let measure = plumb::profile::ProfileOptions::default().measure();
    bars.stage("sweep", Some(ps.len() as u64), Unit::Items);
    let sweep = plumb::models::sweep::watts_strogatz(
        nodes,
        degree,
        ps,
        graphs,
        &measure,
        seed,
        &mut |_| bars.advance(1),
    )?;
    bars.finish();
    emit(
        json,
        || plumb::output::json::to_json("sweep", &sweep),
        || show::sweep_text(&sweep),
    )
}

fn demo_data(out: &Path, seed: u64, weeks: u32) -> Result<(), Error> {
    std::fs::create_dir_all(out).map_err(|e| Error::Io {
        path: out.to_path_buf(),
        action: "create folder",
        source: e,
    })?;
    let platform = plumb::models::demo::Platform::default();
    for week in 0..weeks {
        let text = plumb::models::demo::weekly_export(&platform, seed, week);
        let path = out.join(format!("replies-2026-W{}.tsv.zst", 40 + week));
        let bytes = plumb::outfile::write_zstd_frames(&path, &text, 19, 1 << 20)?;
        println!(
            "wrote {} ({} of text, {} compressed)",
            path.display(),
            show::bytes(text.len() as u64),
            show::bytes(bytes)
        );
    }
    Ok(())
}

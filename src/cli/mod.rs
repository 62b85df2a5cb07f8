//! Command-line surface: argument definitions and dispatch. Presentation lives in `show`.

mod bars;
mod show;

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Args as ClapArgs, Parser, Subcommand, ValueEnum};
use plumb::error::{Error, ErrorClass};
use plumb::store::load::{self, FormatChoice, HeaderChoice, LoadOptions};

/// Exit codes (documented in the README).
pub const EXIT_BAD_INPUT: u8 = 3;
pub const EXIT_IO: u8 = 4;
pub const EXIT_BUDGET: u8 = 5;

#[derive(Parser, Debug)]
#[command(
    name = "plumb",
    version,
    about = "Structure profiles of very large undirected networks, straight from edge-list dumps",
    after_help = "Exit codes: 0 success, 2 bad arguments, 3 bad input, 4 I/O failure, \
                  5 over the memory budget, 6 a change alert fired (track, compare)."
)]
pub struct Args {
    /// Worker threads (default: all cores).
    #[arg(long, global = true, value_name = "N")]
    threads: Option<usize>,

    /// No progress bars, even on a terminal.
    #[arg(long, global = true)]
    quiet: bool,

    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Profile a graph: size and degrees, components, triangles and clustering, distances.
    Profile {
        #[command(flatten)]
        input: InputArgs,
        /// Write the profile as JSON (schema: `plumb schema`, docs/profile.schema.json) to FILE;
        /// `-` prints it instead of the text.
        #[arg(long, value_name = "FILE")]
        json: Option<PathBuf>,
        /// Also write the profile as a self-contained HTML page with charts.
        #[arg(long, value_name = "FILE")]
        html: Option<PathBuf>,
        /// Also write one row per node (id, degree, triangles, clustering, component,
        /// eccentricity) as TSV; zstd-compressed when the name ends in .zst.
        #[arg(long, value_name = "FILE")]
        per_node: Option<PathBuf>,
        #[command(flatten)]
        plan: PlanArgs,
    },
    /// Profile a new export, add it to a history directory, and compare it with the previous
    /// snapshot and the pinned baseline; exits 6 when a significant change beyond its
    /// threshold is found.
    Track {
        /// The history directory (created on first use).
        history: PathBuf,
        #[command(flatten)]
        input: InputArgs,
        /// The snapshot's label, e.g. a date (default: the input's file name).
        #[arg(long)]
        label: Option<String>,
        /// Make this snapshot the baseline later ones are also compared with.
        #[arg(long)]
        pin: bool,
        /// Add the input even if the history already holds the same file (same checksum).
        #[arg(long)]
        again: bool,
        #[command(flatten)]
        check: CheckArgs,
        #[command(flatten)]
        plan: PlanArgs,
    },
    /// Compare two profiles or two graphs (profiled first; then also node and edge churn by
    /// original id); exits 6 when a significant change beyond its threshold is found.
    Compare {
        /// Earlier profile report (.json) or graph file.
        before: PathBuf,
        /// Later profile report (.json) or graph file.
        after: PathBuf,
        #[command(flatten)]
        check: CheckArgs,
        #[command(flatten)]
        plan: PlanArgs,
    },
    /// Write a history's trend page: each figure over time with interval bars, alerts
    /// marked.
    Trend {
        history: PathBuf,
        /// The HTML file to write.
        #[arg(short = 'o', long = "out", value_name = "FILE")]
        out: PathBuf,
        #[command(flatten)]
        check: CheckArgs,
    },
    /// Print the JSON Schema of the profile report.
    Schema,
    /// Read an edge file and show what was read: sizes, cleaning counts, degrees, timings.
    Intake {
        #[command(flatten)]
        input: InputArgs,
        /// Write the intake report as JSON to FILE; `-` prints it instead of the text.
        #[arg(long, value_name = "FILE")]
        json: Option<PathBuf>,
    },
    /// Build the adjacency store and save it as a store file that reopens in place.
    Pack {
        #[command(flatten)]
        input: InputArgs,
        /// Where to write the store file.
        #[arg(short = 'o', long = "out", value_name = "FILE")]
        out: PathBuf,
    },
    /// Check every invariant of a store file (checksum, offsets, sorted symmetric lists).
    Verify {
        /// A store file written by `plumb pack`.
        store: PathBuf,
    },
    /// Write a seeded random or lattice graph as an edge list (plain, or zstd when the name
    /// ends in .zst), streaming: the same seed gives a byte-identical file.
    Synth {
        #[command(subcommand)]
        model: SynthModel,
        /// Where to write the edge list.
        #[arg(short = 'o', long = "out", value_name = "FILE", global = true)]
        out: Option<PathBuf>,
        /// Seed of every random choice.
        #[arg(long, default_value_t = 1, global = true)]
        seed: u64,
    },
    /// Fit the small-world model: Watts–Strogatz graphs of one size and degree over a list of
    /// rewiring probabilities, with C(p)/C(0) and L(p)/L(0) and their intervals.
    Sweep {
        #[arg(long, value_name = "N", default_value_t = 1000)]
        nodes: u32,
        /// Lattice degree K (even).
        #[arg(long, value_name = "K", default_value_t = 10)]
        degree: u32,
        /// Rewiring probabilities, comma-separated.
        #[arg(
            long,
            value_name = "P,P,…",
            value_delimiter = ',',
            default_value = "0,0.0001,0.0003,0.001,0.003,0.01,0.03,0.1,0.3,1"
        )]
        p: Vec<f64>,
        /// Seeded graphs per probability.
        #[arg(long, value_name = "R", default_value_t = 5)]
        graphs: usize,
        /// Write the sweep as JSON to FILE; `-` prints it instead of the table.
        #[arg(long, value_name = "FILE")]
        json: Option<PathBuf>,
        #[arg(long, default_value_t = 1)]
        seed: u64,
    },
    /// Rebuild the shipped demo data (seeded; byte-identical on every machine).
    DemoData {
        /// Folder to write into.
        #[arg(long, default_value = "demo-data/larkspur")]
        out: PathBuf,
        #[arg(long, default_value_t = 20261002)]
        seed: u64,
        /// How many weekly exports to write (from 2026-W40).
        #[arg(long, default_value_t = 6)]
        weeks: u32,
    },
}

#[derive(Subcommand, Debug)]
enum SynthModel {
    /// Ring lattice: each node joined to its K/2 nearest neighbours on each side.
    Lattice {
        #[arg(long, value_name = "N")]
        nodes: u32,
        /// Degree K (even).
        #[arg(long, value_name = "K")]
        degree: u32,
    },
    /// Watts–Strogatz: the ring lattice with each edge's far end rewired with probability P.
    Ws {
        #[arg(long, value_name = "N")]
        nodes: u32,
        #[arg(long, value_name = "K")]
        degree: u32,
        #[arg(long, value_name = "P")]
        rewire: f64,
    },
    /// Erdős–Rényi with exactly M edges.
    Gnm {
        #[arg(long, value_name = "N")]
        nodes: u32,
        #[arg(long, value_name = "M")]
        edges: u64,
    },
    /// Erdős–Rényi with each pair joined with probability P (linear time).
    Gnp {
        #[arg(long, value_name = "N")]
        nodes: u32,
        #[arg(long, value_name = "P")]
        prob: f64,
    },
    /// Preferential attachment: each new node attaches D edges in proportion to degree.
    Attach {
        #[arg(long, value_name = "N")]
        nodes: u32,
        #[arg(long, value_name = "D")]
        per_node: u32,
    },
    /// Degree-preserving randomisation of a graph by double-edge swaps (original ids kept).
    Shuffle {
        #[command(flatten)]
        input: InputArgs,
        /// Attempted swaps per edge.
        #[arg(long, value_name = "Q", default_value_t = 10.0)]
        swaps_per_edge: f64,
    },
    /// Configuration model with the degree sequence of a graph (original ids kept; self-loops
    /// and repeated pairs erased and counted).
    Config {
        #[command(flatten)]
        input: InputArgs,
    },
    /// (internal) A generator model with its parameters gathered.
    #[command(skip)]
    Generated(plumb::models::generate::Model),
}

/// How changes are judged.
#[derive(ClapArgs, Debug)]
struct CheckArgs {
    /// Family-wise confidence level of the change tests (split over the estimated figures).
    #[arg(long = "alert-level", value_name = "LEVEL", default_value = "99%", value_parser = parse_fraction)]
    alert_level: f64,
    /// Minimum effects worth an alert, e.g. transitivity=0.02,mean-distance=5% (absolute, or
    /// relative with %); others keep their defaults (see the README).
    #[arg(long, value_name = "FIGURE=MIN", value_delimiter = ',', value_parser = plumb::monitor::drift::parse_threshold)]
    alert_on: Vec<(String, plumb::monitor::drift::Threshold)>,
    /// Write the verdict as JSON to FILE (`-`: print it instead of the text).
    #[arg(long = "verdict-json", value_name = "FILE")]
    verdict_json: Option<PathBuf>,
}

/// How each figure group is computed: exact within a time budget, or estimated to a margin.
#[derive(ClapArgs, Debug)]
struct PlanArgs {
    /// Seconds each exact figure group may be predicted to take on this machine; beyond it
    /// the group is estimated with intervals.
    #[arg(long, value_name = "SECONDS", default_value_t = plumb::profile::DEFAULT_EXACT_SECONDS,
          value_parser = parse_seconds)]
    exact_within: f64,
    /// Seconds the exact diameter search may take when all-pairs distances do not run; beyond
    /// it the diameter is reported as certain bounds.
    #[arg(long, value_name = "SECONDS", default_value_t = plumb::profile::DEFAULT_DIAMETER_SECONDS,
          value_parser = parse_seconds)]
    diameter_within: f64,
    /// Clustering: exact or sampled by the budget (auto), or always one of them.
    #[arg(long, value_enum, default_value_t = ClusteringArg::Auto)]
    clustering: ClusteringArg,
    /// Distances: exact or estimated by the budget (auto), exact all-pairs, BFS from sampled
    /// sources, or HyperBall.
    #[arg(long, value_enum, default_value_t = DistancesArg::Auto)]
    distances: DistancesArg,
    /// Half-width of the transitivity and average-clustering intervals when sampled.
    #[arg(long, value_name = "PLUS_MINUS", default_value = "0.002", value_parser = parse_fraction)]
    clustering_margin: f64,
    /// Half-width of the mean-distance interval when estimated, relative to the mean
    /// (0.01 or 1%).
    #[arg(long, value_name = "FRACTION", default_value = "1%", value_parser = parse_fraction)]
    distance_margin: f64,
    /// Confidence level of every interval.
    #[arg(long, value_name = "LEVEL", default_value = "95%", value_parser = parse_fraction)]
    level: f64,
    /// Most BFS sources a distance estimate may use.
    #[arg(long, value_name = "N", default_value_t = 4096)]
    max_sources: usize,
    /// HyperBall registers per node (a power of two, 16 to 65536).
    #[arg(long, value_name = "N", default_value_t = 64, value_parser = parse_registers)]
    ball_registers: u32,
    /// HyperBall runs with independent hash seeds (their spread gives the intervals).
    #[arg(long, value_name = "N", default_value_t = 5, value_parser = clap::value_parser!(u32).range(2..))]
    ball_runs: u32,
    /// Figure groups to compute besides size, degrees and components (always shown):
    /// clustering, distances, small-world (which brings in the other two), or all.
    #[arg(
        long,
        value_enum,
        value_delimiter = ',',
        default_value = "all",
        value_name = "GROUPS"
    )]
    figures: Vec<FigureGroup>,
    /// Sampled reference graphs of each kind (random with the same n and m; random with the
    /// same degrees) for the small-world comparison (default: 4 when they fit the budget,
    /// else none; analytic references are always given).
    #[arg(long, value_name = "N")]
    reference_graphs: Option<usize>,
    /// Attempted double-edge swaps per edge for the degree-preserving references.
    #[arg(long, value_name = "Q", default_value_t = 2.0)]
    swaps_per_edge: f64,
    /// Seed of every random choice (same seed, input and methods: same output on any thread
    /// count).
    #[arg(long, default_value_t = 1)]
    seed: u64,
}

#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
enum FigureGroup {
    All,
    Clustering,
    Distances,
    SmallWorld,
}

#[derive(ValueEnum, Clone, Copy, Debug)]
enum ClusteringArg {
    Auto,
    Exact,
    Sampled,
}

#[derive(ValueEnum, Clone, Copy, Debug)]
enum DistancesArg {
    Auto,
    Exact,
    Sources,
    Ball,
}

/// "0.95", "95%" -> 0.95; must lie strictly between 0 and 1.
fn parse_fraction(s: &str) -> Result<f64, String> {
    let v = match s.strip_suffix('%') {
        Some(p) => p.trim().parse::<f64>().map(|x| x / 100.0),
        None => s.trim().parse::<f64>(),
    }
    .map_err(|_| format!("expected a fraction such as 0.95 or 95%, got {s:?}"))?;
    if v > 0.0 && v < 1.0 {
        Ok(v)
    } else {
        Err(format!("{s} is not strictly between 0 and 1"))
    }
}

fn parse_seconds(s: &str) -> Result<f64, String> {
    match s.trim().trim_end_matches('s').parse::<f64>() {
        Ok(v) if v >= 0.0 && v.is_finite() => Ok(v),
        _ => Err(format!("expected seconds such as 20 or 0.5, got {s:?}")),
    }
}

fn parse_registers(s: &str) -> Result<u32, String> {
    let v: u32 = s
        .parse()
        .map_err(|_| format!("expected a number, got {s:?}"))?;
    if v.is_power_of_two() && (16..=65536).contains(&v) {
        Ok(v)
    } else {
        Err(format!("{v} is not a power of two from 16 to 65536"))
    }
}

impl PlanArgs {
    fn options(&self) -> plumb::profile::ProfileOptions {
        use plumb::profile::plan::{Choice, DistanceEstimator};
        let (distances, distance_estimator) = match self.distances {
            DistancesArg::Auto => (Choice::Auto, DistanceEstimator::Cheaper),
            DistancesArg::Exact => (Choice::Exact, DistanceEstimator::Cheaper),
            DistancesArg::Sources => (Choice::Estimate, DistanceEstimator::Sources),
            DistancesArg::Ball => (Choice::Estimate, DistanceEstimator::Ball),
        };
        let defaults = plumb::profile::ProfileOptions::default();
        plumb::profile::ProfileOptions {
            exact_seconds: self.exact_within,
            diameter_seconds: self.diameter_within,
            clustering: match self.clustering {
                ClusteringArg::Auto => Choice::Auto,
                ClusteringArg::Exact => Choice::Exact,
                ClusteringArg::Sampled => Choice::Estimate,
            },
            distances,
            distance_estimator,
            clustering_tolerance: self.clustering_margin,
            distance_tolerance: self.distance_margin,
            max_sources: self.max_sources.max(1),
            ball: plumb::estimate::hyperball::BallOptions {
                log2_registers: self.ball_registers.trailing_zeros() as u8,
                repeats: self.ball_runs,
                level: self.level,
                seed: self.seed,
            },
            level: self.level,
            seed: self.seed,
            reference_graphs: self.reference_graphs,
            groups: {
                let has = |g| self.figures.contains(&FigureGroup::All) || self.figures.contains(&g);
                plumb::profile::Groups {
                    clustering: has(FigureGroup::Clustering),
                    distances: has(FigureGroup::Distances),
                    small_world: has(FigureGroup::SmallWorld),
                }
            },
            swaps_per_edge: self.swaps_per_edge.max(0.0),
            ..defaults
        }
    }
}

#[derive(ClapArgs, Debug)]
struct InputArgs {
    /// Edge list, Matrix Market or store file; plain, zstd or gzip (sniffed, not by name);
    /// `-` reads standard input.
    input: PathBuf,
    /// Input grammar.
    #[arg(long, value_enum, default_value_t = Grammar::Auto)]
    format: Grammar,
    /// Whether the first data line is a column header.
    #[arg(long, value_enum, default_value_t = HeaderArg::Auto)]
    header: HeaderArg,
    /// Skip malformed lines (counted, first few shown) instead of stopping at the first.
    #[arg(long)]
    skip_malformed: bool,
    /// Longest line accepted, in bytes.
    #[arg(long, default_value_t = 1 << 20, value_name = "BYTES")]
    max_line: usize,
    /// Memory the build may use, e.g. 8G (default: 90% of the memory available now).
    #[arg(long, value_name = "SIZE", value_parser = plumb::store::limits::parse_size)]
    memory_budget: Option<u64>,
}

#[derive(ValueEnum, Clone, Copy, Debug)]
enum Grammar {
    /// Matrix Market if the banner is there, else an edge list.
    Auto,
    /// Two ids per line.
    Edges,
    /// Matrix Market coordinate format.
    Mtx,
}

#[derive(ValueEnum, Clone, Copy, Debug)]
enum HeaderArg {
    /// Guess from the first two data lines.
    Auto,
    /// The first data line is a header.
    Skip,
    /// There is no header line.
    None,
}

impl InputArgs {
    fn options(&self) -> LoadOptions {
        LoadOptions {
            format: match self.format {
                Grammar::Auto => FormatChoice::Auto,
                Grammar::Edges => FormatChoice::EdgeList,
                Grammar::Mtx => FormatChoice::MatrixMarket,
            },
            header: match self.header {
                HeaderArg::Auto => HeaderChoice::Auto,
                HeaderArg::Skip => HeaderChoice::Skip,
                HeaderArg::None => HeaderChoice::None,
            },
            skip_malformed: self.skip_malformed,
            max_line: self.max_line,
            memory_budget: self
                .memory_budget
                .unwrap_or_else(plumb::store::limits::default_memory_budget),
            ..LoadOptions::default()
        }
    }
}

pub fn exit_code(e: &Error) -> ExitCode {
    match e.class() {
        ErrorClass::BadInput => ExitCode::from(EXIT_BAD_INPUT),
        ErrorClass::Io => ExitCode::from(EXIT_IO),
        ErrorClass::Budget => ExitCode::from(EXIT_BUDGET),
        ErrorClass::Usage => ExitCode::from(2),
    }
}

/// Exit code when a change alert fired (track, compare).
pub const EXIT_ALERT: u8 = 6;

fn looks_like_report(path: &std::path::Path) -> bool {
    path.extension().is_some_and(|e| e == "json")
}

fn load_side(
    path: &std::path::Path,
    plan: &PlanArgs,
    bars: &bars::Bars,
) -> Result<(plumb::profile::report::Report, Option<plumb::Graph>), Error> {
    if looks_like_report(path) {
        let r = plumb::monitor::history::read_report(path).map_err(|problem| Error::Output {
            path: path.to_path_buf(),
            problem,
        })?;
        return Ok((r, None));
    }
    let opts = plan.options();
    let g = load::load(path, &LoadOptions::default(), bars)?;
    let (p, _) = plumb::profile::profile(&g, &opts, bars);
    let r = plumb::profile::report::Report::new(p, Some(path), &opts)?;
    Ok((r, Some(g)))
}

fn verdict_out(
    check: &CheckArgs,
    json: impl FnOnce() -> String,
    text: impl FnOnce() -> String,
) -> Result<(), Error> {
    emit(check.verdict_json.as_deref(), json, text)
}

fn compare(
    before: &std::path::Path,
    after: &std::path::Path,
    check: &CheckArgs,
    plan: &PlanArgs,
    bars: &bars::Bars,
) -> Result<ExitCode, Error> {
    let (ra, ga) = load_side(before, plan, bars)?;
    let (rb, gb) = load_side(after, plan, bars)?;
    let d = plumb::monitor::drift::compare(
        &ra,
        &rb,
        (&before.display().to_string(), &after.display().to_string()),
        check.alert_level,
        &check.alert_on,
    );
    let churn = match (&ga, &gb) {
        (Some(a), Some(b)) => Some(plumb::monitor::drift::churn(a, b)),
        _ => None,
    };
    // Without both graphs, the reports' id sketches estimate the churn.
    let estimated = match (&churn, &ra.ids, &rb.ids) {
        (None, Some(a), Some(b)) => a.churn(b, check.alert_level).ok(),
        _ => None,
    };
    verdict_out(
        check,
        || {
            show::to_json(
                "comparison",
                &serde_json::json!({"drift": d, "churn": churn, "estimated_churn": estimated}),
            )
        },
        || {
            let mut t = show::drift_text(&d, churn.as_ref());
            if let Some(e) = &estimated {
                t.push_str(&show::sketch_churn_text(e));
            }
            t
        },
    )?;
    Ok(if d.alerts > 0 {
        ExitCode::from(EXIT_ALERT)
    } else {
        ExitCode::SUCCESS
    })
}

#[allow(clippy::too_many_arguments)]
fn track(
    dir: &std::path::Path,
    input: &InputArgs,
    label: Option<String>,
    pin: bool,
    again: bool,
    check: &CheckArgs,
    plan: &PlanArgs,
    bars: &bars::Bars,
) -> Result<ExitCode, Error> {
    let _lock = plumb::monitor::history::lock(dir, std::time::Duration::from_secs(600))?;
    let mut h = plumb::monitor::history::History::open(dir)?;
    for p in &h.problems {
        eprintln!("plumb: {}: {}: {}", dir.display(), p.file, p.what);
    }
    let source = (input.input.as_os_str() != "-").then_some(input.input.as_path());
    let sum = source.map(plumb::profile::report::checksum).transpose()?;
    if let Some((_, sum)) = &sum {
        let path = input.input.display();
        if let Some(e) = h.find_input(sum)
            && !again
        {
            return Err(Error::Parameters {
                problem: format!(
                    "{} is already in the history as snapshot {} ({}), same checksum {sum}; \
                     add it again with --again",
                    path, e.seq, e.label
                ),
            });
        }
    }
    let opts = plan.options();
    let g = load::load(&input.input, &input.options(), bars)?;
    let (p, _) = plumb::profile::profile(&g, &opts, bars);
    let report =
        plumb::profile::report::Report::with_checksum(p, source, sum, &opts).with_sketch(&g);
    let previous = h.latest().map(|(e, r)| (e.clone(), r.clone()));
    let baseline = h.baseline().map(|(e, r)| (e.clone(), r.clone()));
    let label = label.unwrap_or_else(|| {
        input
            .input
            .file_name()
            .map_or("stdin".into(), |n| n.to_string_lossy().into_owned())
    });
    let entry = h.add(&report, &label, pin)?;
    let name = |e: &plumb::monitor::history::Entry| format!("#{} {}", e.seq, e.label);
    let mut drifts = Vec::new();
    if let Some((e, r)) = &previous {
        drifts.push(plumb::monitor::drift::compare(
            r,
            &report,
            (&name(e), &name(&entry)),
            check.alert_level,
            &check.alert_on,
        ));
    }
    if let Some((e, r)) = &baseline
        && previous.as_ref().is_none_or(|(p, _)| p.seq != e.seq)
    {
        drifts.push(plumb::monitor::drift::compare(
            r,
            &report,
            (&name(e), &name(&entry)),
            check.alert_level,
            &check.alert_on,
        ));
    }
    let alerts: usize = drifts.iter().map(|d| d.alerts).sum();
    // Churn against the previous snapshot, from the id sketches both reports carry.
    let churn = match (&previous, &report.ids) {
        (Some((_, r)), Some(now)) => r
            .ids
            .as_ref()
            .and_then(|before| before.churn(now, check.alert_level).ok()),
        _ => None,
    };
    verdict_out(
        check,
        || {
            show::to_json(
                "track",
                &serde_json::json!({"added": {"seq": entry.seq, "label": entry.label, "file": entry.file}, "comparisons": drifts, "estimated_churn_since_previous": churn, "alerts": alerts}),
            )
        },
        || {
            let mut t = format!(
                "plumb track · {} · added snapshot #{} \"{}\" ({} nodes, {} edges)\n",
                dir.display(),
                entry.seq,
                entry.label,
                report.profile.degrees.nodes,
                report.profile.degrees.edges
            );
            if drifts.is_empty() {
                t.push_str("  first snapshot: it is the baseline; nothing to compare yet\n");
            }
            for (i, d) in drifts.iter().enumerate() {
                t.push_str(&show::drift_text(d, None));
                if i == 0
                    && let Some(c) = &churn
                {
                    t.push_str(&show::sketch_churn_text(c));
                }
            }
            t
        },
    )?;
    Ok(if alerts > 0 {
        ExitCode::from(EXIT_ALERT)
    } else {
        ExitCode::SUCCESS
    })
}

/// Refuse an output path that names the input file: inputs are never modified.
fn guard(out: Option<&std::path::Path>, input: &std::path::Path) -> Result<(), Error> {
    let Some(out) = out else { return Ok(()) };
    if out.as_os_str() == "-" || input.as_os_str() == "-" {
        return Ok(());
    }
    if let (Ok(a), Ok(b)) = (out.canonicalize(), input.canonicalize())
        && a == b
    {
        return Err(Error::Parameters {
            problem: format!(
                "{} is the input; plumb never writes over its input (choose another output file)",
                out.display()
            ),
        });
    }
    Ok(())
}

/// Print `text()`, or with `json` write `json_text()` to that file (`-`: print it instead).
fn emit(
    json: Option<&std::path::Path>,
    json_text: impl FnOnce() -> String,
    text: impl FnOnce() -> String,
) -> Result<(), Error> {
    match json {
        Some(p) if p.as_os_str() == "-" => print!("{}", json_text()),
        Some(p) => {
            plumb::outfile::write_atomic(p, json_text().as_bytes())?;
            print!("{}", text());
            println!("  {:<11}JSON {}", "wrote", p.display());
        }
        None => print!("{}", text()),
    }
    Ok(())
}

fn synth(
    model: SynthModel,
    out: &std::path::Path,
    seed: u64,
    bars: &bars::Bars,
) -> Result<(), Error> {
    use plumb::models::generate::Model;
    let t = std::time::Instant::now();
    let bad = |problem: String| Error::Parameters { problem };
    let model = match model {
        SynthModel::Lattice { nodes, degree } => SynthModel::Generated(Model::Lattice {
            n: nodes,
            k: degree,
        }),
        SynthModel::Ws {
            nodes,
            degree,
            rewire,
        } => SynthModel::Generated(Model::WattsStrogatz {
            n: nodes,
            k: degree,
            p: rewire,
        }),
        SynthModel::Gnm { nodes, edges } => {
            SynthModel::Generated(Model::Gnm { n: nodes, m: edges })
        }
        SynthModel::Gnp { nodes, prob } => SynthModel::Generated(Model::Gnp { n: nodes, p: prob }),
        SynthModel::Attach { nodes, per_node } => SynthModel::Generated(Model::Preferential {
            n: nodes,
            d: per_node,
        }),
        other => other,
    };
    // Refuse impossible parameters before touching the output.
    if let SynthModel::Generated(m) = &model {
        m.validate().map_err(bad)?;
    }
    let mut w = plumb::outfile::EdgeWriter::create(out)?;
    let (what, nodes, extra) = match model {
        SynthModel::Shuffle {
            input,
            swaps_per_edge,
        } => {
            if swaps_per_edge.is_nan() || swaps_per_edge < 0.0 {
                return Err(bad("--swaps-per-edge must be >= 0".into()));
            }
            guard(Some(out), &input.input)?;
            let g = load::load(&input.input, &input.options(), bars)?;
            let (r, rep) =
                plumb::models::randomize::degree_preserving(&g.csr, swaps_per_edge, seed);
            let what = format!(
                "degree-preserving randomisation of {} by double-edge swaps (Maslov & Sneppen \
                 2002), seed {seed}",
                input.input.display()
            );
            w.comment(&format!("plumb synth: {what}"));
            for (a, b) in plumb::models::randomize::edge_list(&r) {
                w.labelled(&g.ids.label_bytes(a), &g.ids.label_bytes(b));
            }
            let extra = format!(
                "{} of {} attempted swaps made (the rest would have made a loop or a repeat)",
                show::count(rep.accepted),
                show::count(rep.attempted)
            );
            (what, g.node_count() as u64, extra)
        }
        SynthModel::Config { input } => {
            guard(Some(out), &input.input)?;
            let g = load::load(&input.input, &input.options(), bars)?;
            let degrees: Vec<u32> = (0..g.node_count() as u32)
                .map(|v| g.csr.degree(v))
                .collect();
            let what = format!(
                "configuration model with the degrees of {}, seed {seed}",
                input.input.display()
            );
            w.comment(&format!("plumb synth: {what}"));
            let rep = plumb::models::randomize::configuration(&degrees, seed, &mut |a, b| {
                w.labelled(&g.ids.label_bytes(a), &g.ids.label_bytes(b))
            })
            .map_err(bad)?;
            let extra = format!(
                "{} self-loops and {} repeated pairs erased",
                show::count(rep.loops_erased),
                show::count(rep.repeats_erased)
            );
            (what, g.node_count() as u64, extra)
        }
        SynthModel::Generated(m) => {
            let what = format!("{}, seed {seed}", m.describe());
            w.comment(&format!("plumb synth: {what}"));
            let n = m.nodes() as usize;
            let mut touched = vec![false; n];
            plumb::models::generate::stream(&m, seed, &mut |a, b| {
                touched[a as usize] = true;
                touched[b as usize] = true;
                w.edge(a, b)
            })
            .map_err(bad)?;
            let lonely = touched.iter().filter(|&&t| !t).count();
            let extra = if lonely == 0 {
                "every node has an edge".to_string()
            } else {
                format!(
                    "{} nodes have no edge and so do not appear in the edge list",
                    show::count(lonely as u64)
                )
            };
            (what, n as u64, extra)
        }
        _ => unreachable!("generator models were converted above"),
    };
    let (edges, bytes) = w.finish()?;
    let secs = t.elapsed().as_secs_f64();
    println!("wrote {}: {what}", out.display());
    println!(
        "  {} nodes · {} edges · {} in {:.2} s ({:.1} M edges/s) · {extra}",
        show::count(nodes),
        show::count(edges),
        show::bytes(bytes),
        secs,
        edges as f64 / secs.max(1e-9) / 1e6
    );
    Ok(())
}

pub fn run(args: Args) -> Result<ExitCode, Error> {
    if let Some(t) = args.threads {
        // Only fails if a pool exists already, which cannot happen this early.
        let _ = rayon::ThreadPoolBuilder::new()
            .num_threads(t.max(1))
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
        } => {
            let opts = plan.options();
            for out in [json.as_deref(), html.as_deref(), per_node.as_deref()] {
                guard(out, &input.input)?;
            }
            let g = load::load(&input.input, &input.options(), &bars)?;
            let (p, table) = plumb::profile::profile(&g, &opts, &bars);
            if let Some(path) = &per_node {
                plumb::output::pernode::write(&g, &table, path)?;
            }
            let source = (input.input.as_os_str() != "-").then_some(input.input.as_path());
            let mut report = plumb::profile::report::Report::new(p, source, &opts)?;
            if json.is_some() {
                // JSON reports are kept and compared later: carry the id sketches for churn.
                report = report.with_sketch(&g);
            }
            let json_text = || {
                let mut s = serde_json::to_string_pretty(&report).unwrap_or_default();
                s.push('\n');
                s
            };
            if let Some(path) = &html {
                plumb::outfile::write_atomic(path, plumb::output::html::page(&report).as_bytes())?;
            }
            match json.as_deref() {
                Some(p) if p.as_os_str() == "-" => print!("{}", json_text()),
                Some(p) => {
                    plumb::outfile::write_atomic(p, json_text().as_bytes())?;
                    print!(
                        "{}",
                        show::profile_text(&g, &report.profile, per_node.as_deref())
                    );
                }
                None => print!(
                    "{}",
                    show::profile_text(&g, &report.profile, per_node.as_deref())
                ),
            }
            let mut written = Vec::new();
            if let Some(p) = json.as_deref().filter(|p| p.as_os_str() != "-") {
                written.push(format!("JSON {}", p.display()));
            }
            if let Some(p) = &html {
                written.push(format!("HTML {}", p.display()));
            }
            if !written.is_empty() && json.as_deref().is_none_or(|p| p.as_os_str() != "-") {
                println!("  {:<11}{}", "wrote", written.join(" · "));
            }
        }
        Command::Schema => print!("{}", plumb::profile::report::schema_json()),
        Command::Track {
            history,
            input,
            label,
            pin,
            again,
            check,
            plan,
        } => return track(&history, &input, label, pin, again, &check, &plan, &bars),
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
        } => {
            let h = plumb::monitor::history::History::open(&history)?;
            for p in &h.problems {
                eprintln!("plumb: {}: {}: {}", history.display(), p.file, p.what);
            }
            let page = plumb::monitor::trend::page(&h, check.alert_level, &check.alert_on);
            plumb::outfile::write_atomic(&out, page.as_bytes())?;
            println!(
                "wrote {}: {} snapshots of {}",
                out.display(),
                h.index.entries.len(),
                history.display()
            );
        }
        Command::Intake { input, json } => {
            guard(json.as_deref(), &input.input)?;
            let g = load::load(&input.input, &input.options(), &bars)?;
            emit(
                json.as_deref(),
                || show::intake_json(&g),
                || show::intake_text(&g),
            )?;
        }
        Command::Pack { input, out } => {
            guard(Some(&out), &input.input)?;
            let g = load::load(&input.input, &input.options(), &bars)?;
            let t = std::time::Instant::now();
            let bytes = plumb::store::file::write(&g, &out)?;
            print!("{}", show::intake_text(&g));
            println!(
                "  {:<11}{} ({}) in {:.2} s",
                "wrote",
                out.display(),
                show::bytes(bytes),
                t.elapsed().as_secs_f64()
            );
        }
        Command::Verify { store } => {
            let t = std::time::Instant::now();
            let g = plumb::store::file::open(&store)?;
            let opened = t.elapsed().as_secs_f64();
            g.csr.verify().map_err(|problem| Error::Store {
                path: store.clone(),
                problem,
            })?;
            println!(
                "{}: ok — {} nodes, {} edges; checksum and layout checked on open ({:.3} s), \
                 lists sorted and symmetric ({:.3} s)",
                store.display(),
                show::count(g.node_count() as u64),
                show::count(g.edge_count()),
                opened,
                t.elapsed().as_secs_f64() - opened
            );
        }
        Command::Synth { model, out, seed } => {
            let out = out.ok_or_else(|| Error::Parameters {
                problem: "synth needs an output file: -o FILE".into(),
            })?;
            synth(model, &out, seed, &bars)?;
        }
        Command::Sweep {
            nodes,
            degree,
            p,
            graphs,
            json,
            seed,
        } => {
            let opts = plumb::profile::ProfileOptions {
                seed,
                ..Default::default()
            };
            use plumb::progress::{Progress, Unit};
            bars.stage("sweep", Some(p.len() as u64), Unit::Items);
            let sweep = plumb::models::sweep::watts_strogatz(
                nodes,
                degree,
                &p,
                graphs,
                &opts.measure(),
                seed,
                &mut |_| bars.advance(1),
            )
            .map_err(|problem| Error::Parameters { problem })?;
            bars.finish();
            emit(
                json.as_deref(),
                || show::to_json("sweep", &sweep),
                || show::sweep_text(&sweep),
            )?;
        }
        Command::DemoData { out, seed, weeks } => {
            std::fs::create_dir_all(&out).map_err(|e| Error::Io {
                path: out.clone(),
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
        }
    }
    Ok(ExitCode::SUCCESS)
}

//! The command line's words: every command and option with its help text, and their
//! conversion into the library's option types. Parsing only; nothing here reads a file.

use std::path::PathBuf;

use clap::{Args as ClapArgs, Parser, Subcommand, ValueEnum};
use plumb::store::load::{BuildChoice, FormatChoice, HeaderChoice, LoadOptions};

#[derive(Parser, Debug)]
#[command(
    name = "plumb",
    version,
    about = "Structure profiles of very large undirected networks, straight from edge-list dumps",
    after_help = "Exit codes: 0 success, 2 bad arguments, 3 bad input, 4 I/O failure, \
                  5 over the memory budget, 6 a change alert fired (track, compare)."
)]
pub(crate) struct Args {
    /// Worker threads, at least 1 (default: all cores).
    #[arg(long, global = true, value_name = "N",
          value_parser = clap::builder::RangedU64ValueParser::<usize>::new().range(1..))]
    pub(crate) threads: Option<usize>,

    /// No progress bars, even on a terminal.
    #[arg(long, global = true)]
    pub(crate) quiet: bool,

    #[command(subcommand)]
    pub(crate) command: Command,
}

#[derive(Subcommand, Debug)]
pub(crate) enum Command {
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
        /// The history directory written by `plumb track`.
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
        /// Nodes of each graph.
        #[arg(long, value_name = "N", default_value_t = 1000)]
        nodes: u32,
        /// Lattice degree K (even).
        #[arg(long, value_name = "K", default_value_t = 10)]
        degree: u32,
        /// Rewiring probabilities, comma-separated.
        #[arg(
            long = "probabilities",
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
        /// Seed of every random choice (graph j at the i-th p gets its own seed from it).
        #[arg(long, default_value_t = 1)]
        seed: u64,
    },
    /// Rebuild the shipped demo data (seeded; byte-identical on every machine).
    DemoData {
        /// Folder to write into.
        #[arg(long, default_value = "demo-data/larkspur")]
        out: PathBuf,
        /// Seed of the invented platform's activity.
        #[arg(long, default_value_t = 20261002)]
        seed: u64,
        /// How many weekly exports to write (from 2026-W40).
        #[arg(long, default_value_t = 6)]
        weeks: u32,
    },
}

#[derive(Subcommand, Debug)]
pub(crate) enum SynthModel {
    /// Ring lattice: each node joined to its K/2 nearest neighbours on each side.
    Lattice {
        /// Nodes on the ring.
        #[arg(long, value_name = "N")]
        nodes: u32,
        /// Degree K (even).
        #[arg(long, value_name = "K")]
        degree: u32,
    },
    /// Watts–Strogatz: the ring lattice with each edge's far end rewired with probability P.
    RewiredLattice {
        /// Nodes on the ring.
        #[arg(long, value_name = "N")]
        nodes: u32,
        /// Lattice degree K before rewiring (even).
        #[arg(long, value_name = "K")]
        degree: u32,
        /// Probability that an edge's far end is rewired to a uniform node.
        #[arg(long, value_name = "P")]
        rewire: f64,
    },
    /// Erdős–Rényi with exactly M edges.
    Gnm {
        /// Nodes.
        #[arg(long, value_name = "N")]
        nodes: u32,
        /// Edges, drawn uniformly among all pairs.
        #[arg(long, value_name = "M")]
        edges: u64,
    },
    /// Erdős–Rényi with each pair joined with probability P (linear time).
    Gnp {
        /// Nodes.
        #[arg(long, value_name = "N")]
        nodes: u32,
        /// Probability that a pair is joined.
        #[arg(long, value_name = "P")]
        prob: f64,
    },
    /// Preferential attachment: each new node attaches D edges in proportion to degree.
    Attach {
        /// Nodes, added one at a time.
        #[arg(long, value_name = "N")]
        nodes: u32,
        /// Edges each new node attaches.
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
}

/// How changes are judged.
#[derive(ClapArgs, Debug)]
pub(crate) struct CheckArgs {
    /// Family-wise confidence level of the change tests (split over the estimated figures).
    #[arg(long = "alert-level", value_name = "LEVEL", default_value = "99%", value_parser = parse_fraction)]
    pub(crate) alert_level: f64,
    /// Minimum effects worth an alert, e.g. transitivity=0.02,mean-distance=5% (absolute, or
    /// relative with %); others keep their defaults (see the README).
    #[arg(long, value_name = "FIGURE=MIN", value_delimiter = ',', value_parser = plumb::monitor::drift::parse_threshold)]
    pub(crate) alert_on: Vec<(
        plumb::monitor::drift::FigureKey,
        plumb::monitor::drift::Threshold,
    )>,
    /// Write the verdict as JSON to FILE (`-`: print it instead of the text).
    #[arg(long = "verdict-json", value_name = "FILE")]
    pub(crate) verdict_json: Option<PathBuf>,
}

/// How each figure group is computed: exact within a time budget, or estimated to a margin.
#[derive(ClapArgs, Debug)]
pub(crate) struct PlanArgs {
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
    /// Half-width of the same intervals relative to the figure (5% or 0.05); the narrower of the
    /// two applies, so small figures stay readable. 0 keeps only the absolute margin.
    #[arg(long, value_name = "FRACTION", default_value = "5%", value_parser = parse_fraction)]
    clustering_relative: f64,
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
pub(crate) enum FigureGroup {
    All,
    Clustering,
    Distances,
    SmallWorld,
}

#[derive(ValueEnum, Clone, Copy, Debug)]
pub(crate) enum ClusteringArg {
    Auto,
    Exact,
    Sampled,
}

#[derive(ValueEnum, Clone, Copy, Debug)]
pub(crate) enum DistancesArg {
    Auto,
    Exact,
    Sources,
    Ball,
}

/// "0.95", "95%" -> 0.95; must lie strictly between 0 and 1.
pub(crate) fn parse_fraction(s: &str) -> Result<f64, String> {
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
    pub(crate) fn options(&self) -> plumb::profile::ProfileOptions {
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
            clustering_margin: plumb::profile::Margin {
                absolute: self.clustering_margin,
                relative: self.clustering_relative,
                ..defaults.clustering_margin
            },
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
pub(crate) struct InputArgs {
    /// Edge list, Matrix Market or store file; plain, zstd or gzip (sniffed, not by name);
    /// `-` reads standard input.
    pub(crate) input: PathBuf,
    /// Input grammar.
    #[arg(long, value_enum, default_value_t = Grammar::Auto)]
    pub(crate) format: Grammar,
    /// Whether the first data line is a column header.
    #[arg(long, value_enum, default_value_t = HeaderArg::Auto)]
    pub(crate) header: HeaderArg,
    /// The two id columns of a delimited export (CSV with quoting, tab- or blank-separated) or a
    /// Parquet file: names or 1-based positions, e.g. `sender,recipient` or `2,4` (default: the
    /// first two columns).
    #[arg(long, value_name = "A,B", value_parser = plumb::read::columns::ColumnChoice::parse)]
    pub(crate) columns: Option<plumb::read::columns::ColumnChoice>,
    /// Skip malformed lines (counted, first few shown) instead of stopping at the first.
    #[arg(long)]
    pub(crate) skip_malformed: bool,
    /// Longest line accepted, in bytes.
    #[arg(long, default_value_t = 1 << 20, value_name = "BYTES")]
    pub(crate) max_line: usize,
    /// Memory the build may use, e.g. 8G (default: 90% of the memory available now).
    #[arg(long, value_name = "SIZE", value_parser = plumb::store::limits::parse_size)]
    pub(crate) memory_budget: Option<u64>,
    /// Where the adjacency is built: in memory when it fits the budget, else on disk (auto);
    /// memory only (stop when over budget); or always on disk.
    #[arg(long, value_enum, default_value_t = BuildArg::Auto)]
    pub(crate) build: BuildArg,
    /// Folder for a build on disk's sorted runs (default: beside the output store, else the
    /// system's temporary folder); removed on every exit, Ctrl-C included.
    #[arg(long, value_name = "DIR")]
    pub(crate) scratch: Option<PathBuf>,
    /// Space a build on disk leaves free on the scratch disk; it refuses to start otherwise.
    #[arg(long, value_name = "SIZE", default_value = "1G", value_parser = parse_size_or_zero)]
    pub(crate) scratch_keep_free: u64,
}

fn parse_size_or_zero(s: &str) -> Result<u64, plumb::error::ParamError> {
    if s.trim() == "0" {
        return Ok(0);
    }
    plumb::store::limits::parse_size(s)
}

#[derive(ValueEnum, Clone, Copy, Debug)]
pub(crate) enum BuildArg {
    /// In memory when it fits --memory-budget and is under 3 GiB, else on disk (when the scratch
    /// disk has room; larger graphs build faster and leaner there).
    Auto,
    /// In memory only.
    Memory,
    /// On disk: sorted runs merged into a mapped store.
    Disk,
}

#[derive(ValueEnum, Clone, Copy, Debug)]
pub(crate) enum Grammar {
    /// Matrix Market if the banner is there, else an edge list.
    Auto,
    /// Two ids per line.
    Edges,
    /// Matrix Market coordinate format.
    Mtx,
}

#[derive(ValueEnum, Clone, Copy, Debug)]
pub(crate) enum HeaderArg {
    /// Guess from the first two data lines.
    Auto,
    /// The first data line is a header.
    Skip,
    /// There is no header line.
    None,
}

impl InputArgs {
    pub(crate) fn options(&self) -> LoadOptions {
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
            build: match self.build {
                BuildArg::Auto => BuildChoice::Auto,
                BuildArg::Memory => BuildChoice::Memory,
                BuildArg::Disk => BuildChoice::Disk,
            },
            scratch: self.scratch.clone(),
            scratch_keep_free: self.scratch_keep_free,
            columns: self.columns.clone(),
            ..LoadOptions::default()
        }
    }
}

impl CheckArgs {
    pub(crate) fn rules(&self) -> plumb::monitor::track::ChangeRules {
        plumb::monitor::track::ChangeRules {
            level: self.alert_level,
            thresholds: self.alert_on.clone(),
        }
    }
}

impl SynthModel {
    pub(crate) fn recipe(self) -> plumb::models::synth::Recipe {
        use plumb::models::generate::Model;
        use plumb::models::synth::Recipe;
        match self {
            SynthModel::Lattice { nodes, degree } => Recipe::Model(Model::Lattice {
                n: nodes,
                k: degree,
            }),
            SynthModel::RewiredLattice {
                nodes,
                degree,
                rewire,
            } => Recipe::Model(Model::WattsStrogatz {
                n: nodes,
                k: degree,
                p: rewire,
            }),
            SynthModel::Gnm { nodes, edges } => Recipe::Model(Model::Gnm { n: nodes, m: edges }),
            SynthModel::Gnp { nodes, prob } => Recipe::Model(Model::Gnp { n: nodes, p: prob }),
            SynthModel::Attach { nodes, per_node } => Recipe::Model(Model::Preferential {
                n: nodes,
                d: per_node,
            }),
            SynthModel::Shuffle {
                input,
                swaps_per_edge,
            } => Recipe::Shuffle {
                load: input.options(),
                input: input.input,
                swaps_per_edge,
            },
            SynthModel::Config { input } => Recipe::Configuration {
                load: input.options(),
                input: input.input,
            },
        }
    }
}

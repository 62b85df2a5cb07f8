//! The command line's words: every command and option with its help text, and their
//! conversion into the library's option types. Parsing only; nothing here reads a file.

use std::path::PathBuf;

use clap::{Args as ClapArgs, Parser, Subcommand};
use plumb::profile::settings::{LoadSettings, PlanSettings, parse_fraction};

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
        plan: PlanSettings,
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
        plan: PlanSettings,
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
        plan: PlanSettings,
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
    /// Profile with several processes, on this machine or several, through timely dataflow:
    /// each reads its share of the part files; exact figures only (no distances yet).
    Spread {
        #[command(flatten)]
        input: InputArgs,
        /// Write the report as JSON to FILE (process 0 only; written once the whole run has
        /// finished, never in part).
        #[arg(long, value_name = "FILE")]
        json: Option<PathBuf>,
        /// Start P processes on this machine, joined over loopback, and profile with all of them.
        #[arg(long, value_name = "P", conflicts_with_all = ["peers", "rank"])]
        local: Option<usize>,
        /// The run's processes: a file with one host:port a line, in process order (the
        /// engine's own host list, passed through). Every process gets the same file.
        #[arg(long, value_name = "FILE", requires = "rank")]
        peers: Option<PathBuf>,
        /// This process's line in the peers file, from 0; process 0 writes the report.
        #[arg(long, value_name = "I", requires = "peers")]
        rank: Option<usize>,
        /// Worker threads in each process.
        #[arg(long, value_name = "W", default_value_t = 1)]
        workers: usize,
        /// Leave out triangles and clustering.
        #[arg(long, conflicts_with = "sampled_clustering")]
        no_clustering: bool,
        /// Sample wedges and nodes for transitivity, average clustering and C(k), with
        /// intervals, instead of counting every triangle.
        #[arg(long)]
        sampled_clustering: bool,
        /// Half-width of the sampled transitivity and average-clustering intervals.
        #[arg(long, value_name = "PLUS_MINUS", default_value = "0.002",
              value_parser = plumb::profile::settings::parse_fraction)]
        clustering_margin: f64,
        /// The same half-width relative to the figure (5% or 0.05); the narrower applies.
        #[arg(long, value_name = "FRACTION", default_value = "5%",
              value_parser = plumb::profile::settings::parse_fraction)]
        clustering_relative: f64,
        /// BFS sources sampled in the giant component for the distance figures; 0 leaves
        /// distances out.
        #[arg(long, value_name = "K", default_value_t = 256)]
        sources: usize,
        /// Estimate distances by HyperBall on the giant component instead of sampled sources.
        #[arg(long, conflicts_with = "sources")]
        hyperball: bool,
        /// HyperBall registers per node (a power of two, 16 to 65536).
        #[arg(long, value_name = "N", default_value_t = 64,
              value_parser = plumb::profile::settings::parse_registers)]
        ball_registers: u32,
        /// HyperBall runs with independent hash seeds (their spread gives the intervals).
        #[arg(long, value_name = "N", default_value_t = 5,
              value_parser = clap::value_parser!(u32).range(2..))]
        ball_runs: u32,
        /// Leave out the small-world coefficients against the analytic references.
        #[arg(long)]
        no_small_world: bool,
        /// Confidence level of the intervals (0.95 or 95%).
        #[arg(long, value_name = "LEVEL", default_value_t = 0.95,
              value_parser = plumb::profile::settings::parse_fraction)]
        level: f64,
        /// Seed of the source sample: the same seed and input give the same figures on any
        /// number of processes.
        #[arg(long, value_name = "N", default_value_t = 1)]
        seed: u64,
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

/// An input file and how to read it.
#[derive(ClapArgs, Debug)]
pub(crate) struct InputArgs {
    /// Edge list, Matrix Market, Parquet or store file; plain, zstd or gzip (sniffed, not by
    /// name); `-` reads standard input.
    pub(crate) input: PathBuf,
    #[command(flatten)]
    pub(crate) load: LoadSettings,
}

impl InputArgs {
    pub(crate) fn options(&self) -> plumb::store::load::LoadOptions {
        self.load.options()
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

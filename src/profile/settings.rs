//! Options by name, shared by the command line and the Python package: how an input is read
//! ([`LoadSettings`]) and how each figure group is computed ([`PlanSettings`]), with their
//! spellings, defaults, checks and help text in one place, and their conversion into
//! [`LoadOptions`] and [`ProfileOptions`](super::ProfileOptions). The command line
//! flattens both structs into its commands; [`from_keywords`] reads the same options given as
//! `name=value` pairs (Python keyword arguments), through the same parser, so the two cannot
//! drift apart. Parsing only; nothing here reads a file.

use std::path::PathBuf;

use clap::{Args as ClapArgs, ValueEnum};

use crate::error::ParamError;
use crate::store::load::{BuildChoice, FormatChoice, HeaderChoice, LoadOptions};

/// How each figure group is computed: exact within a time budget, or estimated to a margin.
#[derive(ClapArgs, Debug, Clone)]
pub struct PlanSettings {
    /// Seconds each exact figure group may be predicted to take on this machine; beyond it
    /// the group is estimated with intervals.
    #[arg(long, value_name = "SECONDS", default_value_t = super::DEFAULT_EXACT_SECONDS,
          value_parser = parse_seconds)]
    pub exact_within: f64,
    /// Seconds the exact diameter search may take when all-pairs distances do not run; beyond
    /// it the diameter is reported as certain bounds.
    #[arg(long, value_name = "SECONDS", default_value_t = super::DEFAULT_DIAMETER_SECONDS,
          value_parser = parse_seconds)]
    pub diameter_within: f64,
    /// Clustering: exact or sampled by the budget (auto), or always one of them.
    #[arg(long, value_enum, default_value_t = ClusteringMode::Auto)]
    pub clustering: ClusteringMode,
    /// Distances: exact or estimated by the budget (auto), exact all-pairs, BFS from sampled
    /// sources, or HyperBall.
    #[arg(long, value_enum, default_value_t = DistancesMode::Auto)]
    pub distances: DistancesMode,
    /// Half-width of the transitivity and average-clustering intervals when sampled.
    #[arg(long, value_name = "PLUS_MINUS", default_value = "0.002", value_parser = parse_fraction)]
    pub clustering_margin: f64,
    /// Half-width of the same intervals relative to the figure (5% or 0.05); the narrower of the
    /// two applies, so small figures stay readable. 0 keeps only the absolute margin.
    #[arg(long, value_name = "FRACTION", default_value = "5%", value_parser = parse_fraction)]
    pub clustering_relative: f64,
    /// Half-width of the mean-distance interval when estimated, relative to the mean
    /// (0.01 or 1%).
    #[arg(long, value_name = "FRACTION", default_value = "1%", value_parser = parse_fraction)]
    pub distance_margin: f64,
    /// Confidence level of every interval.
    #[arg(long, value_name = "LEVEL", default_value = "95%", value_parser = parse_fraction)]
    pub level: f64,
    /// Most BFS sources a distance estimate may use.
    #[arg(long, value_name = "N", default_value_t = 4096)]
    pub max_sources: usize,
    /// HyperBall registers per node (a power of two, 16 to 65536).
    #[arg(long, value_name = "N", default_value_t = 64, value_parser = parse_registers)]
    pub ball_registers: u32,
    /// HyperBall runs with independent hash seeds (their spread gives the intervals).
    #[arg(long, value_name = "N", default_value_t = 5, value_parser = clap::value_parser!(u32).range(2..))]
    pub ball_runs: u32,
    /// Figure groups to compute besides size, degrees and components (always shown):
    /// clustering, distances, small-world (which brings in the other two), or all.
    #[arg(
        long,
        value_enum,
        value_delimiter = ',',
        default_value = "all",
        value_name = "GROUPS"
    )]
    pub figures: Vec<FigureGroup>,
    /// Sampled reference graphs of each kind (random with the same n and m; random with the
    /// same degrees) for the small-world comparison (default: 4 when they fit the budget,
    /// else none; analytic references are always given).
    #[arg(long, value_name = "N")]
    pub reference_graphs: Option<usize>,
    /// Attempted double-edge swaps per edge for the degree-preserving references.
    #[arg(long, value_name = "Q", default_value_t = 2.0)]
    pub swaps_per_edge: f64,
    /// Seed of every random choice (same seed, input and methods: same output on any thread
    /// count).
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
}

/// A figure group to compute besides size, degrees and components.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum FigureGroup {
    /// Every group.
    All,
    /// Triangles, transitivity and local clustering.
    Clustering,
    /// Mean distance, distribution, diameter.
    Distances,
    /// sigma, omega and propensity (brings in the other two).
    SmallWorld,
}

/// How clustering is computed.
#[derive(ValueEnum, Clone, Copy, Debug)]
pub enum ClusteringMode {
    /// Exact when predicted within the time budget, else sampled.
    Auto,
    /// Exact triangle listing.
    Exact,
    /// Wedge and node sampling with intervals.
    Sampled,
}

/// How distances are computed.
#[derive(ValueEnum, Clone, Copy, Debug)]
pub enum DistancesMode {
    /// Exact when predicted within the time budget, else the cheaper estimator.
    Auto,
    /// All-pairs BFS.
    Exact,
    /// BFS from sampled sources, with intervals.
    Sources,
    /// HyperBall (Boldi, Rosa and Vigna 2011), with intervals from repeated runs.
    Ball,
}

/// "0.95", "95%" -> 0.95; must lie strictly between 0 and 1.
pub fn parse_fraction(s: &str) -> Result<f64, String> {
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

/// "20", "0.5s" -> seconds, not negative.
pub fn parse_seconds(s: &str) -> Result<f64, String> {
    match s.trim().trim_end_matches('s').parse::<f64>() {
        Ok(v) if v >= 0.0 && v.is_finite() => Ok(v),
        _ => Err(format!("expected seconds such as 20 or 0.5, got {s:?}")),
    }
}

/// HyperBall registers: a power of two from 16 to 65536.
pub fn parse_registers(s: &str) -> Result<u32, String> {
    let v: u32 = s
        .parse()
        .map_err(|_| format!("expected a number, got {s:?}"))?;
    if v.is_power_of_two() && (16..=65536).contains(&v) {
        Ok(v)
    } else {
        Err(format!("{v} is not a power of two from 16 to 65536"))
    }
}

impl PlanSettings {
    /// The profile options these settings ask for.
    pub fn options(&self) -> super::ProfileOptions {
        use super::plan::{Choice, DistanceEstimator};
        let (distances, distance_estimator) = match self.distances {
            DistancesMode::Auto => (Choice::Auto, DistanceEstimator::Cheaper),
            DistancesMode::Exact => (Choice::Exact, DistanceEstimator::Cheaper),
            DistancesMode::Sources => (Choice::Estimate, DistanceEstimator::Sources),
            DistancesMode::Ball => (Choice::Estimate, DistanceEstimator::Ball),
        };
        let defaults = super::ProfileOptions::default();
        super::ProfileOptions {
            exact_seconds: self.exact_within,
            diameter_seconds: self.diameter_within,
            clustering: match self.clustering {
                ClusteringMode::Auto => Choice::Auto,
                ClusteringMode::Exact => Choice::Exact,
                ClusteringMode::Sampled => Choice::Estimate,
            },
            distances,
            distance_estimator,
            clustering_margin: super::Margin {
                absolute: self.clustering_margin,
                relative: self.clustering_relative,
                ..defaults.clustering_margin
            },
            distance_tolerance: self.distance_margin,
            max_sources: self.max_sources.max(1),
            ball: crate::estimate::hyperball::BallOptions {
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
                super::Groups {
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

/// How an input is read: grammar, header, columns, malformed lines, limits, where it is built.
#[derive(ClapArgs, Debug, Clone)]
pub struct LoadSettings {
    /// Input grammar.
    #[arg(long, value_enum, default_value_t = GrammarMode::Auto)]
    pub format: GrammarMode,
    /// Whether the first data line is a column header.
    #[arg(long, value_enum, default_value_t = HeaderMode::Auto)]
    pub header: HeaderMode,
    /// The two id columns of a delimited export (CSV with quoting, tab- or blank-separated) or a
    /// Parquet file: names or 1-based positions, e.g. `sender,recipient` or `2,4` (default: the
    /// first two columns).
    #[arg(long, value_name = "A,B", value_parser = crate::read::columns::ColumnChoice::parse)]
    pub columns: Option<crate::read::columns::ColumnChoice>,
    /// Skip malformed lines (counted, first few shown) instead of stopping at the first.
    #[arg(long)]
    pub skip_malformed: bool,
    /// Longest line accepted, in bytes.
    #[arg(long, default_value_t = 1 << 20, value_name = "BYTES")]
    pub max_line: usize,
    /// Memory the build may use, e.g. 8G (default: 90% of the memory available now).
    #[arg(long, value_name = "SIZE", value_parser = crate::store::limits::parse_size)]
    pub memory_budget: Option<u64>,
    /// Where the adjacency is built: in memory when it fits the budget, else on disk (auto);
    /// memory only (stop when over budget); or always on disk.
    #[arg(long, value_enum, default_value_t = BuildMode::Auto)]
    pub build: BuildMode,
    /// Folder for a build on disk's sorted runs (default: beside the output store, else the
    /// system's temporary folder); removed on every exit, Ctrl-C included.
    #[arg(long, value_name = "DIR")]
    pub scratch: Option<PathBuf>,
    /// Space a build on disk leaves free on the scratch disk; it refuses to start otherwise.
    #[arg(long, value_name = "SIZE", default_value = "1G", value_parser = parse_size_or_zero)]
    pub scratch_keep_free: u64,
    /// The file is directed: a line `u v` is the edge u → v. The profile adds reciprocity,
    /// in- and out-degrees, strongly connected components and directed clustering; the other
    /// figures are computed on the symmetrised graph. Built in memory only.
    #[arg(long)]
    pub directed: bool,
}

/// A size such as 8G, or 0.
pub fn parse_size_or_zero(s: &str) -> Result<u64, crate::error::ParamError> {
    if s.trim() == "0" {
        return Ok(0);
    }
    crate::store::limits::parse_size(s)
}

/// Where the adjacency is built.
#[derive(ValueEnum, Clone, Copy, Debug)]
pub enum BuildMode {
    /// In memory when it fits --memory-budget and is under 3 GiB, else on disk (when the scratch
    /// disk has room; larger graphs build faster and leaner there).
    Auto,
    /// In memory only.
    Memory,
    /// On disk: sorted runs merged into a mapped store.
    Disk,
}

/// The input grammar.
#[derive(ValueEnum, Clone, Copy, Debug)]
pub enum GrammarMode {
    /// Matrix Market if the banner is there, else an edge list.
    Auto,
    /// Two ids per line.
    Edges,
    /// Matrix Market coordinate format.
    Mtx,
}

/// Whether the first data line is a header.
#[derive(ValueEnum, Clone, Copy, Debug)]
pub enum HeaderMode {
    /// Guess from the first two data lines.
    Auto,
    /// The first data line is a header.
    Skip,
    /// There is no header line.
    None,
}

impl LoadSettings {
    /// The load options these settings ask for.
    pub fn options(&self) -> LoadOptions {
        LoadOptions {
            format: match self.format {
                GrammarMode::Auto => FormatChoice::Auto,
                GrammarMode::Edges => FormatChoice::EdgeList,
                GrammarMode::Mtx => FormatChoice::MatrixMarket,
            },
            header: match self.header {
                HeaderMode::Auto => HeaderChoice::Auto,
                HeaderMode::Skip => HeaderChoice::Skip,
                HeaderMode::None => HeaderChoice::None,
            },
            skip_malformed: self.skip_malformed,
            max_line: self.max_line,
            memory_budget: self
                .memory_budget
                .unwrap_or_else(crate::store::limits::default_memory_budget),
            build: match self.build {
                BuildMode::Auto => BuildChoice::Auto,
                BuildMode::Memory => BuildChoice::Memory,
                BuildMode::Disk => BuildChoice::Disk,
            },
            scratch: self.scratch.clone(),
            scratch_keep_free: self.scratch_keep_free,
            columns: self.columns.clone(),
            directed: self.directed,
            ..LoadOptions::default()
        }
    }
}

/// A keyword's value as a caller gives it: a switch, or text in the command line's spelling
/// (numbers in decimal, lists comma-separated, "95%" or "0.95").
#[derive(Debug, Clone, PartialEq)]
pub enum Word {
    /// A switch such as `skip_malformed=True`.
    Switch(bool),
    /// Any other value, spelt as on the command line.
    Text(String),
}

/// Every keyword [`from_keywords`] accepts, in the command line's spelling with `_` for `-`.
pub fn keyword_names() -> Vec<String> {
    keyword_command()
        .get_arguments()
        .filter_map(|a| a.get_long())
        .map(|l| l.replace('-', "_"))
        .collect()
}

/// The keywords of [`LoadSettings`] alone (how the input is read), spelt with `_`.
pub fn load_keyword_names() -> Vec<String> {
    use clap::Args;
    LoadSettings::augment_args(clap::Command::new("plumb"))
        .get_arguments()
        .filter_map(|a| a.get_long())
        .map(|l| l.replace('-', "_"))
        .collect()
}

fn keyword_command() -> clap::Command {
    use clap::Args;
    let cmd = clap::Command::new("plumb")
        .no_binary_name(true)
        .disable_help_flag(true);
    PlanSettings::augment_args(LoadSettings::augment_args(cmd))
}

/// Read settings given as `name=value` pairs (names as the command line's long options, with
/// `_` or `-`), through the command line's own parser: the same spellings, defaults and checks.
/// An unknown name or a value the option refuses is a [`ParamError`] naming the keyword.
pub fn from_keywords(words: &[(String, Word)]) -> Result<(LoadSettings, PlanSettings), ParamError> {
    use clap::FromArgMatches;
    let known = keyword_names();
    let mut argv: Vec<String> = Vec::new();
    for (name, value) in words {
        let key = name.replace('-', "_");
        if !known.contains(&key) {
            return Err(format!(
                "unknown option {name:?}; the options are: {}",
                known.join(", ")
            )
            .into());
        }
        let flag = format!("--{}", key.replace('_', "-"));
        match value {
            Word::Switch(true) => argv.push(flag),
            Word::Switch(false) => {}
            // One `--name=value` word, so a value starting with `-` is not read as an option.
            Word::Text(t) => argv.push(format!("{flag}={t}")),
        }
    }
    let matches = keyword_command()
        .try_get_matches_from(&argv)
        .map_err(|e| keyword_error(&e))?;
    let load = LoadSettings::from_arg_matches(&matches).map_err(|e| keyword_error(&e))?;
    let plan = PlanSettings::from_arg_matches(&matches).map_err(|e| keyword_error(&e))?;
    Ok((load, plan))
}

/// clap's message without its usage lines, with `--some-option <VALUE>` spelt as the keyword.
fn keyword_error(e: &clap::Error) -> ParamError {
    let text = e.render().to_string();
    let mut first = text
        .lines()
        .next()
        .unwrap_or_default()
        .trim_start_matches("error: ")
        .to_string();
    // Keep the list of accepted words when clap gives one.
    if let Some(values) = text
        .lines()
        .map(str::trim)
        .find(|l| l.starts_with("[possible values:"))
    {
        first.push(' ');
        first.push_str(values);
    }
    let mut out = String::new();
    let mut rest = first.as_str();
    while let Some(at) = rest.find("--") {
        out.push_str(&rest[..at]);
        let tail = &rest[at + 2..];
        let end = tail
            .find(|c: char| !(c.is_ascii_alphanumeric() || c == '-'))
            .unwrap_or(tail.len());
        out.push_str(&tail[..end].replace('-', "_"));
        let mut after = &tail[end..];
        // Drop the value placeholder clap shows after the option.
        if let Some(stripped) = after.strip_prefix(" <")
            && let Some(close) = stripped.find('>')
        {
            after = &stripped[close + 1..];
        }
        rest = after;
    }
    out.push_str(rest);
    ParamError { problem: out }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kw(pairs: &[(&str, Word)]) -> Result<(LoadSettings, PlanSettings), ParamError> {
        let owned: Vec<(String, Word)> = pairs
            .iter()
            .map(|(k, v)| (k.to_string(), v.clone()))
            .collect();
        from_keywords(&owned)
    }

    fn text(s: &str) -> Word {
        Word::Text(s.to_string())
    }

    #[test]
    fn no_keywords_give_the_library_defaults() {
        let (load, plan) = kw(&[]).unwrap();
        let (o, d) = (plan.options(), super::super::ProfileOptions::default());
        assert_eq!(
            format!("{:?}", o.clustering_margin),
            format!("{:?}", d.clustering_margin)
        );
        assert_eq!(
            (o.level, o.seed, o.max_sources),
            (d.level, d.seed, d.max_sources)
        );
        assert_eq!(
            (o.exact_seconds, o.diameter_seconds),
            (d.exact_seconds, d.diameter_seconds)
        );
        assert_eq!(o.distance_tolerance, d.distance_tolerance);
        assert_eq!(format!("{:?}", o.ball), format!("{:?}", d.ball));
        assert_eq!(o.groups, d.groups);
        assert_eq!(o.swaps_per_edge, d.swaps_per_edge);
        let (l, e) = (load.options(), LoadOptions::default());
        assert_eq!(
            (l.max_line, l.skip_malformed),
            (e.max_line, e.skip_malformed)
        );
        assert_eq!(l.scratch_keep_free, e.scratch_keep_free);
    }

    #[test]
    fn keywords_take_the_command_lines_spellings() {
        let (load, plan) = kw(&[
            ("level", text("90%")),
            ("seed", text("7")),
            ("figures", text("clustering")),
            ("skip_malformed", Word::Switch(true)),
            ("columns", text("from,to")),
            ("exact-within", text("3s")),
        ])
        .unwrap();
        let o = plan.options();
        assert!((o.level - 0.9).abs() < 1e-12);
        assert_eq!(o.seed, 7);
        assert_eq!(o.exact_seconds, 3.0);
        assert!(o.groups.clustering && !o.groups.distances && !o.groups.small_world);
        let l = load.options();
        assert!(l.skip_malformed);
        assert!(l.columns.is_some());
        let (load, _) = kw(&[("skip_malformed", Word::Switch(false))]).unwrap();
        assert!(!load.options().skip_malformed);
    }

    #[test]
    fn bad_keywords_are_named() {
        // A value that starts with a dash is still a value (and here refused as one).
        let e = kw(&[("seed", text("-3"))]).unwrap_err();
        assert!(
            e.problem.contains("'seed'") && e.problem.contains("-3"),
            "{e}"
        );
        let e = kw(&[("levle", text("0.9"))]).unwrap_err();
        assert!(e.problem.contains("unknown option \"levle\""), "{e}");
        assert!(e.problem.contains("level"), "{e}");
        let e = kw(&[("level", text("2"))]).unwrap_err();
        assert!(
            e.problem.contains("'level'") && !e.problem.contains("--"),
            "{e}"
        );
        assert!(e.problem.contains("not strictly between 0 and 1"), "{e}");
        let e = kw(&[("clustering", text("maybe"))]).unwrap_err();
        assert!(
            e.problem.contains("clustering") && e.problem.contains("maybe"),
            "{e}"
        );
    }
}

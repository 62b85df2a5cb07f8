//! The profile as a versioned, self-describing document: what was read (size and checksum of the
//! input), with which settings (seed, level, budget, margins), by which plumb, and every figure.
//! Its JSON Schema is generated from these types (doc comments become descriptions, with units)
//! and committed as `docs/profile.schema.json`; a test keeps the two identical.

use std::path::Path;

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::profile::{Groups, Profile, ProfileOptions};

/// Name of the document kind, for readers that receive many kinds.
pub const SCHEMA_NAME: &str = "plumb-profile";
/// Bumped on any change that could break a reader; additions of optional fields do not bump it.
pub const SCHEMA_VERSION: u32 = 2;

/// The input file as given.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct InputFile {
    /// The path as given on the command line (`<stdin>` for standard input).
    pub path: String,
    /// Size of the file as stored (compressed if it is), in bytes; `null` for standard input.
    pub bytes: Option<u64>,
    /// XXH3-64 of the file's bytes as stored, 16 hex digits; `null` for standard input. Two
    /// snapshots with the same checksum are the same input.
    pub xxh3: Option<String>,
}

/// The settings that shaped the figures.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Settings {
    /// Seed of every random choice.
    pub seed: u64,
    /// Confidence level of every interval (e.g. 0.95).
    pub level: f64,
    /// Time each exact figure group may be predicted to take, in seconds.
    pub exact_seconds: f64,
    /// Time the exact diameter search may take, in seconds.
    pub diameter_seconds: f64,
    /// Half-width of the clustering intervals when sampled (absolute).
    pub clustering_margin: f64,
    /// Half-width of the clustering intervals when sampled, relative to the figure; the narrower
    /// of the two applies (0 = absolute only; absent in reports before plumb 0.1 wrote it).
    #[serde(default)]
    pub clustering_relative_margin: f64,
    /// Half-width of the mean-distance interval when estimated, relative to the mean.
    pub distance_margin: f64,
    /// Sampled reference graphs of each kind requested (`null` = by budget).
    pub reference_graphs: Option<usize>,
    /// Figure groups requested.
    pub groups: Groups,
    /// Worker threads the cost predictions assumed.
    pub threads: usize,
}

/// A profile report: schema name and version, plumb's version, the input, the settings, and the
/// profile with every figure's method and interval.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Report {
    /// Always "plumb-profile".
    pub schema: String,
    /// Version of this document's layout.
    pub schema_version: u32,
    /// Version of the plumb that wrote it.
    pub plumb_version: String,
    /// The input file.
    pub input: InputFile,
    /// The settings.
    pub settings: Settings,
    /// The profile.
    pub profile: Profile,
    /// HyperLogLog sketches of the node ids and edges by original id (precision 14, hash seed
    /// 0), so that two reports can be compared for churn without their input files. Absent when
    /// not computed; a sketch in a layout this plumb does not read (reports of schema version 1)
    /// is ignored rather than refusing the report.
    #[serde(
        default,
        skip_serializing_if = "Option::is_none",
        deserialize_with = "lenient_sketch"
    )]
    #[schemars(with = "Option<crate::estimate::sketch::SketchBlock>")]
    pub ids: Option<crate::estimate::sketch::IdSketch>,
    /// How a distributed profile ran (`plumb spread`); absent for a single-machine profile.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub spread: Option<SpreadRun>,
}

/// How a distributed run went: its size and what crossed between workers.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct SpreadRun {
    /// Processes in the run.
    pub processes: u64,
    /// Workers over all processes.
    pub workers: u64,
    /// Part files read (one for a single file).
    pub parts: u64,
    /// Items (edges, adjacency entries, labels, wedges, …) handed by workers to other workers.
    pub exchanged_items: u64,
    /// Rounds of label passing the components took.
    pub label_rounds: u64,
    /// Rounds of wedge checking the triangle count took.
    pub wedge_rounds: u64,
    /// Frontier rounds of the sampled-source searches (one per level of each batch).
    #[serde(default)]
    pub bfs_rounds: u64,
    /// HyperBall rounds over all its runs (one per step of each).
    #[serde(default)]
    pub ball_rounds: u64,
    /// The items exchanged, by kind.
    #[serde(default)]
    pub exchanged: Exchanged,
}

/// Items sent to other workers, by what they were (for the sizing of a run).
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Exchanged {
    /// Edge candidates (16 bytes and a direction byte each).
    pub edges: u64,
    /// Adjacency entries (16 bytes each).
    pub adjacency: u64,
    /// Neighbours' degrees (20 bytes each).
    pub degrees: u64,
    /// Component labels offered (16 bytes each) and component members (12 bytes each).
    pub labels: u64,
    /// Open wedges checked (24 bytes each) and triangle corners credited (8 bytes each).
    pub wedges: u64,
    /// Search frontiers (16 bytes each: a node and 64 source bits).
    pub frontier: u64,
    /// HyperBall counters (the registers and, per item, the neighbours' slots at the receiver).
    #[serde(default)]
    pub counters: u64,
    /// Everything else: lone nodes, candidates, partial figures, control.
    pub other: u64,
}

impl Exchanged {
    /// Add another worker's counts.
    pub fn merge(&mut self, o: &Exchanged) {
        self.edges += o.edges;
        self.adjacency += o.adjacency;
        self.degrees += o.degrees;
        self.labels += o.labels;
        self.wedges += o.wedges;
        self.frontier += o.frontier;
        self.counters += o.counters;
        self.other += o.other;
    }
}

/// The id sketch when it is in a layout this plumb reads, else none.
fn lenient_sketch<'de, D: serde::Deserializer<'de>>(
    d: D,
) -> std::result::Result<Option<crate::estimate::sketch::IdSketch>, D::Error> {
    let v: Option<serde_json::Value> = Option::deserialize(d)?;
    Ok(v.and_then(|v| serde_json::from_value(v).ok()))
}

/// Size and XXH3-64 of a file, read in blocks. Not through a memory map: a map's pages count
/// in the resident set, and when the input is the store file being profiled (itself mapped) a
/// second map doubled it (a 16.8 GiB peak at a billion edges).
/// A folder or pattern of part files is summed as its parts' bytes one after another, in the
/// order they are read (by path), with their total size.
pub fn checksum(path: &Path) -> Result<(u64, String)> {
    use std::io::Read;
    let files = crate::read::source::list_parts(path)?.unwrap_or_else(|| vec![path.to_path_buf()]);
    let mut hasher = xxhash_rust::xxh3::Xxh3::new();
    let mut buf = vec![0u8; 4 << 20];
    let mut len = 0u64;
    for path in &files {
        let mut file = std::fs::File::open(path).map_err(|e| Error::io(path, "open", e))?;
        loop {
            let got = match file.read(&mut buf) {
                Ok(0) => break,
                Ok(k) => k,
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
                Err(e) => return Err(Error::io(path, "read", e)),
            };
            hasher.update(&buf[..got]);
            len += got as u64;
        }
    }
    Ok((len, format!("{:016x}", hasher.digest())))
}

impl Report {
    /// Wrap `profile` with the facts of its input (`path`, `None` for standard input); the
    /// input's size and checksum are read here.
    pub fn new(profile: Profile, path: Option<&Path>, opts: &ProfileOptions) -> Result<Report> {
        let sum = path.map(checksum).transpose()?;
        Ok(Report::with_checksum(profile, path, sum, opts))
    }

    /// As [`Report::new`], with the input's size and checksum already known.
    pub fn with_checksum(
        profile: Profile,
        path: Option<&Path>,
        sum: Option<(u64, String)>,
        opts: &ProfileOptions,
    ) -> Report {
        let (bytes, xxh3) = sum.map_or((None, None), |(b, h)| (Some(b), Some(h)));
        Report {
            schema: SCHEMA_NAME.into(),
            schema_version: SCHEMA_VERSION,
            plumb_version: env!("CARGO_PKG_VERSION").into(),
            input: InputFile {
                path: path.map_or("<stdin>".into(), |p| p.display().to_string()),
                bytes,
                xxh3,
            },
            settings: Settings {
                seed: opts.seed,
                level: opts.level,
                exact_seconds: opts.exact_seconds,
                diameter_seconds: opts.diameter_seconds,
                clustering_margin: opts.clustering_margin.absolute,
                clustering_relative_margin: opts.clustering_margin.relative,
                distance_margin: opts.distance_tolerance,
                reference_graphs: opts.reference_graphs,
                groups: opts.groups,
                threads: opts.threads,
            },
            profile,
            ids: None,
            spread: None,
        }
    }

    /// Attach the id sketches of `g` (the graph this report profiles).
    /// Its time is a stage of the profile (`id sketch`): it is a pass over every edge.
    pub fn with_sketch(mut self, g: &crate::Graph) -> Report {
        let started = std::time::Instant::now();
        self.ids = Some(crate::estimate::sketch::IdSketch::of_graph(
            g,
            crate::estimate::sketch::DEFAULT_PRECISION,
            0,
        ));
        self.profile.stages.push(crate::store::intake::Stage {
            name: crate::store::intake::StageName::IdSketch,
            seconds: started.elapsed().as_secs_f64(),
        });
        self
    }
}

/// The JSON Schema of [`Report`], pretty-printed with a final newline.
pub fn schema_json() -> String {
    let schema = schemars::schema_for!(Report);
    let mut s = serde_json::to_string_pretty(&schema).unwrap_or_default();
    s.push('\n');
    s
}

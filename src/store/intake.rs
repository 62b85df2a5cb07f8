//! What reading an input found: the cleaning counts a user needs to trust the graph, and how long
//! each stage took. Stored inside store files so the counts survive packing.

use serde::{Deserialize, Serialize};

use crate::read::source::Compression;

/// The input's grammar.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub enum InputFormat {
    /// Two ids per line.
    EdgeList,
    /// Matrix Market coordinate format.
    MatrixMarket,
    /// Apache Parquet, two id columns.
    Parquet,
}

/// How ids are read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, schemars::JsonSchema)]
#[serde(rename_all = "lowercase")]
pub enum IdKind {
    /// Unsigned integers up to 2^64-1.
    Integer,
    /// Any other token, kept verbatim.
    Text,
}

/// A malformed line that was skipped (with `--skip-malformed`).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct BadLine {
    /// The part file it is in, when the input has several parts.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub part: Option<String>,
    /// Its line, from 1 (within its part).
    pub line: u64,
    /// Byte offset of the line.
    pub byte: u64,
    /// What is wrong with it.
    pub problem: String,
    /// The line's start, as written.
    pub excerpt: String,
}

/// The stages of reading and profiling whose wall time is reported.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize, schemars::JsonSchema)]
pub enum StageName {
    /// First pass over the text: validate lines, tally ids and degrees.
    #[serde(rename = "scan")]
    Scan,
    /// Rank the ids into dense node indices.
    #[serde(rename = "index ids")]
    IndexIds,
    /// Second pass: write the adjacency.
    #[serde(rename = "fill")]
    Fill,
    /// Sort each list and merge repeats.
    #[serde(rename = "sort and merge")]
    SortAndMerge,
    /// Degree statistics.
    #[serde(rename = "degrees")]
    Degrees,
    /// Connected components.
    #[serde(rename = "components")]
    Components,
    /// Exact triangle listing.
    #[serde(rename = "triangles")]
    Triangles,
    /// Wedge-sampled clustering.
    #[serde(rename = "sampled clustering")]
    SampledClustering,
    /// Diameter bounds and search.
    #[serde(rename = "diameter")]
    Diameter,
    /// Exact all-pairs distances.
    #[serde(rename = "all-pairs distances")]
    AllPairsDistances,
    /// BFS from sampled sources.
    #[serde(rename = "sampled distances")]
    SampledDistances,
    /// HyperBall neighbourhood function.
    #[serde(rename = "HyperBall")]
    HyperBall,
    /// Sampled reference graphs for the small-world comparison.
    #[serde(rename = "reference graphs")]
    ReferenceGraphs,
    /// HyperLogLog sketches of the node and edge ids, kept in JSON reports for churn.
    #[serde(rename = "id sketch")]
    IdSketch,
    /// Reciprocity, in- and out-degrees, strong components, directed clustering.
    #[serde(rename = "directed figures")]
    Directed,
}

impl StageName {
    /// The stage's name in reports and progress bars.
    pub fn label(self) -> &'static str {
        match self {
            StageName::Scan => "scan",
            StageName::IndexIds => "index ids",
            StageName::Fill => "fill",
            StageName::SortAndMerge => "sort and merge",
            StageName::Degrees => "degrees",
            StageName::Components => "components",
            StageName::Triangles => "triangles",
            StageName::SampledClustering => "sampled clustering",
            StageName::Diameter => "diameter",
            StageName::AllPairsDistances => "all-pairs distances",
            StageName::SampledDistances => "sampled distances",
            StageName::HyperBall => "HyperBall",
            StageName::ReferenceGraphs => "reference graphs",
            StageName::IdSketch => "id sketch",
            StageName::Directed => "directed figures",
        }
    }

    /// Whether the stage measured clustering (exact or sampled).
    pub fn is_clustering(self) -> bool {
        matches!(self, StageName::Triangles | StageName::SampledClustering)
    }
}

impl std::fmt::Display for StageName {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.label())
    }
}

/// Wall time of one stage.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Stage {
    /// Which stage.
    pub name: StageName,
    /// Wall time in seconds.
    pub seconds: f64,
}

/// What reading an input found: sizes, cleaning counts and timings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Intake {
    /// The path as given.
    pub source: String,
    /// When the input is a store file: the path of the text file it was packed from (the
    /// counts below are that file's).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub packed_from: Option<String>,
    /// The grammar read.
    pub format: InputFormat,
    /// The compression found (for part files: theirs when they share one, else the first's).
    pub compression: Compression,
    /// Part files read as one input (a folder or a pattern of parts); absent for one file.
    /// `input_bytes` is then their total size.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub parts: Option<u64>,
    /// zstd frames in the input (several frames decode in parallel).
    pub frames: Option<u64>,
    /// Bytes on disk.
    pub input_bytes: u64,
    /// Bytes of text after decompression.
    pub text_bytes: u64,
    /// Lines of text.
    pub lines: u64,
    /// Blank lines.
    pub blank_lines: u64,
    /// Comment lines (`#` or `%`).
    pub comment_lines: u64,
    /// The header line that was skipped, if any (the first part's, for part files).
    pub header_line: Option<String>,
    /// Header lines skipped: one per part file that repeats it (absent for one file).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub header_lines: Option<u64>,
    /// Where the ids were read when columns were chosen: their positions (from 1), names and
    /// the delimiter, in words.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub id_columns: Option<String>,
    /// Lines that held an edge, self-loops included.
    pub edge_lines: u64,
    /// Edge lines with columns after the two ids (ignored).
    pub extra_column_lines: u64,
    /// Edge lines joining a node to itself (dropped).
    pub self_loops: u64,
    /// Edge lines repeating an earlier line in the same direction (merged).
    pub repeated_lines: u64,
    /// Node pairs listed in both directions (merged into one undirected edge; with `directed`,
    /// kept as a mutual pair).
    pub reciprocal_pairs: u64,
    /// The input was read as directed (`--directed`): lines are edges u → v.
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub directed: bool,
    /// Malformed lines skipped (with `--skip-malformed`).
    pub malformed_skipped: u64,
    /// The first few skipped lines, in file order.
    pub malformed_examples: Vec<BadLine>,
    /// Nodes.
    pub nodes: u64,
    /// Undirected edges kept.
    pub edges: u64,
    /// Nodes left without edges (for example ones seen only in self-loops).
    pub isolated_nodes: u64,
    /// Integer or text ids.
    pub id_kind: IdKind,
    /// With text ids: the first id that made them text (absent for integer ids).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub first_text_id: Option<FirstTextId>,
    /// Wall time of each stage of the build.
    pub stages: Vec<Stage>,
    /// Present when the adjacency was built on disk (over the memory budget): the analyses
    /// then read a mapped store, with pages coming from disk as needed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub on_disk: Option<DiskBuild>,
}

/// How a build on disk went: sorted runs in a scratch folder, merged into a store file (an
/// external merge sort; Knuth, *The Art of Computer Programming* vol. 3, 1998, §5.4.1).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct DiskBuild {
    /// The folder the runs went to (removed afterwards).
    pub scratch: String,
    /// Sorted runs written and merged.
    pub runs: u64,
    /// Bytes the runs took.
    pub run_bytes: u64,
    /// The memory budget the build kept to, in bytes.
    pub memory_budget: u64,
}

/// The first id that is not an integer up to 2^64-1, which makes every id of the file text (so
/// `007` and `7` are then different nodes).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct FirstTextId {
    /// The id as written (cut at 60 characters).
    pub id: String,
    /// The part file it is in, when the input has several parts.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub part: Option<String>,
    /// Its line, from 1.
    pub line: u64,
    /// Byte offset of the id (in the decompressed text for compressed input).
    pub byte: u64,
    /// Whether it is all digits, an integer beyond 2^64-1.
    pub integer_too_large: bool,
}

impl Intake {
    /// The report for a graph that was generated in memory rather than read from text.
    pub fn generated(source: &str, nodes: u64, edges: u64, isolated_nodes: u64) -> Self {
        Intake {
            source: source.to_string(),
            packed_from: None,
            format: InputFormat::EdgeList,
            compression: Compression::None,
            parts: None,
            frames: None,
            input_bytes: 0,
            text_bytes: 0,
            lines: 0,
            blank_lines: 0,
            comment_lines: 0,
            header_line: None,
            header_lines: None,
            id_columns: None,
            edge_lines: edges,
            extra_column_lines: 0,
            self_loops: 0,
            repeated_lines: 0,
            reciprocal_pairs: 0,
            directed: false,
            malformed_skipped: 0,
            malformed_examples: Vec::new(),
            nodes,
            edges,
            isolated_nodes,
            id_kind: IdKind::Integer,
            first_text_id: None,
            stages: Vec::new(),
            on_disk: None,
        }
    }

    /// Wall time of the whole build.
    pub fn total_seconds(&self) -> f64 {
        self.stages.iter().map(|s| s.seconds).sum()
    }
}

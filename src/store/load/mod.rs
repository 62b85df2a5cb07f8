//! Reading an edge file (plain, zstd or gzip; edge list or Matrix Market) into a [`Graph`].
//!
//! Plain files are scanned twice straight from the memory map: pass one validates every line and
//! tallies ids and raw degrees, pass two writes the adjacency; each piece's pages leave the
//! resident set once it is parsed, so a file larger than the store never sits in memory whole.
//! Compressed input is decoded pipelined with parsing; its integer edges are kept compactly
//! between the passes while they take under 64 MiB, beyond which keeping them would double the
//! peak, so the stream is decoded a second time instead. Files with text ids take an extra tally
//! pass.

mod int_pass;
mod on_disk;
mod text_pass;

use std::borrow::Cow;
use std::path::Path;
use std::time::Instant;

use rayon::prelude::*;

use crate::error::{Error, Position, Result};
use crate::progress::{Progress, Unit};
use crate::read::columns::{self, ColumnChoice, Delimiter, Picked};
use crate::read::edgeline::{self, Line};
use crate::read::mtx::{self, Header as MtxHeader};
use crate::read::parquet::{self, ParquetFault, ParquetPlan};
use crate::read::pieces::{self, Source};
use crate::read::scan::{self, ChunkOutcome, Counts, LineError, MtxRules, ScanRules};
use crate::read::source::{self, Compression, InputBytes, Sniffed, StreamFault};
use crate::store::fill::Filler;
use crate::store::graph::{Graph, NodeIds};
use crate::store::ids::{self, IndexFault};
use crate::store::intake::{BadLine, FirstTextId, IdKind, InputFormat, Intake, Stage, StageName};

/// Which grammar to read the input with.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum FormatChoice {
    /// Matrix Market if the file starts with its banner, else an edge list.
    #[default]
    Auto,
    /// Two ids per line.
    EdgeList,
    /// Matrix Market coordinate format.
    MatrixMarket,
}

/// Whether the first data line of an edge list is a column header.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum HeaderChoice {
    /// Guess (see `edgeline::looks_like_header`).
    #[default]
    Auto,
    /// The first data line is a header: skip it.
    Skip,
    /// There is no header: the first data line is an edge.
    None,
}

/// Where the adjacency is built.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum BuildChoice {
    /// In memory when it fits the memory budget and is under 3 GiB, else on disk (when the
    /// scratch disk has room: larger graphs build faster and leaner there).
    #[default]
    Auto,
    /// In memory only: a build over the budget stops with [`Error::OverBudget`].
    Memory,
    /// On disk always: sorted runs in the scratch folder merged into a mapped store.
    Disk,
}

/// How to read an input: grammar, header, malformed lines, limits.
#[derive(Debug, Clone)]
pub struct LoadOptions {
    /// The grammar.
    pub format: FormatChoice,
    /// Whether the first data line is a header.
    pub header: HeaderChoice,
    /// Skip and count malformed lines instead of stopping at the first.
    pub skip_malformed: bool,
    /// Longest line accepted, in bytes.
    pub max_line: usize,
    /// Size of the pieces handed to workers; 0 chooses from the input size.
    pub piece_bytes: usize,
    /// Most distinct nodes accepted (at most 2^32 - 1).
    pub max_nodes: u64,
    /// Bytes the build may allocate; a build that would need more goes to disk (or, with
    /// [`BuildChoice::Memory`], stops with a clear error).
    pub memory_budget: u64,
    /// In memory, on disk, or whichever fits the budget.
    pub build: BuildChoice,
    /// Where a build on disk puts its sorted runs (a private folder is made inside): `None`
    /// for beside the output store when there is one, else the system's temporary folder.
    pub scratch: Option<std::path::PathBuf>,
    /// Bytes a build on disk leaves free on the scratch disk; it refuses to start otherwise.
    pub scratch_keep_free: u64,
    /// The two id columns of a delimited export (names in its header, or 1-based positions);
    /// `None` reads the first two fields.
    pub columns: Option<ColumnChoice>,
    /// The file is directed: a line `u v` is the edge u → v. The graph keeps each edge's
    /// direction beside the symmetrised adjacency (built in memory only).
    pub directed: bool,
}

impl Default for LoadOptions {
    fn default() -> Self {
        LoadOptions {
            format: FormatChoice::Auto,
            header: HeaderChoice::Auto,
            skip_malformed: false,
            max_line: 1 << 20,
            piece_bytes: 0,
            max_nodes: ids::MAX_NODES,
            memory_budget: crate::store::limits::default_memory_budget(),
            build: BuildChoice::Auto,
            scratch: None,
            scratch_keep_free: 1 << 30,
            columns: None,
            directed: false,
        }
    }
}

/// Load an edge file (plain, zstd or gzip; edge list or Matrix Market) or a store file.
///
/// ```
/// use plumb::progress::Quiet;
/// use plumb::store::load::{LoadOptions, load};
///
/// let path = std::env::temp_dir().join(format!("plumb-doc-load-{}.tsv", std::process::id()));
/// std::fs::write(&path, "# who replied to whom\n1 2\n2 1\n2 3\n3 3\n").unwrap();
/// let g = load(&path, &LoadOptions::default(), &Quiet)?;
/// assert_eq!((g.node_count(), g.edge_count()), (3, 2));
/// assert_eq!((g.intake.reciprocal_pairs, g.intake.self_loops), (1, 1));
/// # std::fs::remove_file(&path).ok();
/// # Ok::<(), plumb::Error>(())
/// ```
pub fn load(path: &Path, opts: &LoadOptions, progress: &dyn Progress) -> Result<Graph> {
    match source::list_parts(path)? {
        Some(parts) => load_parts(path, &parts, None, opts, progress, false),
        None => load_input(InputBytes::open(path)?, opts, progress),
    }
}

/// Load from bytes already opened.
pub fn load_input(input: InputBytes, opts: &LoadOptions, progress: &dyn Progress) -> Result<Graph> {
    load_to(input, None, opts, progress)
}

/// Load an input and save it as a store file at `dest` (atomically); returns the graph and the
/// file's size. A build on disk merges straight into `dest` and maps it; an in-memory build
/// writes its graph there. Either way the file is the same, byte for byte, but for the build's
/// timings and the note that it ran on disk.
pub fn pack(
    path: &Path,
    dest: &Path,
    opts: &LoadOptions,
    progress: &dyn Progress,
) -> Result<(Graph, u64)> {
    let g = match source::list_parts(path)? {
        Some(parts) => load_parts(path, &parts, Some(dest), opts, progress, false)?,
        None => load_to(InputBytes::open(path)?, Some(dest), opts, progress)?,
    };
    // Built on disk just now (not a store file given as input): the merge wrote `dest`.
    if g.intake.on_disk.is_some() && g.intake.packed_from.is_none() {
        let bytes = std::fs::metadata(dest)
            .map_err(|e| Error::io(dest, "read", e))?
            .len();
        return Ok((g, bytes));
    }
    let bytes = crate::store::file::write(&g, dest)?;
    Ok((g, bytes))
}

fn load_to(
    input: InputBytes,
    dest: Option<&Path>,
    opts: &LoadOptions,
    progress: &dyn Progress,
) -> Result<Graph> {
    let compression = match source::sniff(input.bytes()) {
        Sniffed::Store => {
            let path = input.path.clone();
            let g = crate::store::file::open_input(input)?;
            // A store keeps the directions it was packed with; it cannot invent missing ones.
            if opts.directed && g.directions.is_none() {
                return Err(Error::Parameters {
                    problem: format!(
                        "{}: this store was packed from an undirected read and keeps no \
                         directions; pack the edge file again with --directed",
                        path.display()
                    ),
                });
            }
            return Ok(g);
        }
        Sniffed::Unsupported(format) => {
            return Err(Error::Unsupported {
                path: input.path.clone(),
                format,
            });
        }
        Sniffed::Binary => {
            return Err(Error::Binary {
                path: input.path.clone(),
                first_bytes: source::hex_head(input.bytes()),
            });
        }
        Sniffed::Text => Compression::None,
        Sniffed::Compressed(c) => c,
    };
    let plan = match compression {
        Compression::Parquet => Some(parquet::plan(input.bytes(), opts.columns.as_ref()).map_err(
            |f| Error::Parquet {
                path: input.path.clone(),
                problem: match f {
                    ParquetFault::Unreadable(p) => format!("unreadable ({p})"),
                    ParquetFault::Columns(p) => p,
                },
            },
        )?),
        _ => None,
    };
    let src = source_of(
        &input,
        compression,
        plan.as_ref(),
        input.bytes().len(),
        opts,
    );
    let parts = vec![(input.path.clone(), src)];
    let mut loader = Loader::new(&input.path, parts, opts, progress)?;
    loader.dest = dest;
    loader.run()
}

/// Read the part files `paths` as one graph, for a distributed profile's share of them;
/// `text` reads every id as text (kept as written) even when all are integers, as the whole
/// graph's ids are when another share has a text id.
pub(crate) fn load_paths(
    shown: &Path,
    paths: &[std::path::PathBuf],
    opts: &LoadOptions,
    progress: &dyn Progress,
    text: bool,
) -> Result<Graph> {
    load_parts(shown, paths, None, opts, progress, text)
}

/// Read the part files `paths` (plain, zstd or gzip edge lists, in this order) as one graph;
/// `shown` is the folder or pattern as given; `text` reads every id as text.
fn load_parts(
    shown: &Path,
    paths: &[std::path::PathBuf],
    dest: Option<&Path>,
    opts: &LoadOptions,
    progress: &dyn Progress,
    text: bool,
) -> Result<Graph> {
    if opts.format == FormatChoice::MatrixMarket {
        return Err(Error::Parameters {
            problem: format!(
                "{}: part files are read as edge lists; Matrix Market has one size line for \
                 the whole matrix",
                shown.display()
            ),
        });
    }
    let inputs = paths
        .iter()
        .map(|p| InputBytes::open(p))
        .collect::<Result<Vec<_>>>()?;
    let mut compressions = Vec::with_capacity(inputs.len());
    for input in &inputs {
        let bytes = input.bytes();
        compressions.push(match source::sniff(bytes) {
            Sniffed::Text => Compression::None,
            Sniffed::Compressed(c @ (Compression::Zstd | Compression::Gzip)) => c,
            Sniffed::Binary => {
                return Err(Error::Binary {
                    path: input.path.clone(),
                    first_bytes: source::hex_head(bytes),
                });
            }
            Sniffed::Unsupported(format) => {
                return Err(Error::Unsupported {
                    path: input.path.clone(),
                    format,
                });
            }
            Sniffed::Store | Sniffed::Compressed(_) => {
                return Err(Error::Parameters {
                    problem: format!(
                        "{}: a part must be an edge list, plain, zstd or gzip (this one is a \
                         store or Parquet file; read it on its own)",
                        input.path.display()
                    ),
                });
            }
        });
    }
    let total: usize = inputs.iter().map(|i| i.bytes().len()).sum();
    let parts = inputs
        .iter()
        .zip(compressions)
        .map(|(i, c)| (i.path.clone(), source_of(i, c, None, total, opts)))
        .collect();
    let mut loader = Loader::new(shown, parts, opts, progress)?;
    loader.dest = dest;
    if text {
        loader.run_text()
    } else {
        loader.run()
    }
}

/// The pieces of one input (or part), sized from the whole input's `total` bytes.
fn source_of<'a>(
    input: &'a InputBytes,
    compression: Compression,
    parquet: Option<&'a ParquetPlan>,
    total: usize,
    opts: &LoadOptions,
) -> Source<'a> {
    let threads = rayon::current_num_threads();
    let piece = if opts.piece_bytes > 0 {
        opts.piece_bytes
    } else {
        // Enough pieces to balance the workers, each large enough to amortise hand-off.
        (total / (threads * 16)).clamp(1 << 20, 16 << 20)
    };
    Source {
        data: input.bytes(),
        compression,
        piece,
        max_line: opts.max_line,
        map: input.map(),
        parquet,
    }
}

/// Memory per node while building: offsets (8), raw degree (4), two cursors (8), id (8).
const BYTES_PER_NODE: u64 = 28;

fn check_budget(path: &Path, opts: &LoadOptions, what: String, needed: u64) -> Result<()> {
    if needed > opts.memory_budget {
        return Err(Error::OverBudget {
            path: path.to_path_buf(),
            what,
            needed_mib: needed.div_ceil(1 << 20),
            budget_mib: opts.memory_budget >> 20,
        });
    }
    Ok(())
}

/// Edges parsed before they are written out together.
const FILL_BATCH: usize = 8192;

/// How much text is looked at up front (banner, header guess).
const PEEK: usize = 1 << 20;

/// One part of the input: its path, its text source, and where its header line is.
struct Part<'a> {
    path: std::path::PathBuf,
    src: Source<'a>,
    header_at: Option<u64>,
}

struct Loader<'a> {
    /// The input as given (a file, or the folder or pattern of its parts).
    path: std::path::PathBuf,
    /// The input's parts, in order; one for a single file.
    parts: Vec<Part<'a>>,
    opts: &'a LoadOptions,
    progress: &'a dyn Progress,
    src: Source<'a>,
    rules: ScanRules,
    mtx: Option<MtxHeader>,
    header_line: Option<String>,
    /// The chosen id columns, in words.
    id_columns: Option<String>,
    threads: usize,
    stages: Vec<Stage>,
    clock: Instant,
    /// Why the ids are text: the first id that is not an integer up to 2^64-1.
    first_text_id: Option<FirstTextId>,
    /// The store file being made, when packing.
    dest: Option<&'a Path>,
}

/// What the first pass over the text found.
struct Scanned {
    outcomes: Vec<ChunkOutcome>,
    text_bytes: u64,
    frames: Option<u64>,
}

impl<'a> Loader<'a> {
    fn new(
        shown: &Path,
        sources: Vec<(std::path::PathBuf, Source<'a>)>,
        opts: &'a LoadOptions,
        progress: &'a dyn Progress,
    ) -> Result<Self> {
        let threads = rayon::current_num_threads();
        let several = sources.len() > 1;
        // The first part with any text leads: its header and banner decide for the rest.
        let mut heads = Vec::with_capacity(sources.len());
        for (p, src) in &sources {
            heads.push(peek(*src, p)?);
        }
        let lead = heads.iter().position(|h| !h.is_empty()).unwrap_or(0);
        let (path, src) = (&sources[lead].0, sources[lead].1);
        let data = src.data;
        let parquet = src.parquet;
        let compression = src.compression;
        let head = heads[lead].clone();
        if head.is_empty() {
            return Err(Error::Empty {
                path: if several {
                    shown.to_path_buf()
                } else {
                    path.clone()
                },
                detail: if several {
                    "every part is empty".into()
                } else if data.is_empty() {
                    "the file is empty".into()
                } else if parquet.is_some() {
                    "the Parquet file has no rows".into()
                } else {
                    "it decompresses to nothing".into()
                },
            });
        }
        let banner = mtx::has_banner(&head);
        if several && banner && opts.format != FormatChoice::EdgeList {
            return Err(Error::Parameters {
                problem: format!(
                    "{}: starts with a Matrix Market banner; part files are read as edge lists \
                     (give --format edges to read its lines as edges)",
                    path.display()
                ),
            });
        }
        let use_mtx = match opts.format {
            _ if parquet.is_some() => false,
            FormatChoice::Auto => banner,
            FormatChoice::EdgeList => false,
            FormatChoice::MatrixMarket => true,
        };
        let mut rules = ScanRules {
            max_line: opts.max_line,
            skip_malformed: opts.skip_malformed,
            body_start: 0,
            header_at: None,
            mtx: None,
            text_ids: false,
            pick: None,
        };
        let mut header_line = None;
        let mut lead_header: Option<Vec<u8>> = None;
        let mut id_columns = None;
        if use_mtx && opts.columns.is_some() {
            return Err(Error::Parameters {
                problem: format!(
                    "{}: is Matrix Market, whose entries have fixed columns; choosing columns \
                     applies to delimited edge lists",
                    path.display()
                ),
            });
        }
        let mtx = if use_mtx {
            let h = mtx::parse_header(&head).map_err(|f| Error::MatrixMarket {
                path: path.clone(),
                pos: Position {
                    line: f.line,
                    byte: f.byte as u64,
                    decoded: compression != Compression::None,
                    rows: false,
                },
                problem: f.problem,
            })?;
            if opts.directed && h.symmetry != mtx::Symmetry::General {
                return Err(Error::Parameters {
                    problem: format!(
                        "{}: the Matrix Market banner says {:?}, so each entry stands for both \
                         directions; --directed needs a general matrix",
                        path.display(),
                        h.symmetry
                    ),
                });
            }
            if h.rows > opts.max_nodes.min(ids::MAX_NODES) {
                return Err(Error::TooManyNodes {
                    path: path.clone(),
                    limit: opts.max_nodes.min(ids::MAX_NODES),
                });
            }
            // Declared nodes all exist, so the claim alone sizes the arrays: check it first.
            check_budget(
                path,
                opts,
                format!("holding the {} nodes its size line declares", h.rows),
                (h.rows + 1).saturating_mul(BYTES_PER_NODE),
            )?;
            rules.body_start = h.body_start as u64;
            rules.mtx = Some(MtxRules {
                n: h.rows,
                field: h.field,
            });
            Some(h)
        } else {
            let data_lines = first_data_lines(&head);
            let first = data_lines.first().copied();
            let next = data_lines.get(1).map(|x| x.1);
            let take = match (&opts.columns, parquet) {
                (_, Some(plan)) => {
                    // Rendered rows: the two ids, comma-separated and quoted when text.
                    rules.pick = Some(Picked {
                        a: 0,
                        b: 1,
                        delim: Delimiter::Comma,
                    });
                    id_columns = Some(plan.described.clone());
                    false
                }
                (Some(choice), None) => {
                    let (take, picked, note) =
                        pick_columns(path, choice, opts.header, &head, first, next)?;
                    rules.pick = Some(picked);
                    id_columns = Some(note);
                    take
                }
                (None, None) => match opts.header {
                    HeaderChoice::None => false,
                    HeaderChoice::Skip => true,
                    HeaderChoice::Auto => {
                        first.is_some_and(|(_, l)| edgeline::looks_like_header(l, next))
                    }
                },
            };
            if let (true, Some((at, line))) = (take, first) {
                rules.header_at = Some(at as u64);
                header_line = Some(crate::error::excerpt(line));
                lead_header = Some(line.to_vec());
            }
            None
        };
        // Each other part skips its first data line when it repeats the lead's header (batch
        // jobs often write one per part), or, by the header option, always or when it looks
        // like one.
        let parts = sources
            .into_iter()
            .zip(&heads)
            .enumerate()
            .map(|(i, ((path, src), head))| {
                let header_at = if i == lead {
                    rules.header_at
                } else {
                    let lines = first_data_lines(head);
                    lines.first().and_then(|&(at, line)| {
                        let repeats = lead_header.as_deref() == Some(line);
                        let skip = match opts.header {
                            HeaderChoice::None => false,
                            HeaderChoice::Skip => true,
                            HeaderChoice::Auto => {
                                repeats
                                    || (opts.columns.is_none()
                                        && edgeline::looks_like_header(
                                            line,
                                            lines.get(1).map(|x| x.1),
                                        ))
                            }
                        } || (repeats && opts.columns.is_some());
                        skip.then_some(at as u64)
                    })
                };
                Part {
                    path,
                    src,
                    header_at,
                }
            })
            .collect();
        Ok(Loader {
            path: shown.to_path_buf(),
            parts,
            opts,
            progress,
            src,
            rules,
            mtx,
            header_line,
            id_columns,
            threads,
            stages: Vec::new(),
            clock: Instant::now(),
            first_text_id: None,
            dest: None,
        })
    }

    fn stage_done(&mut self, name: StageName) {
        let now = Instant::now();
        self.stages.push(Stage {
            name,
            seconds: (now - self.clock).as_secs_f64(),
        });
        self.clock = now;
        self.progress.finish();
    }

    fn begin(&self, name: &str) {
        let plain = self
            .parts
            .iter()
            .all(|p| p.src.compression == Compression::None);
        let total = plain.then(|| self.input_len());
        self.progress.stage(name, total, Unit::Bytes);
    }

    /// The in-memory build's end: sort and merge the lists, then count what merging found.
    fn finish(
        mut self,
        filler: Filler,
        ids: NodeIds,
        id_kind: IdKind,
        scanned: Scanned,
    ) -> Result<Graph> {
        self.progress.stage("sorting lists", None, Unit::Items);
        let filled = filler
            .finish(self.opts.directed)
            .map_err(|problem| Error::Output {
                path: self.path.clone(),
                problem,
            })?;
        self.stage_done(StageName::SortAndMerge);
        let intake = self.intake(
            &filled.offsets,
            filled.directed_pairs,
            id_kind,
            scanned,
            None,
        )?;
        let csr = crate::store::csr::Csr::from_parts(filled.offsets.into(), filled.targets.into());
        Ok(Graph {
            csr,
            ids,
            intake,
            directions: filled.directions.map(Into::into),
        })
    }

    /// What reading found, from the finished offsets and the merge's count of distinct
    /// directed pairs.
    fn intake(
        &mut self,
        offsets: &[u64],
        directed_pairs: u64,
        id_kind: IdKind,
        scanned: Scanned,
        on_disk: Option<crate::store::intake::DiskBuild>,
    ) -> Result<Intake> {
        let mut total = Counts::default();
        let mut examples = Vec::new();
        let mut header_skipped = false;
        let mut headers = 0;
        let mut line_base = self.mtx.as_ref().map_or(0, |h| h.lines_before_body);
        let mut part = 0;
        for o in &scanned.outcomes {
            if pieces::part_of(o.index) != part {
                part = pieces::part_of(o.index);
                line_base = 0;
            }
            total.add(&o.counts);
            header_skipped |= o.header_skipped;
            headers += u64::from(o.header_skipped);
            for f in &o.skipped {
                if examples.len() < scan::EXAMPLES {
                    examples.push(BadLine {
                        part: self.part_name(part),
                        line: line_base + f.line + 1,
                        byte: o.byte_base + f.offset as u64,
                        problem: describe(&f.error),
                        excerpt: f.excerpt.clone(),
                    });
                }
            }
            line_base += o.counts.lines;
        }
        let n = offsets.len() as u64 - 1;
        let m = offsets.last().copied().unwrap_or(0) / 2;
        let loopless = total.edge_lines - total.loops;
        let isolated = offsets.par_windows(2).filter(|w| w[0] == w[1]).count() as u64;
        if n == 0 {
            return Err(Error::Empty {
                path: self.path.clone(),
                detail: format!(
                    "{}: {}, {}, {}",
                    plural(total.lines, "line", "lines"),
                    plural(total.comments, "comment", "comments"),
                    plural(total.blank, "blank line", "blank lines"),
                    plural(
                        total.malformed,
                        "malformed line skipped",
                        "malformed lines skipped"
                    ),
                ),
            });
        }
        let (lines, comments) = match &self.mtx {
            Some(h) => (
                total.lines + h.lines_before_body,
                total.comments + h.comment_lines + 1,
            ),
            None => (total.lines, total.comments),
        };
        Ok(Intake {
            source: self.path.display().to_string(),
            packed_from: None,
            format: if self.mtx.is_some() {
                InputFormat::MatrixMarket
            } else if self.src.parquet.is_some() {
                InputFormat::Parquet
            } else {
                InputFormat::EdgeList
            },
            compression: if self
                .parts
                .iter()
                .all(|p| p.src.compression == self.parts[0].src.compression)
            {
                self.parts[0].src.compression
            } else {
                self.src.compression
            },
            frames: scanned.frames,
            input_bytes: self.input_len(),
            parts: (self.parts.len() > 1).then_some(self.parts.len() as u64),
            text_bytes: scanned.text_bytes,
            lines,
            blank_lines: total.blank,
            comment_lines: comments,
            header_lines: (self.parts.len() > 1).then_some(headers),
            header_line: if header_skipped {
                self.header_line.take()
            } else {
                None
            },
            id_columns: self.id_columns.take(),
            edge_lines: total.edge_lines,
            extra_column_lines: total.extra,
            self_loops: total.loops,
            repeated_lines: loopless - directed_pairs,
            reciprocal_pairs: directed_pairs - m,
            directed: self.opts.directed,
            malformed_skipped: total.malformed,
            malformed_examples: examples,
            nodes: n,
            edges: m,
            isolated_nodes: isolated,
            id_kind,
            first_text_id: self.first_text_id.take(),
            stages: std::mem::take(&mut self.stages),
            on_disk,
        })
    }

    /// Order outcomes, turn the first error into a positioned message, check Matrix Market
    /// entry counts.
    fn check(&self, mut outcomes: Vec<ChunkOutcome>, info: source::DecodeInfo) -> Result<Scanned> {
        outcomes.sort_by_key(|o| o.index);
        let mut line_base = self.mtx.as_ref().map_or(0, |h| h.lines_before_body);
        // Parts are numbered in the high bits of a piece's index and their pieces from 0.
        let (mut part, mut expected) = (0, 0);
        for o in &outcomes {
            let here = pieces::part_of(o.index);
            if here != part {
                // Every part before this one had all its pieces (a part without text has none).
                (part, expected, line_base) = (here, 0, 0);
            }
            // Pieces after a stop may be missing or have run anyway; only an unbroken run of
            // pieces from the start places an error correctly, and a text-id stop hands over
            // to the text pass, which finds any later error again.
            if o.index != (part << pieces::PART_SHIFT | expected) {
                break;
            }
            if let Some(f) = &o.error {
                return Err(self.positioned(
                    part,
                    &f.error,
                    line_base + f.line + 1,
                    o.byte_base + f.offset as u64,
                    &f.excerpt,
                ));
            }
            if o.stopped {
                break;
            }
            line_base += o.counts.lines;
            expected += 1;
        }
        if let Some(h) = &self.mtx {
            let found: u64 = outcomes.iter().map(|o| o.counts.edge_lines).sum();
            let malformed: u64 = outcomes.iter().map(|o| o.counts.malformed).sum();
            if found + malformed != h.entries {
                return Err(Error::MatrixMarket {
                    path: self.path.clone(),
                    pos: Position {
                        line: h.size_line.0,
                        byte: h.size_line.1 as u64,
                        decoded: self.src.compression != Compression::None,
                        rows: false,
                    },
                    problem: format!(
                        "the size line promises {} entries but the file holds {}{}",
                        h.entries,
                        found + malformed,
                        if found + malformed < h.entries {
                            " (truncated?)"
                        } else {
                            ""
                        }
                    ),
                });
            }
        }
        Ok(Scanned {
            outcomes,
            text_bytes: info.text_bytes,
            frames: (self.src.compression == Compression::Zstd).then_some(info.frames),
        })
    }

    fn positioned(&self, part: usize, e: &LineError, line: u64, byte: u64, excerpt: &str) -> Error {
        let Part { path, src, .. } = &self.parts[part];
        let path = path.clone();
        let pos = Position {
            line,
            byte,
            decoded: src.compression != Compression::None,
            rows: src.compression == Compression::Parquet,
        };
        match e {
            LineError::Malformed { problem, expected } => Error::Malformed {
                path,
                pos,
                problem: problem.clone(),
                expected,
                excerpt: excerpt.to_string(),
            },
            LineError::TooLong => Error::LineTooLong {
                path,
                pos,
                limit: self.opts.max_line,
            },
            LineError::Mtx(problem) => Error::MatrixMarket {
                path,
                pos,
                problem: format!("{problem} (line starts: {excerpt:?})"),
            },
        }
    }

    fn stream_fault(&self, part: usize, f: StreamFault, outcomes: &[ChunkOutcome]) -> Error {
        let Part { path, src, .. } = &self.parts[part];
        match f {
            StreamFault::Codec { problem, .. } if src.compression == Compression::Parquet => {
                Error::Parquet {
                    path: path.clone(),
                    problem: format!("unreadable ({problem})"),
                }
            }
            StreamFault::Codec { problem, offset } => Error::Compressed {
                path: path.clone(),
                format: match src.compression {
                    Compression::Gzip => "gzip",
                    _ => "zstd",
                },
                problem,
                offset,
            },
            StreamFault::LongLine { index, byte_base } => {
                let line = outcomes
                    .iter()
                    .filter(|o| o.index < index && pieces::part_of(o.index) == part)
                    .map(|o| o.counts.lines)
                    .sum::<u64>()
                    + 1;
                self.positioned(part, &LineError::TooLong, line, byte_base, "")
            }
        }
    }

    /// Every piece of the input through `work` on the worker threads (see `read::pieces`); a
    /// stream fault becomes a positioned error, placed by the `outcomes` of an earlier pass.
    fn each_piece<W: Send>(
        &self,
        init: impl Fn() -> W + Sync,
        work: impl Fn(&mut W, usize, &[u8], u64) -> bool + Sync,
        outcomes: &[ChunkOutcome],
    ) -> Result<(Vec<W>, source::DecodeInfo)> {
        if let [one] = &self.parts[..] {
            return pieces::run(one.src, self.threads, self.progress, init, work)
                .map_err(|f| self.stream_fault(0, f, outcomes));
        }
        let srcs: Vec<Source> = self.parts.iter().map(|p| p.src).collect();
        pieces::run_parts(&srcs, self.threads, self.progress, init, work)
            .map_err(|(part, f)| self.stream_fault(part, f, outcomes))
    }

    /// Bytes of input, over all parts.
    fn input_len(&self) -> u64 {
        self.parts.iter().map(|p| p.src.data.len() as u64).sum()
    }

    /// Whether any part is compressed (its edges are then worth keeping between the passes).
    fn any_compressed(&self) -> bool {
        self.parts
            .iter()
            .any(|p| p.src.compression != Compression::None)
    }

    /// The scan rules of each part (they differ only in where the header line is).
    fn part_rules(&self) -> Vec<ScanRules> {
        self.parts
            .iter()
            .map(|p| ScanRules {
                header_at: p.header_at,
                ..self.rules.clone()
            })
            .collect()
    }

    /// A part's path, for reports, when the input has several.
    fn part_name(&self, part: usize) -> Option<String> {
        (self.parts.len() > 1).then(|| self.parts[part].path.display().to_string())
    }

    fn max_nodes(&self) -> u64 {
        self.opts.max_nodes.min(ids::MAX_NODES)
    }

    fn index_fault(&self, f: IndexFault) -> Error {
        match f {
            IndexFault::TooManyNodes => Error::TooManyNodes {
                path: self.path.clone(),
                limit: self.max_nodes(),
            },
            IndexFault::DegreeOverflow(node) => Error::DegreeTooLarge {
                path: self.path.clone(),
                node,
                limit: u32::MAX as u64 - 1,
            },
        }
    }
}

fn plural(n: u64, one: &str, many: &str) -> String {
    if n == 1 {
        format!("1 {one}")
    } else {
        format!("{n} {many}")
    }
}

fn describe(e: &LineError) -> String {
    match e {
        LineError::Malformed { problem, .. } => problem.clone(),
        LineError::TooLong => "line too long".into(),
        LineError::Mtx(p) => p.clone(),
    }
}

/// The first `PEEK` bytes of text (decoding if needed).
fn peek<'a>(src: Source<'a>, path: &Path) -> Result<Cow<'a, [u8]>> {
    if src.compression == Compression::None {
        return Ok(Cow::Borrowed(&src.data[..src.data.len().min(PEEK)]));
    }
    if let Some(plan) = src.parquet {
        // A columnar file has no banner or header to guess from; only whether it holds rows.
        return Ok(Cow::Borrowed(if plan.rows() > 0 { b"\n" } else { b"" }));
    }
    let mut head = Vec::new();
    let r = source::decode_chunks(
        src.data,
        src.compression,
        None,
        PEEK,
        usize::MAX,
        // Finding the frames walks the whole file; let its pages go as it does.
        &|a, b| pieces::release(src.map, a, b),
        &mut |c| {
            head.extend_from_slice(&c.bytes);
            head.len() < PEEK
        },
    );
    match r {
        Ok(_) => Ok(Cow::Owned(head)),
        Err(StreamFault::Codec { problem, offset }) => Err(Error::Compressed {
            path: path.to_path_buf(),
            format: if src.compression == Compression::Gzip {
                "gzip"
            } else {
                "zstd"
            },
            problem,
            offset,
        }),
        Err(StreamFault::LongLine { .. }) => Ok(Cow::Owned(head)),
    }
}

/// Resolve the chosen columns against the first data lines: the delimiter is sniffed from the
/// first, names are looked up in it (it is then the header), and with positions only the usual
/// header guess is made on the chosen fields. Returns whether the first data line is a header,
/// the resolved columns, and where the ids are read, in words.
fn pick_columns(
    path: &Path,
    choice: &ColumnChoice,
    header: HeaderChoice,
    head: &[u8],
    first: Option<(usize, &[u8])>,
    next: Option<&[u8]>,
) -> Result<(bool, Picked, String)> {
    let fault = |problem: String| Error::Columns {
        path: path.to_path_buf(),
        problem,
    };
    if choice.needs_header() && header == HeaderChoice::None {
        return Err(fault(
            "columns chosen by name need a header line, and the header option says there is \
             none; give 1-based positions instead"
                .into(),
        ));
    }
    let Some((at, line)) = first else {
        return Err(fault("no data line to find the columns in".into()));
    };
    let delim = Delimiter::sniff(line);
    let take = match header {
        HeaderChoice::None => false,
        HeaderChoice::Skip => true,
        HeaderChoice::Auto => {
            choice.needs_header() || {
                let picked = columns::resolve(choice, None, delim)
                    .map_err(|_| fault("internal: positions resolve without a header".into()))?;
                let (mut s1, mut s2) = (Vec::new(), Vec::new());
                edgeline::looks_like_header_parsed(
                    columns::parse_picked(line, &picked, &mut s1).ok(),
                    next.and_then(|l| columns::parse_picked(l, &picked, &mut s2).ok()),
                )
            }
        }
    };
    let picked = columns::resolve(choice, take.then_some(line), delim).map_err(|u| {
        let line_no = head[..at].iter().filter(|&&c| c == b'\n').count() + 1;
        let fields = if u.header.is_empty() {
            "no fields".to_string()
        } else {
            u.header
                .iter()
                .enumerate()
                .map(|(i, h)| format!("{} {h:?}", i + 1))
                .collect::<Vec<_>>()
                .join(", ")
        };
        fault(format!(
            "{} is not in the header (line {line_no}, {}); its columns are: {fields}",
            u.missing,
            delim.name()
        ))
    })?;
    let names: Vec<String> = if take {
        let mut buf = Vec::new();
        columns::fields(line.strip_suffix(b"\r").unwrap_or(line), delim)
            .map(|f| {
                String::from_utf8_lossy(f.unwrap_or_default().unescaped(&mut buf)).into_owned()
            })
            .collect()
    } else {
        Vec::new()
    };
    let describe = |i: usize| match names.get(i) {
        Some(n) => format!("{} {n:?}", i + 1),
        None => (i + 1).to_string(),
    };
    let note = format!(
        "columns {} and {}, {}",
        describe(picked.a),
        describe(picked.b),
        delim.name()
    );
    Ok((take, picked, note))
}

/// Up to two data lines (not blank, not comment) from the start of the text, with offsets.
fn first_data_lines(head: &[u8]) -> Vec<(usize, &[u8])> {
    let mut out = Vec::new();
    let mut pos = 0;
    while pos < head.len() && out.len() < 2 {
        let end = memchr::memchr(b'\n', &head[pos..]).map_or(head.len(), |i| pos + i);
        let line = &head[pos..end];
        if !matches!(edgeline::parse_line(line), Ok(Line::Blank | Line::Comment)) {
            out.push((pos, line));
        }
        pos = end + 1;
    }
    out
}

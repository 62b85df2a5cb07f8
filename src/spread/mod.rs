//! The profile of a graph too large for one machine, computed by several processes (on one
//! machine or many) on timely dataflow (McSherry, Murray, Isaacs & Isard 2013, "Naiad: a timely
//! dataflow system"). Each process reads its share of the part files; nodes belong to the
//! worker their id hashes to; every exchange between workers goes through the engine's
//! channels, in rounds whose end its progress tracking detects. Process 0 assembles the report.
//!
//! What is computed is exact and means what the single-machine profile means by it: nodes,
//! edges and cleaning counts, degree statistics and histogram, assortativity, components and
//! the giant component, and (unless left out) triangles, transitivity, average local
//! clustering and C(k). Sums of floating-point terms are kept exactly until read, so every
//! figure matches the single-machine profile to the last digit on any number of processes.

mod ball;
mod exchange;
mod owned;
mod sampling;
mod work;

use std::path::{Path, PathBuf};
use std::sync::Arc;

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::estimate::hyperball::BallOptions;
use crate::estimate::wedges::Margin;
use crate::exact::clustering::{ClusteringParts, ClusteringStats, DegreeClustering};
use crate::exact::components::ComponentStats;
use crate::exact::degrees::EndSums;
use crate::figure::Figure;
use crate::models::smallworld::{self, Observed};
use crate::numeric::ExactSum;
use crate::profile::plan::{Decision, Group};
use crate::profile::report::{Exchanged, SpreadRun};
use crate::profile::{Distances, EstimatedDistances, Profile};
use crate::progress::Progress;
use crate::read::source::Compression;
use crate::store::intake::{BadLine, FirstTextId, IdKind, InputFormat, Intake, Stage, StageName};
use crate::store::load::LoadOptions;

/// Where the processes of a run are and which one this is. The addresses are the engine's own
/// setting (one `host:port` per process, in process order), passed through as given.
#[derive(Debug, Clone)]
pub struct Peers {
    /// This process's index in `addresses`, from 0.
    pub process: usize,
    /// Every process's `host:port`, in process order; a single process needs none.
    pub addresses: Vec<String>,
    /// Worker threads in this process.
    pub threads: usize,
}

impl Peers {
    /// One process with `threads` workers.
    pub fn alone(threads: usize) -> Self {
        Peers {
            process: 0,
            addresses: Vec::new(),
            threads: threads.max(1),
        }
    }

    /// Read the addresses from a peers file: one `host:port` a line, in process order; blank
    /// lines and lines starting with `#` are passed over.
    pub fn from_file(path: &Path, process: usize, threads: usize) -> Result<Self> {
        let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, "read", e))?;
        let addresses: Vec<String> = text
            .lines()
            .map(str::trim)
            .filter(|l| !l.is_empty() && !l.starts_with('#'))
            .map(String::from)
            .collect();
        for (i, a) in addresses.iter().enumerate() {
            if a.rsplit_once(':')
                .is_none_or(|(h, p)| h.is_empty() || p.parse::<u16>().is_err())
            {
                return Err(Error::Parameters {
                    problem: format!(
                        "{}: peer {} is {a:?}; expected host:port",
                        path.display(),
                        i + 1
                    ),
                });
            }
        }
        if process >= addresses.len() {
            return Err(Error::Parameters {
                problem: format!(
                    "{}: lists {} processes, so the process index must be below {} (got {process})",
                    path.display(),
                    addresses.len(),
                    addresses.len()
                ),
            });
        }
        Ok(Peers {
            process,
            addresses,
            threads: threads.max(1),
        })
    }

    /// Processes in the run.
    pub fn processes(&self) -> usize {
        self.addresses.len().max(1)
    }
}

/// Component sizes as one worker saw them (of the components whose label it owns).
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub(crate) struct ComponentTally {
    /// (size, number of components of that size), ascending.
    sizes: Vec<(u64, u64)>,
    /// The largest component: (size, label, edges); the smallest label on a tie.
    pub(crate) giant: Option<(u64, u64, u64)>,
}

impl ComponentTally {
    fn add(&mut self, label: u64, size: u64, edges: u64) {
        match self.sizes.binary_search_by_key(&size, |s| s.0) {
            Ok(i) => self.sizes[i].1 += 1,
            Err(i) => self.sizes.insert(i, (size, 1)),
        }
        self.offer(Some((size, label, edges)));
    }

    fn offer(&mut self, g: Option<(u64, u64, u64)>) {
        let better = |a: (u64, u64, u64), b: (u64, u64, u64)| {
            (a.0, std::cmp::Reverse(a.1)) > (b.0, std::cmp::Reverse(b.1))
        };
        if let Some(g) = g
            && self.giant.is_none_or(|b| better(g, b))
        {
            self.giant = Some(g);
        }
    }

    fn merge(&mut self, o: ComponentTally) {
        for (size, k) in o.sizes {
            match self.sizes.binary_search_by_key(&size, |s| s.0) {
                Ok(i) => self.sizes[i].1 += k,
                Err(i) => self.sizes.insert(i, (size, k)),
            }
        }
        self.offer(o.giant);
    }

    fn stats(&self, n: u64) -> ComponentStats {
        let (giant_nodes, _, giant_edges) = self.giant.unwrap_or((0, 0, 0));
        ComponentStats::from_sizes(n, self.sizes.clone(), giant_nodes, giant_edges)
    }
}

/// One worker's figures, merged at worker 0. Every field merges exactly.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub(crate) struct Partial {
    parts: u64,
    /// The first part's compression (the report's, as for part files on one machine).
    compression: Option<Compression>,
    input_bytes: u64,
    text_bytes: u64,
    lines: u64,
    blank_lines: u64,
    comment_lines: u64,
    header_lines: u64,
    /// A header line skipped (the first worker's that had one).
    header: Option<String>,
    edge_lines: u64,
    extra_column_lines: u64,
    self_loops: u64,
    malformed_skipped: u64,
    /// Skipped lines, each naming its part (ordered by part and line when merged).
    malformed_examples: Vec<BadLine>,
    /// Whether the ids are text (then every worker reads them as text).
    text_ids: bool,
    /// The first id that is not an integer, by part and line.
    first_text_id: Option<FirstTextId>,
    nodes: u64,
    edges: u64,
    directed_pairs: u64,
    histogram: Vec<u64>,
    sums: EndSums,
    components: ComponentTally,
    clustering: Option<ClusteringParts>,
    corner_sum: u64,
    /// The giant component's clustering sums and triangle corners, and its degrees' squares
    /// (for the small-world comparison).
    giant_clustering: Option<ClusteringParts>,
    giant_corners: u64,
    giant_squares: u128,
    /// Sampled clustering totals (the same on every worker).
    sampled: Option<sampling::Sampled>,
    /// HyperBall's N(t) of every run, exact partial sums.
    ball_runs: Vec<Vec<ExactSum>>,
    ball_rounds: u64,
    /// Giant component's size, sources searched, and each source's nodes at distance 1, 2, ….
    giant_nodes: u64,
    sources: u64,
    per_source: Vec<Vec<u64>>,
    bfs_rounds: u64,
    distance_seconds: f64,
    exchanged: u64,
    by_kind: Exchanged,
    label_rounds: u64,
    wedge_rounds: u64,
    read_seconds: f64,
    degree_seconds: f64,
    component_seconds: f64,
    triangle_seconds: f64,
}

impl Partial {
    fn add_intake(&mut self, i: &Intake, mine: &[PathBuf]) {
        self.parts += mine.len() as u64;
        self.compression = self.compression.or(Some(i.compression));
        self.input_bytes += i.input_bytes;
        self.text_bytes += i.text_bytes;
        self.lines += i.lines;
        self.blank_lines += i.blank_lines;
        self.comment_lines += i.comment_lines;
        self.header_lines += i.header_lines.unwrap_or(u64::from(i.header_line.is_some()));
        if let Some(h) = &i.header_line {
            self.header = Some(h.clone());
        }
        self.edge_lines += i.edge_lines;
        self.extra_column_lines += i.extra_column_lines;
        self.self_loops += i.self_loops;
        self.malformed_skipped += i.malformed_skipped;
        if let Some(f) = &i.first_text_id {
            let mut f = f.clone();
            if f.part.is_none() {
                f.part = mine.first().map(|p| p.display().to_string());
            }
            self.first_text_id = Some(f);
        }
        for b in &i.malformed_examples {
            let mut b = b.clone();
            if b.part.is_none() {
                b.part = mine.first().map(|p| p.display().to_string());
            }
            self.malformed_examples.push(b);
        }
    }

    fn merge(&mut self, o: Partial) {
        self.parts += o.parts;
        self.compression = self.compression.or(o.compression);
        self.input_bytes += o.input_bytes;
        self.text_bytes += o.text_bytes;
        self.lines += o.lines;
        self.blank_lines += o.blank_lines;
        self.comment_lines += o.comment_lines;
        self.header_lines += o.header_lines;
        if self.header.is_none() {
            self.header = o.header;
        }
        self.edge_lines += o.edge_lines;
        self.extra_column_lines += o.extra_column_lines;
        self.self_loops += o.self_loops;
        self.malformed_skipped += o.malformed_skipped;
        self.malformed_examples.extend(o.malformed_examples);
        self.text_ids |= o.text_ids;
        // Parts are named in path order, the order they are read in.
        self.first_text_id = [self.first_text_id.take(), o.first_text_id]
            .into_iter()
            .flatten()
            .min_by(|a, b| (&a.part, a.line).cmp(&(&b.part, b.line)));
        self.nodes += o.nodes;
        self.edges += o.edges;
        self.directed_pairs += o.directed_pairs;
        if self.histogram.len() < o.histogram.len() {
            self.histogram.resize(o.histogram.len(), 0);
        }
        for (a, b) in self.histogram.iter_mut().zip(&o.histogram) {
            *a += b;
        }
        self.sums = (
            self.sums.0 + o.sums.0,
            self.sums.1 + o.sums.1,
            self.sums.2 + o.sums.2,
        );
        self.components.merge(o.components);
        match (&mut self.clustering, o.clustering) {
            (Some(a), Some(b)) => a.merge(&b),
            (None, b) => self.clustering = b,
            _ => {}
        }
        self.corner_sum += o.corner_sum;
        match (&mut self.giant_clustering, o.giant_clustering) {
            (Some(a), Some(b)) => a.merge(&b),
            (None, b) => self.giant_clustering = b,
            _ => {}
        }
        self.giant_corners += o.giant_corners;
        self.giant_squares += o.giant_squares;
        if self.sampled.is_none() {
            self.sampled = o.sampled;
        }
        if self.ball_runs.len() < o.ball_runs.len() {
            self.ball_runs.resize(o.ball_runs.len(), Vec::new());
        }
        for (a, b) in self.ball_runs.iter_mut().zip(&o.ball_runs) {
            if a.len() < b.len() {
                a.resize(b.len(), ExactSum::default());
            }
            for (x, y) in a.iter_mut().zip(b) {
                x.merge(y);
            }
        }
        self.ball_rounds = self.ball_rounds.max(o.ball_rounds);
        // Every worker searched the same sources, in the same order.
        self.giant_nodes = self.giant_nodes.max(o.giant_nodes);
        self.sources = self.sources.max(o.sources);
        if self.per_source.len() < o.per_source.len() {
            self.per_source.resize(o.per_source.len(), Vec::new());
        }
        for (a, b) in self.per_source.iter_mut().zip(&o.per_source) {
            if a.len() < b.len() {
                a.resize(b.len(), 0);
            }
            for (x, y) in a.iter_mut().zip(b) {
                *x += y;
            }
        }
        self.bfs_rounds = self.bfs_rounds.max(o.bfs_rounds);
        self.distance_seconds = self.distance_seconds.max(o.distance_seconds);
        self.exchanged += o.exchanged;
        self.by_kind.merge(&o.by_kind);
        // Rounds are in step on every worker; times are the slowest worker's.
        self.label_rounds = self.label_rounds.max(o.label_rounds);
        self.wedge_rounds = self.wedge_rounds.max(o.wedge_rounds);
        self.read_seconds = self.read_seconds.max(o.read_seconds);
        self.degree_seconds = self.degree_seconds.max(o.degree_seconds);
        self.component_seconds = self.component_seconds.max(o.component_seconds);
        self.triangle_seconds = self.triangle_seconds.max(o.triangle_seconds);
    }
}

/// How a distributed profile measures triangles and clustering.
#[derive(Debug, Clone, PartialEq)]
pub enum SpreadClustering {
    /// Every triangle counted (forward listing, Schank & Wagner 2005): exact figures.
    Exact,
    /// Wedge sampling for transitivity and triangles, node-then-wedge sampling for the average
    /// local clustering and C(k) (Seshadhri, Pinar & Kolda, SDM 2013), each sampled to its
    /// margin with a Wilson interval, as the single-machine profile does.
    Sampled {
        /// Transitivity and average clustering.
        margin: Margin,
        /// Each C(k) bin.
        bin_margin: Margin,
    },
    /// Left out.
    Off,
}

/// How a distributed profile estimates distances.
#[derive(Debug, Clone, PartialEq)]
pub enum SpreadDistances {
    /// BFS from this many sources sampled in the giant component (Eppstein & Wang 2004).
    Sources(usize),
    /// HyperBall on the giant component (Boldi, Rosa & Vigna 2011); its level and seed are the
    /// profile's.
    Ball(BallOptions),
    /// Left out.
    Off,
}

/// What a distributed profile computes beyond sizes, degrees and components.
#[derive(Debug, Clone)]
pub struct SpreadOptions {
    /// Triangles, transitivity and local clustering.
    pub clustering: SpreadClustering,
    /// Mean distance, distance distribution and effective diameter.
    pub distances: SpreadDistances,
    /// The small-world coefficients against the analytic references (Humphries & Gurney
    /// 2008; Telesford et al. 2011), when clustering and distances are both measured.
    pub small_world: bool,
    /// Confidence level of every interval.
    pub level: f64,
    /// Seed of every sample (the same seed and input give the same figures on any number of
    /// processes).
    pub seed: u64,
}

impl Default for SpreadOptions {
    fn default() -> Self {
        SpreadOptions {
            clustering: SpreadClustering::Exact,
            distances: SpreadDistances::Sources(256),
            small_world: true,
            level: 0.95,
            seed: 1,
        }
    }
}

/// What a distributed profile returns on process 0: the profile (in the single-machine
/// report's shape) and how the run went.
#[derive(Debug, Clone)]
pub struct SpreadOutcome {
    /// The figures.
    pub profile: Profile,
    /// Processes, workers, exchange.
    pub run: SpreadRun,
}

/// Profile `input` (a file, or a folder or pattern of part files) on the processes of `peers`.
/// Every process of the run calls this with the same input and options; process 0 gets the
/// outcome, the others `None`.
pub fn profile(
    input: &Path,
    peers: &Peers,
    load: &LoadOptions,
    want: &SpreadOptions,
) -> Result<Option<SpreadOutcome>> {
    profile_reporting(input, peers, load, want, Arc::new(crate::progress::Quiet))
}

/// As [`profile`], telling `progress` of each stage and round (on process 0's first worker
/// only, so one terminal shows one bar).
pub fn profile_reporting(
    input: &Path,
    peers: &Peers,
    load: &LoadOptions,
    want: &SpreadOptions,
    progress: Arc<dyn Progress + Send + Sync>,
) -> Result<Option<SpreadOutcome>> {
    if load.directed {
        return Err(Error::Parameters {
            problem: "a distributed profile reads undirected graphs only; --directed is for \
                      the single-machine profile"
                .into(),
        });
    }
    let parts = crate::read::source::list_parts(input)?.unwrap_or_else(|| vec![input.into()]);
    let config = if peers.addresses.len() <= 1 {
        timely::Config::process(peers.threads)
    } else {
        timely::Config {
            communication: timely::CommunicationConfig::Cluster {
                threads: peers.threads,
                process: peers.process,
                addresses: peers.addresses.clone(),
                report: false,
                zerocopy: false,
            },
            worker: timely::WorkerConfig::default(),
        }
    };
    let started = std::time::Instant::now();
    let (shown, load2, parts2, want2) = (
        input.to_path_buf(),
        load.clone(),
        parts.clone(),
        want.clone(),
    );
    let cluster = peers.addresses.len() > 1;
    let reporter = peers.process == 0;
    let start = move || {
        timely::execute(config, move |worker| {
            let shows: Arc<dyn Progress + Send + Sync> = if reporter && worker.index() == 0 {
                progress.clone()
            } else {
                Arc::new(crate::progress::Quiet)
            };
            let mut rounds = exchange::Rounds::new(worker, shows);
            work::run(&mut rounds, &shown, &parts2, &load2, &want2)
        })
    };
    // Only a cluster connects (and prints while it does); a single process leaves stdout be.
    let guards = if cluster {
        without_stdout(start)
    } else {
        start()
    }
    .map_err(|problem| Error::Parameters {
        problem: format!("the dataflow engine did not start: {problem}"),
    })?;
    let mut mine = None;
    for r in guards.join() {
        match r {
            Ok(Ok(Some(p))) => mine = Some(p),
            Ok(Ok(None)) => {}
            Ok(Err(e)) => return Err(e),
            Err(panic) => {
                return Err(Error::Parameters {
                    problem: format!("a worker of this process stopped: {panic}"),
                });
            }
        }
    }
    let Some(all) = mine else {
        return Ok(None);
    };
    let workers = (peers.processes() * peers.threads) as u64;
    Ok(Some(assemble(
        input,
        want,
        all,
        parts.len() as u64,
        peers.processes() as u64,
        workers,
        started.elapsed().as_secs_f64(),
    )))
}

/// Run `f` with standard output sent to /dev/null: the engine prints "awaiting connections"
/// there while the processes connect, which would corrupt a report printed to standard output.
fn without_stdout<T>(f: impl FnOnce() -> T) -> T {
    #[cfg(unix)]
    {
        use std::io::Write;
        use std::os::fd::AsRawFd;
        let _ = std::io::stdout().flush();
        let null = std::fs::OpenOptions::new().write(true).open("/dev/null");
        // SAFETY: dup and dup2 on the process's own standard output; the saved descriptor
        // is put back and closed below whatever `f` returns.
        let saved = unsafe { libc::dup(1) };
        if let (Ok(null), true) = (null, saved >= 0) {
            unsafe { libc::dup2(null.as_raw_fd(), 1) };
            let out = f();
            unsafe {
                libc::dup2(saved, 1);
                libc::close(saved);
            }
            return out;
        }
    }
    f()
}

/// The profile from the merged partial figures.
fn assemble(
    input: &Path,
    want: &SpreadOptions,
    mut all: Partial,
    parts: u64,
    processes: u64,
    workers: u64,
    seconds: f64,
) -> SpreadOutcome {
    let n = all.nodes;
    let m = all.edges;
    let loopless = all.edge_lines - all.self_loops;
    all.malformed_examples
        .sort_by(|a, b| (&a.part, a.line).cmp(&(&b.part, b.line)));
    let isolated = all.histogram.first().copied().unwrap_or(0);
    let intake = Intake {
        source: input.display().to_string(),
        packed_from: None,
        format: InputFormat::EdgeList,
        compression: all.compression.unwrap_or(Compression::None),
        parts: (parts > 1).then_some(parts),
        frames: None,
        input_bytes: all.input_bytes,
        text_bytes: all.text_bytes,
        lines: all.lines,
        blank_lines: all.blank_lines,
        comment_lines: all.comment_lines,
        header_line: all.header,
        header_lines: (parts > 1).then_some(all.header_lines),
        id_columns: None,
        edge_lines: all.edge_lines,
        extra_column_lines: all.extra_column_lines,
        self_loops: all.self_loops,
        repeated_lines: loopless - all.directed_pairs,
        reciprocal_pairs: all.directed_pairs - m,
        directed: false,
        malformed_skipped: all.malformed_skipped,
        malformed_examples: all
            .malformed_examples
            .into_iter()
            .take(crate::read::scan::EXAMPLES)
            .collect(),
        nodes: n,
        edges: m,
        isolated_nodes: isolated,
        id_kind: if all.text_ids {
            IdKind::Text
        } else {
            IdKind::Integer
        },
        first_text_id: all.first_text_id,
        stages: vec![Stage {
            name: StageName::Scan,
            seconds: all.read_seconds,
        }],
        on_disk: None,
    };
    let max_degree = degrees_len(&all.histogram).saturating_sub(1) as u32;
    let degrees = crate::exact::degrees::stats_from(n, m, all.histogram, all.sums);
    let components = all.components.stats(n);
    let connected = components.count <= 1;
    let (clustering, giant_clustering) = match (&all.clustering, &all.sampled) {
        (Some(c), _) => {
            let whole = c.finish(all.corner_sum / 3);
            let giant = if connected {
                (whole.transitivity.clone(), whole.average_zeros.clone())
            } else {
                all.giant_clustering
                    .as_ref()
                    .map(|g| g.giant_figures(all.giant_corners))
                    .unwrap_or_else(empty_giant)
            };
            (Some(whole), Some(giant))
        }
        (None, Some(sampled)) => {
            let (whole, giant) =
                sampled_stats(sampled, n, components.giant_nodes, max_degree, want.level);
            let giant = if connected {
                (whole.transitivity.clone(), whole.average_zeros.clone())
            } else {
                giant
            };
            (Some(whole), Some(giant))
        }
        (None, None) => (None, None),
    };
    let mut plan = Vec::new();
    let mut stages = vec![
        Stage {
            name: StageName::Degrees,
            seconds: all.degree_seconds,
        },
        Stage {
            name: StageName::Components,
            seconds: all.component_seconds,
        },
    ];
    if let Some(sampled) = &all.sampled {
        stages.push(Stage {
            name: StageName::SampledClustering,
            seconds: all.triangle_seconds,
        });
        plan.push(Decision {
            group: Group::Clustering,
            method: format!(
                "wedge and node sampling to the margins, each node drawing its Poisson share \
                 (seeded by its id) in {} rounds",
                sampled.rounds
            ),
            exact_seconds: 0.0,
            predicted_seconds: None,
            budget_seconds: None,
            reason: "sampled clustering was asked for".into(),
        });
    } else if clustering.is_some() {
        stages.push(Stage {
            name: StageName::Triangles,
            seconds: all.triangle_seconds,
        });
    }
    let distance_node_set = if components.count <= 1 {
        "whole graph (connected)".to_string()
    } else {
        format!("giant component ({} of {n} nodes)", components.giant_nodes)
    };
    let distances = match &want.distances {
        SpreadDistances::Ball(o) if !all.ball_runs.is_empty() => {
            let opts = BallOptions {
                level: want.level,
                seed: want.seed,
                ..*o
            };
            let runs: Vec<Vec<f64>> = all
                .ball_runs
                .iter()
                .map(|r| r.iter().map(ExactSum::value).collect())
                .collect();
            let e = crate::estimate::hyperball::from_runs(runs, &opts);
            stages.push(Stage {
                name: StageName::HyperBall,
                seconds: all.distance_seconds,
            });
            let method = format!(
                "HyperBall, {} registers per node × {} hash seeds (each counter ±{:.1}% relative \
             standard error), one exchange round per step",
                e.registers,
                opts.repeats,
                100.0 * e.counter_rse
            );
            plan.push(Decision {
                group: Group::Distances,
                method,
                exact_seconds: 0.0,
                predicted_seconds: None,
                budget_seconds: None,
                reason: "HyperBall was asked for".into(),
            });
            Distances::Estimated(Box::new(EstimatedDistances {
                node_set: distance_node_set.clone(),
                nodes: all.giant_nodes,
                mean: e.mean,
                effective_diameter: e.effective_diameter,
                distribution: e.distribution,
                unreachable_pairs_in_graph: unreachable_pairs(&all.components, n),
                sources: None,
                registers: Some(e.registers),
                counter_rse: Some(e.counter_rse),
            }))
        }
        _ if all.sources > 0 => {
            stages.push(Stage {
                name: StageName::SampledDistances,
                seconds: all.distance_seconds,
            });
            let s = crate::estimate::distance::summarise(
                all.giant_nodes,
                &all.per_source,
                want.level,
                want.seed,
            );
            plan.push(Decision {
                group: Group::Distances,
                method: format!(
                    "BFS from {} sampled sources, {} at a time, one frontier round per level",
                    s.sources,
                    s.sources.min(64)
                ),
                exact_seconds: 0.0,
                predicted_seconds: None,
                budget_seconds: None,
                reason: "a distributed profile always samples its sources".into(),
            });
            Distances::Estimated(Box::new(EstimatedDistances {
                node_set: distance_node_set.clone(),
                nodes: s.nodes,
                mean: s.mean,
                effective_diameter: s.effective_diameter,
                distribution: s.distribution,
                unreachable_pairs_in_graph: unreachable_pairs(&all.components, n),
                sources: Some(s.sources),
                registers: None,
                counter_rse: None,
            }))
        }
        _ => Distances::NotRequested,
    };
    let _ = seconds;
    let small_world = match (&distances, giant_clustering, all.components.giant) {
        (Distances::Estimated(d), Some((transitivity, average_clustering)), Some((gn, _, gm)))
            if want.small_world && gm > 0 =>
        {
            let o = Observed {
                nodes: gn,
                edges: gm,
                mean_degree: (2 * gm) as f64 / gn as f64,
                second_moment: all.giant_squares as f64 / gn as f64,
                transitivity,
                average_clustering,
                mean_distance: d.mean.clone(),
            };
            plan.push(Decision {
                group: Group::References,
                method: "analytic references".into(),
                exact_seconds: 0.0,
                predicted_seconds: None,
                budget_seconds: None,
                reason: "a distributed profile compares with the analytic references only \
                         (sampled reference graphs are generated on one machine)"
                    .into(),
            });
            let mut sw = smallworld::compare(
                &o,
                smallworld::analytic_references(&o),
                want.level,
                want.seed,
            );
            sw.node_set = distance_node_set.clone();
            Some(sw)
        }
        _ => None,
    };
    SpreadOutcome {
        profile: Profile {
            intake,
            degrees,
            components,
            clustering,
            distance_node_set,
            diameter: None,
            distances,
            small_world,
            directed: None,
            plan,
            stages,
        },
        run: SpreadRun {
            processes,
            workers,
            parts,
            exchanged_items: all.exchanged,
            label_rounds: all.label_rounds,
            wedge_rounds: all.wedge_rounds,
            bfs_rounds: all.bfs_rounds,
            ball_rounds: all.ball_rounds,
            exchanged: all.by_kind,
        },
    }
}

fn degrees_len(histogram: &[u64]) -> usize {
    histogram.iter().rposition(|&c| c > 0).map_or(0, |i| i + 1)
}

/// Ordered pairs of distinct nodes in different components.
fn unreachable_pairs(c: &ComponentTally, n: u64) -> u64 {
    let within: u128 = c
        .sizes
        .iter()
        .map(|&(size, k)| k as u128 * size as u128 * size.saturating_sub(1) as u128)
        .sum();
    (n as u128 * n.saturating_sub(1) as u128 - within) as u64
}

/// The giant component's clustering when it has no node (never read: no comparison is made).
fn empty_giant() -> (Figure, Figure) {
    (
        Figure::exact(0.0, "no nodes"),
        Figure::exact(0.0, "no nodes"),
    )
}

/// The sampled clustering figures of the whole graph, and the giant component's transitivity
/// and average clustering (sampled on it when it was not the whole graph).
fn sampled_stats(
    s: &sampling::Sampled,
    n: u64,
    giant_nodes: u64,
    max_degree: u32,
    level: f64,
) -> (ClusteringStats, (Figure, Figure)) {
    use crate::estimate::wedges::proportion;
    use sampling::Aim;
    const WEDGES: &str = "wedge sampling (Seshadhri, Pinar & Kolda 2013), each node drawing its \
                          Poisson share, Wilson interval";
    const NODES: &str = "uniform node then uniform wedge (Seshadhri, Pinar & Kolda 2014), each \
                         node drawing its Poisson share, Wilson interval";
    let find = |aim: Aim, giant_only: bool| {
        s.targets
            .iter()
            .position(|t| t.aim == aim && t.giant_only == giant_only)
            .map(|i| s.counts[i])
    };
    let wedge_figures =
        |c: sampling::Count| proportion(c.closed, c.samples, level, WEDGES, c.weight as f64 / 3.0);
    let node_figures = |c: sampling::Count, nodes: u64| {
        let share = if nodes == 0 {
            0.0
        } else {
            c.weight as f64 / nodes as f64
        };
        proportion(c.closed, c.samples, level, NODES, share)
    };
    let w = find(Aim::Wedges, false).unwrap_or_default();
    let a = find(Aim::Nodes, false).unwrap_or_default();
    let (transitivity, triangles) = wedge_figures(w);
    let (average_deg2, average_zeros) = node_figures(a, n);
    let by_degree = s
        .targets
        .iter()
        .zip(&s.counts)
        .filter_map(|(t, c)| match t.aim {
            Aim::Bin(b) if !t.giant_only && c.weight > 0 => {
                let low = 2u32 << b;
                let (mean, _) = proportion(c.closed, c.samples, level, NODES, 1.0);
                Some(DegreeClustering {
                    low,
                    high: (low.saturating_mul(2) - 1).min(max_degree),
                    nodes: c.weight as u64,
                    mean,
                })
            }
            _ => None,
        })
        .collect();
    let giant = match (find(Aim::Wedges, true), find(Aim::Nodes, true)) {
        (Some(gw), Some(ga)) => (wedge_figures(gw).0, node_figures(ga, giant_nodes).1),
        _ => (transitivity.clone(), average_zeros.clone()),
    };
    (
        ClusteringStats {
            triangles,
            wedges: w.weight,
            transitivity,
            average_zeros,
            average_deg2,
            by_degree,
        },
        giant,
    )
}

//! The integer-id passes: the fast path for files whose ids are all integers up to 2^64-1.

use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};

use rayon::prelude::*;

use super::on_disk::Choice;
use super::{FILL_BATCH, Loader, Scanned};
use crate::error::Result;
use crate::progress::Unit;
use crate::read::pieces;
use crate::read::scan::{self, ChunkOutcome, ScanRules};
use crate::store::graph::{Graph, NodeIds};
use crate::store::ids::{IntIndex, IntTally};
use crate::store::intake::{IdKind, StageName};
use crate::store::spill::{SpillBuf, Spiller};

/// What pass 1 over integer ids leaves for pass 2.
struct IntPass {
    keep: bool,
    tallies: Vec<IntTally>,
    kept: Vec<(usize, Raw)>,
    scanned: Scanned,
    /// Runs spilled during pass 1, keyed by original id, when it spilled and did not give up.
    early: Option<Spiller>,
}

/// Most bytes of compressed input's edges kept between the passes (see `scan_ints`).
const KEEP_LIMIT: u64 = 64 << 20;

impl Loader<'_> {
    /// Integer ids, the fast path: pass 1 tallies ids and degrees (compressed input keeps its
    /// edges), pass 2 fills the adjacency; a text id hands over to the text pass.
    pub(super) fn run(mut self) -> Result<Graph> {
        match self.scan_ints()? {
            Some(pass) => self.fill_ints(pass),
            None => self.run_text(),
        }
    }

    /// Pass 1 over integer ids; `None` when a text id turned up.
    fn scan_ints(&mut self) -> Result<Option<IntPass>> {
        // Pass 1: integer ids (the fast path). A large input spills its edges as runs for a
        // build on disk; else compressed input keeps its edges for pass 2 while they are few.
        let early = self.early_spiller();
        let keep = self.any_compressed() && early.is_none();
        // Flat id arrays grow to the largest id seen, up to a cap tied to the input size and the
        // memory budget; larger ids go to a hash map.
        let per_worker = self.opts.memory_budget / 4 / (4 * self.threads as u64);
        let cap = match &self.mtx {
            Some(h) => h.rows + 1,
            None => (self.input_len() * if keep { 16 } else { 4 })
                .min(per_worker)
                .max(1 << 16),
        };
        // Compressed input keeps its edges while they are few; beyond `KEEP_LIMIT` they would
        // double the build's peak (they are as large as the adjacency), so they are dropped and
        // the fill pass decodes the input again instead.
        let kept_bytes = AtomicU64::new(0);
        let over_budget = AtomicBool::new(false);
        let keep_limit = (self.opts.memory_budget / 2).min(KEEP_LIMIT);
        self.begin("scanning");
        let rules = self.part_rules();
        let (states, info) = self.each_piece(
            || IntWorker {
                tally: IntTally::new(cap),
                outcomes: Vec::new(),
                kept: Vec::new(),
                spill: SpillBuf::default(),
            },
            |w, index, bytes, base| {
                let keeping = keep && !over_budget.load(Ordering::Relaxed);
                if !keeping {
                    w.kept = Vec::new();
                }
                let go_on = w.scan(
                    index,
                    bytes,
                    base,
                    &rules[pieces::part_of(index)],
                    keeping,
                    early.as_ref(),
                );
                if keeping {
                    let added = w.kept.last().map_or(0, |(_, r)| r.bytes());
                    if kept_bytes.fetch_add(added, Ordering::Relaxed) + added > keep_limit {
                        over_budget.store(true, Ordering::Relaxed);
                        w.kept = Vec::new();
                    }
                }
                go_on
            },
            &[],
        )?;
        let mut outcomes = Vec::new();
        let mut tallies = Vec::new();
        let mut kept = Vec::new();
        let mut spills = Vec::new();
        for w in states {
            outcomes.extend(w.outcomes);
            tallies.push(w.tally);
            kept.extend(w.kept);
            spills.push(w.spill);
        }
        let scanned = self.check(outcomes, info)?;
        let stopped = scanned.outcomes.iter().any(|o| o.stopped);
        // What the workers still hold becomes the last runs (sorted side by side). Runs that
        // could not all be written are given up: the two-pass build then checks the room with
        // the real sizes.
        let early = match early {
            Some(sp) if !stopped && !sp.given_up() => {
                spills.into_par_iter().for_each(|mut b| {
                    sp.spill(&mut b);
                });
                (!sp.given_up() && sp.take_failure().is_none()).then_some(sp)
            }
            _ => None,
        };
        self.stage_done(StageName::Scan);
        if stopped {
            // Only edge lists stop: Matrix Market entries are checked as integers before.
            return Ok(None);
        }
        let dropped = over_budget.into_inner();
        Ok(Some(IntPass {
            keep: keep && !dropped,
            tallies,
            kept: if dropped { Vec::new() } else { kept },
            scanned,
            early,
        }))
    }

    /// Pass 2 over integer ids: index them, then fill from the kept edges or the text.
    fn fill_ints(mut self, pass: IntPass) -> Result<Graph> {
        let IntPass {
            keep,
            tallies,
            kept,
            scanned,
            early,
        } = pass;

        self.progress.stage("indexing ids", None, Unit::Items);
        let mut index =
            IntIndex::build(tallies, self.mtx.as_ref().map(|h| h.rows), self.max_nodes())
                .map_err(|f| self.index_fault(f))?;
        self.stage_done(StageName::IndexIds);

        if let Some(spiller) = early {
            // The runs are written: build on disk from them unless the sizes now say memory.
            if let Choice::Disk { entries, .. } = self.choose(&index.raw_degree, true)? {
                let ids = NodeIds::from_ints(std::mem::take(&mut index.ids));
                let raw_degree = std::mem::take(&mut index.raw_degree);
                return self.finish_on_disk(
                    spiller,
                    entries,
                    ids,
                    Some(&index),
                    IdKind::Integer,
                    scanned,
                    &raw_degree,
                );
            }
        }

        let sink = self.plan_fill(&index.raw_degree)?;
        if keep {
            self.progress.stage("filling", None, Unit::Items);
            // Each piece's edges are freed as soon as they are filled.
            let bufs: Vec<SpillBuf> = kept
                .into_par_iter()
                .fold(SpillBuf::default, |mut buf, (_, raw)| {
                    let mut dense = Vec::with_capacity(FILL_BATCH);
                    let mut ok = true;
                    let mut put = |a: u64, b: u64| {
                        dense.push((index.get(a), index.get(b)));
                        if dense.len() == FILL_BATCH {
                            ok &= sink.put(&mut buf, &dense);
                            dense.clear();
                        }
                    };
                    match &raw {
                        Raw::Narrow(v) => v
                            .chunks_exact(2)
                            .for_each(|p| put(p[0] as u64, p[1] as u64)),
                        Raw::Wide(v) => v.chunks_exact(2).for_each(|p| put(p[0], p[1])),
                    }
                    sink.put(&mut buf, &dense);
                    buf
                })
                .collect();
            sink.drain(bufs);
        } else {
            self.begin("filling");
            let rules = &self.part_rules();
            let (bufs, _) = self.each_piece(
                SpillBuf::default,
                |buf, i, bytes, base| {
                    // Parse a batch, then map and store it in a tight loop: the random writes
                    // overlap far better than when interleaved with parsing.
                    let mut batch: Vec<(u64, u64)> = Vec::with_capacity(FILL_BATCH);
                    let mut dense: Vec<(u32, u32)> = Vec::with_capacity(FILL_BATCH);
                    let mut ok = true;
                    let mut flush = |batch: &mut Vec<(u64, u64)>, buf: &mut SpillBuf| {
                        dense.clear();
                        dense.extend(batch.iter().map(|&(a, b)| (index.get(a), index.get(b))));
                        ok &= sink.put(buf, &dense);
                        batch.clear();
                    };
                    scan::scan_chunk(i, bytes, base, &rules[pieces::part_of(i)], |a, b| {
                        if let (Some(a), Some(b)) = (a.int, b.int)
                            && a != b
                        {
                            batch.push((a, b));
                            if batch.len() == FILL_BATCH {
                                flush(&mut batch, buf);
                            }
                        }
                        true
                    });
                    flush(&mut batch, buf);
                    ok
                },
                &scanned.outcomes,
            )?;
            sink.drain(bufs);
        }
        self.stage_done(StageName::Fill);
        let ids = NodeIds::from_ints(std::mem::take(&mut index.ids));
        self.finish_sink(sink, ids, IdKind::Integer, scanned, &index.raw_degree)
    }
}

/// Integer edges kept between passes for compressed input (pairs, flattened).
enum Raw {
    Narrow(Vec<u32>),
    Wide(Vec<u64>),
}

impl Raw {
    fn bytes(&self) -> u64 {
        match self {
            Raw::Narrow(v) => v.len() as u64 * 4,
            Raw::Wide(v) => v.len() as u64 * 8,
        }
    }

    #[inline]
    fn push(&mut self, a: u64, b: u64) {
        match self {
            Raw::Narrow(v) if (a | b) <= u32::MAX as u64 => {
                v.push(a as u32);
                v.push(b as u32);
            }
            Raw::Narrow(v) => {
                let mut w: Vec<u64> = v.iter().map(|&x| x as u64).collect();
                w.push(a);
                w.push(b);
                *self = Raw::Wide(w);
            }
            Raw::Wide(v) => {
                v.push(a);
                v.push(b);
            }
        }
    }
}

struct IntWorker {
    tally: IntTally,
    outcomes: Vec<ChunkOutcome>,
    kept: Vec<(usize, Raw)>,
    /// This worker's buffers of the early runs.
    spill: SpillBuf,
}

impl IntWorker {
    fn scan(
        &mut self,
        index: usize,
        bytes: &[u8],
        base: u64,
        rules: &ScanRules,
        keep: bool,
        early: Option<&Spiller>,
    ) -> bool {
        let mut raw = Raw::Narrow(Vec::new());
        let tally = &mut self.tally;
        let spill = &mut self.spill;
        let outcome = scan::scan_chunk(index, bytes, base, rules, |a, b| match (a.int, b.int) {
            (Some(a), Some(b)) => {
                tally.edge(a, b);
                if a != b {
                    if keep {
                        raw.push(a, b);
                    }
                    if let Some(sp) = early {
                        if (a | b) <= u32::MAX as u64 {
                            // A failed write is kept by the spiller, which is then given up.
                            spill.edge(a as u32, b as u32, sp);
                        } else {
                            // Keys hold two 32-bit ids: wider ones take the two-pass build.
                            sp.give_up();
                        }
                    }
                }
                true
            }
            _ => false,
        });
        let go_on = outcome.error.is_none() && !outcome.stopped;
        self.outcomes.push(outcome);
        if keep {
            if let Raw::Narrow(v) = &mut raw {
                v.shrink_to_fit();
            }
            self.kept.push((index, raw));
        }
        go_on
    }
}

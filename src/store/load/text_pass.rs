//! The text-id passes: any token is an id, kept verbatim; ids are ranked in sorted order so
//! results never depend on threads.

use super::{FILL_BATCH, FirstTextId, Loader, Scanned};
use crate::error::{Result, excerpt};
use crate::read::pieces;
use crate::read::scan;
use crate::store::graph::{Graph, NodeIds};
use crate::store::ids::{TextIndex, TextTally};
use crate::store::intake::{IdKind, StageName};
use crate::store::spill::SpillBuf;

impl Loader<'_> {
    /// Text ids: tally tokens, then fill (each pass re-reads the text).
    pub(super) fn run_text(mut self) -> Result<Graph> {
        self.rules.text_ids = true;
        self.begin("scanning text ids");
        let rules = self.part_rules();
        let (states, info) = self.each_piece(
            || (TextTally::default(), Vec::new(), Vec::new()),
            |(t, outcomes, firsts), i, bytes, base| {
                let mut first = None;
                let o = scan::scan_chunk_at(
                    i,
                    bytes,
                    base,
                    &rules[pieces::part_of(i)],
                    |a, b, line_at| {
                        if first.is_none()
                            && let Some(tok) = [a, b].into_iter().find(|t| t.int.is_none())
                        {
                            // The id's own offset, unless it was unescaped out of the text.
                            let at = (tok.raw.as_ptr() as usize)
                                .checked_sub(bytes.as_ptr() as usize)
                                .filter(|&at| at < bytes.len())
                                .unwrap_or(line_at);
                            first = Some((at, excerpt(tok.raw)));
                        }
                        t.edge(a.raw, b.raw);
                        true
                    },
                );
                if let Some((at, raw)) = first {
                    // Lines of this piece before the id (0-based), counted once per piece.
                    let line = memchr::memchr_iter(b'\n', &bytes[..at]).count() as u64;
                    firsts.push((i, line, base + at as u64, raw));
                }
                let go_on = o.error.is_none();
                outcomes.push(o);
                go_on
            },
            &[],
        )?;
        let mut tallies = Vec::new();
        let mut outcomes = Vec::new();
        let mut firsts = Vec::new();
        for (t, o, f) in states {
            tallies.push(t);
            outcomes.extend(o);
            firsts.extend(f);
        }
        let scanned = self.check(outcomes, info)?;
        self.first_text_id = self.place_first_text_id(&scanned, firsts);
        let index = TextIndex::build(tallies, self.max_nodes()).map_err(|f| self.index_fault(f))?;
        self.stage_done(StageName::IndexIds);

        let sink = self.plan_fill(&index.raw_degree)?;
        self.begin("filling");
        let (bufs, _) = self.each_piece(
            SpillBuf::default,
            |buf, i, bytes, base| {
                // Batched like integer ids: the in-memory fill sorts each batch by node block.
                let mut ok = true;
                let mut dense: Vec<(u32, u32)> = Vec::with_capacity(FILL_BATCH);
                scan::scan_chunk(i, bytes, base, &rules[pieces::part_of(i)], |a, b| {
                    if a.raw != b.raw {
                        dense.push((index.get(a.raw), index.get(b.raw)));
                        if dense.len() == FILL_BATCH {
                            ok &= sink.put(buf, &dense);
                            dense.clear();
                        }
                    }
                    ok
                });
                ok &= sink.put(buf, &dense);
                ok
            },
            &scanned.outcomes,
        )?;
        sink.drain(bufs);
        self.stage_done(StageName::Fill);
        let raw_degree = index.raw_degree;
        let ids = NodeIds::Text {
            offsets: index.offsets.into(),
            bytes: index.bytes.into(),
        };
        self.finish_sink(sink, ids, IdKind::Text, scanned, &raw_degree)
    }

    /// The earliest of the pieces' first text ids, with its line in the whole text.
    fn place_first_text_id(
        &self,
        scanned: &Scanned,
        mut firsts: Vec<(usize, u64, u64, String)>,
    ) -> Option<FirstTextId> {
        firsts.sort_by_key(|f| f.0);
        let (piece, line, byte, id) = firsts.into_iter().next()?;
        let before: u64 = scanned
            .outcomes
            .iter()
            .filter(|o| o.index < piece && pieces::part_of(o.index) == pieces::part_of(piece))
            .map(|o| o.counts.lines)
            .sum();
        let header = self.mtx.as_ref().map_or(0, |h| h.lines_before_body);
        Some(FirstTextId {
            part: self.part_name(pieces::part_of(piece)),
            integer_too_large: id.bytes().all(|c| c.is_ascii_digit()),
            id,
            line: header + before + line + 1,
            byte,
        })
    }
}

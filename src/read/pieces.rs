//! Feeding newline-aligned pieces of text to worker threads: straight from a memory map (split at
//! newlines, parsed in parallel) or from a decoder thread (pipelined: one thread decompresses
//! while the others parse). Each worker keeps its own accumulator; callers merge them, so results
//! do not depend on which worker saw which piece.

use std::sync::Mutex;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc::sync_channel;

use crate::progress::Progress;
use crate::read::source::{self, Compression, DecodeInfo, StreamFault, TextChunk};

/// Where the text comes from.
#[derive(Clone, Copy)]
pub struct Source<'a> {
    pub data: &'a [u8],
    pub compression: Compression,
    /// Target piece size in bytes.
    pub piece: usize,
    pub max_line: usize,
    /// The map behind `data`, when it is one: pieces done with are dropped from the resident
    /// set (the file stays in the page cache), so reading a large file does not hold it all.
    pub map: Option<&'a memmap2::Mmap>,
    /// The id columns of a Parquet source.
    pub parquet: Option<&'a crate::read::parquet::ParquetPlan>,
}

/// Drop the whole pages of `data[a..b]` from this process's resident set. Safe for a read-only
/// file map: a later read faults the same bytes back in from the file.
pub(crate) fn release(map: Option<&memmap2::Mmap>, a: usize, b: usize) {
    const PAGE: usize = 4096;
    let Some(map) = map else { return };
    let (start, end) = (a.next_multiple_of(PAGE), b / PAGE * PAGE);
    if end > start {
        // SAFETY: the map is private and read-only; MADV_DONTNEED on it discards only clean
        // page-cache views, which are refetched unchanged from the file if touched again. A
        // failure only means the pages stay resident.
        #[cfg(unix)]
        let _ = unsafe {
            map.unchecked_advise_range(memmap2::UncheckedAdvice::DontNeed, start, end - start)
        };
    }
}

/// Split plain text into pieces of about `target` bytes that end at a newline.
pub fn split_at_newlines(data: &[u8], target: usize) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut start = 0;
    while start < data.len() {
        let guess = start.saturating_add(target.max(1)).min(data.len());
        let end = if guess >= data.len() {
            data.len()
        } else {
            memchr::memchr(b'\n', &data[guess..]).map_or(data.len(), |i| guess + i + 1)
        };
        out.push((start, end));
        start = end;
    }
    out
}

/// Run `work(state, index, bytes, byte_base)` over every piece on `threads` workers, each with
/// its own `init()` state. `work` returns false to stop the run (pieces already started finish;
/// pieces are handed out in order, so every piece before the stopping one is processed).
pub fn run<W: Send>(
    src: Source<'_>,
    threads: usize,
    progress: &dyn Progress,
    init: impl Fn() -> W + Sync,
    work: impl Fn(&mut W, usize, &[u8], u64) -> bool + Sync,
) -> Result<(Vec<W>, DecodeInfo), StreamFault> {
    let threads = threads.max(1);
    // Index of the earliest piece that asked to stop; later pieces are skipped, earlier ones
    // always run (their line counts place the error).
    let stop_at = AtomicUsize::new(usize::MAX);
    let stop = |i: usize| {
        stop_at.fetch_min(i, Ordering::Relaxed);
    };
    let stopped_before = |i: usize| stop_at.load(Ordering::Relaxed) < i;
    match src.compression {
        Compression::None => {
            let pieces = split_at_newlines(src.data, src.piece);
            let next = AtomicUsize::new(0);
            let worker = || {
                let mut st = init();
                loop {
                    let i = next.fetch_add(1, Ordering::Relaxed);
                    let Some(&(a, b)) = pieces.get(i) else { break };
                    if stopped_before(i) {
                        break;
                    }
                    if !work(&mut st, i, &src.data[a..b], a as u64) {
                        stop(i);
                    }
                    release(src.map, a, b);
                    progress.advance((b - a) as u64);
                }
                st
            };
            // This thread is one of the workers; small inputs spawn no thread at all.
            let helpers = threads.min(pieces.len()).saturating_sub(1);
            let states = std::thread::scope(|s| {
                let handles: Vec<_> = (0..helpers).map(|_| s.spawn(worker)).collect();
                let mut states = vec![worker()];
                states.extend(join_all(handles));
                states
            });
            let info = DecodeInfo {
                frames: 0,
                text_bytes: src.data.len() as u64,
            };
            Ok((states, info))
        }
        c => {
            let (tx, rx) = sync_channel::<TextChunk>(2 * threads);
            let rx = Mutex::new(rx);
            std::thread::scope(|s| {
                let decoder = s.spawn(|| {
                    let tx = tx;
                    let consumed = |a: usize, b: usize| release(src.map, a, b);
                    source::decode_chunks(
                        src.data,
                        c,
                        src.parquet,
                        src.piece,
                        src.max_line,
                        &consumed,
                        &mut |chunk| !stopped_before(chunk.index) && tx.send(chunk).is_ok(),
                    )
                });
                let handles: Vec<_> = (0..threads)
                    .map(|_| {
                        s.spawn(|| {
                            let mut st = init();
                            loop {
                                // Hold the lock only to receive, never while working.
                                let got = rx.lock().map(|r| r.recv());
                                let Ok(Ok(chunk)) = got else { break };
                                if stopped_before(chunk.index) {
                                    continue;
                                }
                                if !work(&mut st, chunk.index, &chunk.bytes, chunk.byte_base) {
                                    stop(chunk.index);
                                }
                                progress.advance(chunk.bytes.len() as u64);
                            }
                            st
                        })
                    })
                    .collect();
                let states = join_all(handles);
                let info = decoder
                    .join()
                    .unwrap_or_else(|p| std::panic::resume_unwind(p))?;
                Ok((states, info))
            })
        }
    }
}

/// Bits of a piece index below a part's number: the index of piece `k` of part `p` among the
/// parts of a multi-part input is `p << PART_SHIFT | k` (see [`run_parts`]).
pub(crate) const PART_SHIFT: u32 = 40;

/// The part a piece index belongs to.
pub(crate) fn part_of(index: usize) -> usize {
    index >> PART_SHIFT
}

/// Run `work` over every piece of several parts read as one input. Plain parts are split at
/// newlines and their pieces shared among the workers; a compressed part is decoded whole by
/// the worker that takes it (so several parts decode at once). Piece indices carry their part
/// (`part << PART_SHIFT | k`) and are handed out in part order, so a stop keeps the same promise
/// as [`run`]: every piece before the stopping one is processed. A stream fault comes with the
/// number of its part.
pub fn run_parts<W: Send>(
    parts: &[Source<'_>],
    threads: usize,
    progress: &dyn Progress,
    init: impl Fn() -> W + Sync,
    work: impl Fn(&mut W, usize, &[u8], u64) -> bool + Sync,
) -> Result<(Vec<W>, DecodeInfo), (usize, StreamFault)> {
    let threads = threads.max(1);
    let stop_at = AtomicUsize::new(usize::MAX);
    let stop = |i: usize| {
        stop_at.fetch_min(i, Ordering::Relaxed);
    };
    let stopped_before = |i: usize| stop_at.load(Ordering::Relaxed) < i;
    // (part, byte range of a plain piece, or None for a whole compressed part)
    let mut items: Vec<(usize, Option<(usize, usize)>)> = Vec::new();
    for (p, src) in parts.iter().enumerate() {
        match src.compression {
            Compression::None => items.extend(
                split_at_newlines(src.data, src.piece)
                    .into_iter()
                    .map(|r| (p, Some(r))),
            ),
            _ => items.push((p, None)),
        }
    }
    // Each piece index belongs to exactly one item, so counters per item never collide.
    let firsts: Vec<usize> = {
        let mut k = vec![0usize; parts.len()];
        items
            .iter()
            .map(|&(p, _)| {
                k[p] += 1;
                k[p] - 1
            })
            .collect()
    };
    let next = AtomicUsize::new(0);
    let faults: Mutex<Vec<(usize, StreamFault)>> = Mutex::new(Vec::new());
    let frames = AtomicUsize::new(0);
    let text = std::sync::atomic::AtomicU64::new(0);
    let worker = || {
        let mut st = init();
        loop {
            let i = next.fetch_add(1, Ordering::Relaxed);
            let Some(&(p, range)) = items.get(i) else {
                break;
            };
            let src = &parts[p];
            let base = p << PART_SHIFT;
            match range {
                Some((a, b)) => {
                    let index = base | firsts[i];
                    if stopped_before(index) {
                        break;
                    }
                    if !work(&mut st, index, &src.data[a..b], a as u64) {
                        stop(index);
                    }
                    release(src.map, a, b);
                    text.fetch_add((b - a) as u64, Ordering::Relaxed);
                    progress.advance((b - a) as u64);
                }
                None => {
                    if stopped_before(base) {
                        break;
                    }
                    let consumed = |a: usize, b: usize| release(src.map, a, b);
                    let r = source::decode_chunks(
                        src.data,
                        src.compression,
                        None,
                        src.piece,
                        src.max_line,
                        &consumed,
                        &mut |chunk| {
                            let index = base | chunk.index;
                            if stopped_before(index) {
                                return false;
                            }
                            if !work(&mut st, index, &chunk.bytes, chunk.byte_base) {
                                stop(index);
                                return false;
                            }
                            progress.advance(chunk.bytes.len() as u64);
                            true
                        },
                    );
                    match r {
                        Ok(info) => {
                            frames.fetch_add(info.frames as usize, Ordering::Relaxed);
                            text.fetch_add(info.text_bytes, Ordering::Relaxed);
                        }
                        Err(f) => {
                            // Later pieces are not read; the fault is reported by part order.
                            stop(base);
                            let f = match f {
                                StreamFault::LongLine { index, byte_base } => {
                                    StreamFault::LongLine {
                                        index: base | index,
                                        byte_base,
                                    }
                                }
                                f => f,
                            };
                            if let Ok(mut v) = faults.lock() {
                                v.push((p, f));
                            }
                        }
                    }
                }
            }
        }
        st
    };
    let helpers = threads.min(items.len()).saturating_sub(1);
    let states = std::thread::scope(|s| {
        let handles: Vec<_> = (0..helpers).map(|_| s.spawn(worker)).collect();
        let mut states = vec![worker()];
        states.extend(join_all(handles));
        states
    });
    let mut faults = faults.into_inner().unwrap_or_else(|p| p.into_inner());
    faults.sort_by_key(|f| f.0);
    if let Some(f) = faults.into_iter().next() {
        return Err(f);
    }
    Ok((
        states,
        DecodeInfo {
            frames: frames.into_inner() as u64,
            text_bytes: text.into_inner(),
        },
    ))
}

fn join_all<W>(handles: Vec<std::thread::ScopedJoinHandle<'_, W>>) -> Vec<W> {
    handles
        .into_iter()
        .map(|h| h.join().unwrap_or_else(|p| std::panic::resume_unwind(p)))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn newline_split_covers_everything() {
        let data = b"1 2\n33 44\n5 6\n7 8";
        for t in [1, 3, 5, 100] {
            let p = split_at_newlines(data, t);
            assert_eq!(p.first().unwrap().0, 0);
            assert_eq!(p.last().unwrap().1, data.len());
            assert!(p.windows(2).all(|w| w[0].1 == w[1].0));
            assert!(p[..p.len() - 1].iter().all(|&(_, e)| data[e - 1] == b'\n'));
        }
    }
}

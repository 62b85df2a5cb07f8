//! Scanning one newline-aligned chunk of text: classify every line, count what was seen, and
//! hand each edge to a callback. Both build passes use this one function, so they make the same
//! decisions about every line (including which malformed lines are skipped).

use crate::error::excerpt;
use crate::read::columns::{self, Picked};
use crate::read::edgeline::{self, Line, Token};
use crate::read::mtx::Field;

/// Matrix Market rules for entry lines.
#[derive(Debug, Clone, Copy)]
pub struct MtxRules {
    /// Nodes the size line declares.
    pub n: u64,
    /// The entries' field kind.
    pub field: Field,
}

/// How lines are judged.
#[derive(Debug, Clone)]
pub struct ScanRules {
    /// Longest line accepted, in bytes.
    pub max_line: usize,
    /// Count malformed lines instead of stopping at the first.
    pub skip_malformed: bool,
    /// Text offset where data starts (after a Matrix Market header); earlier lines are skipped.
    pub body_start: u64,
    /// Text offset of a header line to skip.
    pub header_at: Option<u64>,
    /// Matrix Market entry rules, for Matrix Market input.
    pub mtx: Option<MtxRules>,
    /// Ids are compared as text (else by integer value) when deciding self-loops.
    pub text_ids: bool,
    /// The two id columns of a delimited export, when chosen (else the first two fields).
    pub pick: Option<Picked>,
}

/// Line counts of one chunk.
#[derive(Debug, Default, Clone, Copy)]
pub struct Counts {
    /// Lines scanned.
    pub lines: u64,
    /// Blank lines.
    pub blank: u64,
    /// Comment lines.
    pub comments: u64,
    /// Edge lines (self-loops included).
    pub edge_lines: u64,
    /// Edge lines with extra columns.
    pub extra: u64,
    /// Self-loops.
    pub loops: u64,
    /// Malformed lines skipped.
    pub malformed: u64,
}

impl Counts {
    /// Add another chunk's counts.
    pub fn add(&mut self, o: &Counts) {
        self.lines += o.lines;
        self.blank += o.blank;
        self.comments += o.comments;
        self.edge_lines += o.edge_lines;
        self.extra += o.extra;
        self.loops += o.loops;
        self.malformed += o.malformed;
    }
}

/// What is wrong with a line, before it is placed in the file.
#[derive(Debug, Clone)]
pub enum LineError {
    /// The line breaks the edge-list grammar.
    Malformed {
        /// What is wrong.
        problem: String,
        /// What the grammar expects.
        expected: &'static str,
    },
    /// Longer than the limit.
    TooLong,
    /// A Matrix Market entry that breaks its header's promise.
    Mtx(String),
}

/// A line problem located within its chunk.
#[derive(Debug, Clone)]
pub struct LocalFault {
    /// 0-based line index within the chunk.
    pub line: u64,
    /// Byte offset of the line's start within the chunk.
    pub offset: usize,
    /// What is wrong.
    pub error: LineError,
    /// The line's start, as written.
    pub excerpt: String,
}

/// The result of scanning one chunk.
#[derive(Debug, Clone)]
pub struct ChunkOutcome {
    /// The chunk's position among the chunks.
    pub index: usize,
    /// Text offset where the chunk starts.
    pub byte_base: u64,
    /// What the chunk held.
    pub counts: Counts,
    /// Skipped malformed lines (the first few).
    pub skipped: Vec<LocalFault>,
    /// The error that stopped the chunk.
    pub error: Option<LocalFault>,
    /// The callback stopped the scan (a text id turned up in an integer pass).
    pub stopped: bool,
    /// Whether the chunk held the header line, skipped.
    pub header_skipped: bool,
}

/// How many skipped lines each chunk keeps as examples.
pub const EXAMPLES: usize = 5;

/// Scan `bytes` (starting at text offset `byte_base`), calling `on_edge` for every edge line
/// (self-loops included). `on_edge` returns false to stop the scan. The tokens live for the
/// call only (an unescaped quoted id sits in a scratch buffer).
pub fn scan_chunk(
    index: usize,
    bytes: &[u8],
    byte_base: u64,
    rules: &ScanRules,
    mut on_edge: impl FnMut(Token<'_>, Token<'_>) -> bool,
) -> ChunkOutcome {
    scan_chunk_at(index, bytes, byte_base, rules, |a, b, _| on_edge(a, b))
}

/// [`scan_chunk`], also telling `on_edge` where the line starts within `bytes`.
pub fn scan_chunk_at(
    index: usize,
    bytes: &[u8],
    byte_base: u64,
    rules: &ScanRules,
    mut on_edge: impl FnMut(Token<'_>, Token<'_>, usize) -> bool,
) -> ChunkOutcome {
    let mut out = ChunkOutcome {
        index,
        byte_base,
        counts: Counts::default(),
        skipped: Vec::new(),
        error: None,
        stopped: false,
        header_skipped: false,
    };
    let c = &mut out.counts;
    let mut pos = 0usize;
    let len = bytes.len();
    // Lines before the body (a Matrix Market header) are counted by the header parser.
    if rules.body_start > byte_base {
        pos = ((rules.body_start - byte_base) as usize).min(len);
    }
    let mut line_no = 0u64;
    let mut scratch = Vec::new();
    // The quick path reads `digits SEP digits`: any separator for the plain grammar, a comma
    // when the chosen columns are the first two of comma-separated text (Parquet's rows too).
    let quick_sep = match &rules.pick {
        None => Some(false),
        Some(p) if (p.a, p.b, p.delim) == (0, 1, columns::Delimiter::Comma) => Some(true),
        Some(_) => None,
    };
    while pos < len {
        let start = pos;
        line_no += 1;
        // The common shape ("123 456\n") skips the general parser and the newline search.
        let quick = quick_sep
            .and_then(|comma_only| {
                edgeline::quick_pair(bytes, pos)
                    .filter(|(a, ..)| !comma_only || bytes[pos + a.raw.len()] == b',')
            })
            .filter(|&(a, b, next)| {
                next - pos <= rules.max_line
                    && rules.header_at != Some(byte_base + pos as u64)
                    && rules.mtx.is_none_or(|m| mtx_entry(a, b, false, m).is_ok())
            });
        let (verdict, line) = if let Some((a, b, next)) = quick {
            pos = next;
            (Ok((a, b)), &bytes[start..next])
        } else {
            let end = memchr::memchr(b'\n', &bytes[pos..]).map_or(len, |i| pos + i);
            let line = &bytes[pos..end];
            pos = end + 1;
            if line.len() > rules.max_line {
                out.error = Some(LocalFault {
                    line: line_no - 1,
                    offset: start,
                    error: LineError::TooLong,
                    excerpt: excerpt(line),
                });
                break;
            }
            if rules.header_at == Some(byte_base + start as u64) {
                out.header_skipped = true;
                continue;
            }
            let parsed = match &rules.pick {
                None => edgeline::parse_line(line).map_err(|f| LineError::Malformed {
                    problem: f.problem().to_string(),
                    expected: edgeline::EXPECTED_EDGE,
                }),
                Some(p) => {
                    columns::parse_picked(line, p, &mut scratch).map_err(|f| LineError::Malformed {
                        problem: f.problem(p),
                        expected: columns::EXPECTED_PICKED,
                    })
                }
            };
            let verdict = match parsed {
                Ok(Line::Edge { a, b, extra }) => match rules.mtx {
                    None => {
                        c.extra += extra as u64;
                        Ok((a, b))
                    }
                    Some(m) => mtx_entry(a, b, extra, m)
                        .map(|()| (a, b))
                        .map_err(LineError::Mtx),
                },
                Ok(Line::Blank) => {
                    c.blank += 1;
                    continue;
                }
                Ok(Line::Comment) => {
                    c.comments += 1;
                    continue;
                }
                Err(e) => Err(e),
            };
            (verdict, line)
        };
        match verdict {
            Ok((a, b)) => {
                c.edge_lines += 1;
                c.loops += a.same(&b, rules.text_ids) as u64;
                if !on_edge(a, b, start) {
                    out.stopped = true;
                    break;
                }
            }
            Err(error) => {
                let fault = LocalFault {
                    line: line_no - 1,
                    offset: start,
                    error,
                    excerpt: excerpt(line),
                };
                if rules.skip_malformed {
                    c.malformed += 1;
                    if out.skipped.len() < EXAMPLES {
                        out.skipped.push(fault);
                    }
                } else {
                    out.error = Some(fault);
                    break;
                }
            }
        }
    }
    out.counts.lines = line_no;
    out
}

fn mtx_entry(a: Token, b: Token, extra: bool, m: MtxRules) -> Result<(), String> {
    let (Some(i), Some(j)) = (a.int, b.int) else {
        return Err("entry indices must be whole numbers".into());
    };
    if i == 0 || j == 0 || i > m.n || j > m.n {
        return Err(format!(
            "entry ({i}, {j}) is outside the declared {n} x {n} matrix (indices are 1-based)",
            n = m.n
        ));
    }
    match (m.field, extra) {
        (Field::Pattern, true) => Err("a pattern entry has two columns, found more".into()),
        (Field::Integer | Field::Real, false) => Err("the entry has no value column".into()),
        _ => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rules() -> ScanRules {
        ScanRules {
            max_line: 100,
            skip_malformed: false,
            body_start: 0,
            header_at: None,
            mtx: None,
            text_ids: false,
            pick: None,
        }
    }

    #[test]
    fn counts_and_edges() {
        let text = b"# c\n1 2\n\n2 2 w\r\n3,4";
        let mut edges = Vec::new();
        let o = scan_chunk(0, text, 0, &rules(), |a, b| {
            edges.push((a.raw.to_vec(), b.raw.to_vec()));
            true
        });
        assert_eq!(edges.len(), 3);
        assert_eq!(o.counts.lines, 5);
        assert_eq!(
            (
                o.counts.comments,
                o.counts.blank,
                o.counts.extra,
                o.counts.loops
            ),
            (1, 1, 1, 1)
        );
        assert!(o.error.is_none());
    }

    #[test]
    fn first_error_located() {
        let text = b"1 2\n3\n4 5\n";
        let o = scan_chunk(0, text, 0, &rules(), |_, _| true);
        let e = o.error.unwrap();
        assert_eq!((e.line, e.offset), (1, 4));
        let mut r = rules();
        r.skip_malformed = true;
        let o = scan_chunk(0, text, 0, &r, |_, _| true);
        assert_eq!((o.counts.malformed, o.counts.edge_lines), (1, 2));
    }

    #[test]
    fn header_and_long_lines() {
        let mut r = rules();
        r.header_at = Some(10);
        let text = b"src dst\n1 2\n";
        // The header offset is absolute: this chunk starts at text offset 10.
        let o = scan_chunk(0, text, 10, &r, |_, _| true);
        assert!(o.header_skipped);
        assert_eq!(o.counts.edge_lines, 1);
        r.max_line = 4;
        let o = scan_chunk(0, b"1 2\n10000 2\n", 0, &r, |_, _| true);
        assert!(matches!(o.error.unwrap().error, LineError::TooLong));
    }
}

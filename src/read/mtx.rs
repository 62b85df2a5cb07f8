//! Matrix Market coordinate files, as pure functions over byte slices.
//!
//! Format: Boisvert, Pozo & Remington, "The Matrix Market Exchange Formats: Initial Design",
//! NIST IR 5935 (1996). A banner `%%MatrixMarket matrix coordinate <field> <symmetry>`, comment
//! lines starting with `%`, a size line `rows cols entries`, then one `i j [value…]` line per entry
//! with 1-based indices. A square matrix is read as the adjacency of an undirected graph on
//! nodes 1..=rows; values are ignored.

/// The value field of the banner.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Field {
    Pattern,
    Integer,
    Real,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Symmetry {
    General,
    Symmetric,
    SkewSymmetric,
}

/// Everything before the entries.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Header {
    pub field: Field,
    pub symmetry: Symmetry,
    pub rows: u64,
    pub cols: u64,
    pub entries: u64,
    /// Byte offset where the entry lines start.
    pub body_start: usize,
    /// Lines before the body (banner, comments, blanks, size line).
    pub lines_before_body: u64,
    /// Comment and blank lines among them.
    pub comment_lines: u64,
    /// 1-based line number and byte offset of the size line.
    pub size_line: (u64, usize),
}

/// A header problem: the 1-based line, its byte offset, and what is wrong.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct HeaderFault {
    pub line: u64,
    pub byte: usize,
    pub problem: String,
}

/// True when the data starts with the Matrix Market banner.
pub fn has_banner(data: &[u8]) -> bool {
    data.len() >= 14 && data[..14].eq_ignore_ascii_case(b"%%MatrixMarket")
}

/// Parse the banner, comments and size line.
pub fn parse_header(data: &[u8]) -> Result<Header, HeaderFault> {
    let mut lines = LineIter { data, pos: 0 };
    let fault = |line: u64, byte: usize, problem: String| HeaderFault {
        line,
        byte,
        problem,
    };
    let (byte, banner) = lines
        .next()
        .ok_or_else(|| fault(1, 0, "the file is empty".into()))?;
    let words: Vec<String> = banner
        .split(|b| b.is_ascii_whitespace())
        .filter(|w| !w.is_empty())
        .map(|w| String::from_utf8_lossy(w).to_ascii_lowercase())
        .collect();
    let words: Vec<&str> = words.iter().map(String::as_str).collect();
    let (field, symmetry) = match words.as_slice() {
        ["%%matrixmarket", "matrix", "coordinate", field, sym] => {
            let field = match *field {
                "pattern" => Field::Pattern,
                "integer" => Field::Integer,
                "real" | "double" => Field::Real,
                other => {
                    return Err(fault(
                        1,
                        byte,
                        format!(
                            "value field {other:?} is not supported; expected pattern, integer or real"
                        ),
                    ));
                }
            };
            let sym = match *sym {
                "general" => Symmetry::General,
                "symmetric" => Symmetry::Symmetric,
                "skew-symmetric" => Symmetry::SkewSymmetric,
                other => {
                    return Err(fault(
                        1,
                        byte,
                        format!(
                            "symmetry {other:?} is not supported; expected general, symmetric or skew-symmetric"
                        ),
                    ));
                }
            };
            (field, sym)
        }
        ["%%matrixmarket", "matrix", "array", ..] => {
            return Err(fault(
                1,
                byte,
                "dense 'array' matrices are not graphs plumb reads; expected 'coordinate'".into(),
            ));
        }
        _ => {
            return Err(fault(
                1,
                byte,
                "banner should read '%%MatrixMarket matrix coordinate <pattern|integer|real> <general|symmetric|skew-symmetric>'".into(),
            ));
        }
    };
    let mut line_no = 1u64;
    let mut comments = 0u64;
    loop {
        let Some((byte, line)) = lines.next() else {
            return Err(fault(
                line_no + 1,
                data.len(),
                "the size line 'rows cols entries' is missing".into(),
            ));
        };
        line_no += 1;
        let trimmed = line.trim_ascii();
        if trimmed.is_empty() || trimmed[0] == b'%' {
            comments += 1;
            continue;
        }
        let nums: Vec<Option<u64>> = trimmed
            .split(|b| b.is_ascii_whitespace())
            .filter(|w| !w.is_empty())
            .map(|w| std::str::from_utf8(w).ok().and_then(|s| s.parse().ok()))
            .collect();
        let [Some(rows), Some(cols), Some(entries)] = nums.as_slice() else {
            return Err(fault(
                line_no,
                byte,
                format!(
                    "size line {:?} should be three whole numbers 'rows cols entries'",
                    crate::error::excerpt(line)
                ),
            ));
        };
        if rows != cols {
            return Err(fault(
                line_no,
                byte,
                format!("the matrix is {rows} x {cols}; an adjacency matrix must be square"),
            ));
        }
        return Ok(Header {
            field,
            symmetry,
            rows: *rows,
            cols: *cols,
            entries: *entries,
            body_start: lines.pos,
            lines_before_body: line_no,
            comment_lines: comments,
            size_line: (line_no, byte),
        });
    }
}

/// Lines with their byte offsets; the last line need not end in `\n`.
struct LineIter<'a> {
    data: &'a [u8],
    pos: usize,
}

impl<'a> Iterator for LineIter<'a> {
    type Item = (usize, &'a [u8]);
    fn next(&mut self) -> Option<Self::Item> {
        if self.pos >= self.data.len() {
            return None;
        }
        let start = self.pos;
        let end = memchr::memchr(b'\n', &self.data[start..]).map_or(self.data.len(), |i| start + i);
        self.pos = end + 1;
        let line = &self.data[start..end];
        Some((start, line.strip_suffix(b"\r").unwrap_or(line)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_ok() {
        let data = b"%%MatrixMarket matrix coordinate pattern symmetric\n% c\n\n3 3 2\n2 1\n3 2\n";
        let h = parse_header(data).unwrap();
        assert_eq!(h.field, Field::Pattern);
        assert_eq!(h.symmetry, Symmetry::Symmetric);
        assert_eq!((h.rows, h.entries), (3, 2));
        assert_eq!(&data[h.body_start..], b"2 1\n3 2\n");
        assert_eq!(h.lines_before_body, 4);
        assert_eq!(h.comment_lines, 2);
    }

    #[test]
    fn header_faults() {
        let bad = |d: &[u8]| parse_header(d).unwrap_err();
        assert_eq!(
            bad(b"%%MatrixMarket matrix coordinate complex general\n1 1 0\n").line,
            1
        );
        assert!(
            bad(b"%%MatrixMarket matrix array real general\n")
                .problem
                .contains("array")
        );
        assert!(
            bad(b"%%MatrixMarket matrix coordinate real general\n3 4 1\n")
                .problem
                .contains("square")
        );
        let f = bad(b"%%MatrixMarket matrix coordinate real general\n%x\n3 3\n");
        assert_eq!((f.line, f.byte), (3, 49));
        assert!(
            bad(b"%%MatrixMarket matrix coordinate real general\n")
                .problem
                .contains("missing")
        );
    }
}

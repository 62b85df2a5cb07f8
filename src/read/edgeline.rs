//! The text edge-list line grammar, as pure functions over byte slices (no I/O, no allocation).
//!
//! A data line holds two node ids separated by spaces/tabs or one comma (with optional spaces around
//! it); anything after the second id is an extra column (weight, timestamp, …) that is counted and
//! ignored. Lines whose first non-blank byte is `#` or `%` are comments. A trailing `\r` is dropped.

/// One node id as written in the file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Token<'a> {
    /// The bytes as written.
    pub raw: &'a [u8],
    /// Its value when it is decimal digits only and fits in u64.
    pub int: Option<u64>,
}

impl<'a> Token<'a> {
    /// Same node under the file's id kind: by value for integer ids, by bytes for text ids.
    #[inline]
    pub fn same(&self, other: &Token, text_ids: bool) -> bool {
        if text_ids {
            self.raw == other.raw
        } else {
            self.int == other.int
        }
    }
}

/// What a line turned out to be.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Line<'a> {
    Blank,
    Comment,
    Edge {
        a: Token<'a>,
        b: Token<'a>,
        /// True when at least one column follows the two ids.
        extra: bool,
    },
}

/// Why a line is not a valid edge line.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Fault {
    /// Only one field on the line.
    OneField,
    /// Two separators in a row (for example `1,,2`) leave an empty id.
    EmptyField,
    /// A control byte (NUL, a lone CR, …) inside an id.
    ControlByte,
}

impl Fault {
    pub fn problem(self) -> &'static str {
        match self {
            Fault::OneField => "only one field",
            Fault::EmptyField => "an empty node id",
            Fault::ControlByte => "a control character inside a node id",
        }
    }
}

/// What a valid edge line looks like, for error messages.
pub const EXPECTED_EDGE: &str =
    "two node ids separated by spaces, a tab or a comma (then optional extra columns)";

#[inline]
fn is_blank(b: u8) -> bool {
    b == b' ' || b == b'\t'
}

#[inline]
fn ends_token(b: u8) -> bool {
    b == b' ' || b == b'\t' || b == b','
}

/// Read one token starting at `i` (which is not a separator). Returns the token and the index
/// just past it. Integers are recognised while scanning so the common case touches each byte once.
#[inline]
fn token(line: &[u8], start: usize) -> Result<(Token<'_>, usize), Fault> {
    let mut i = start;
    let mut value: u64 = 0;
    let mut int = true;
    while i < line.len() {
        let b = line[i];
        if ends_token(b) {
            break;
        }
        let d = b.wrapping_sub(b'0');
        if d < 10 {
            // Overflow makes it a text token (ids above 2^64-1 are still valid ids).
            match value.checked_mul(10).and_then(|v| v.checked_add(d as u64)) {
                Some(v) => value = v,
                None => int = false,
            }
        } else {
            if b < 0x20 || b == 0x7f {
                return Err(Fault::ControlByte);
            }
            int = false;
        }
        i += 1;
    }
    let tok = Token {
        raw: &line[start..i],
        int: int.then_some(value),
    };
    Ok((tok, i))
}

/// A whole field as a token: an integer when it is decimal digits only and fits in u64.
#[inline]
pub(crate) fn int_token(field: &[u8]) -> Token<'_> {
    let mut value: u64 = 0;
    let mut int = !field.is_empty();
    for &b in field {
        let d = b.wrapping_sub(b'0');
        match (d < 10)
            .then(|| value.checked_mul(10).and_then(|v| v.checked_add(d as u64)))
            .flatten()
        {
            Some(v) => value = v,
            None => {
                int = false;
                break;
            }
        }
    }
    Token {
        raw: field,
        int: int.then_some(value),
    }
}

/// Skip a separator: blanks with at most one comma among them. Returns the index of the next
/// field, or `Err(EmptyField)` when a second comma shows an empty field.
#[inline]
fn separator(line: &[u8], mut i: usize) -> Result<usize, Fault> {
    while i < line.len() && is_blank(line[i]) {
        i += 1;
    }
    if i < line.len() && line[i] == b',' {
        i += 1;
        while i < line.len() && is_blank(line[i]) {
            i += 1;
        }
        if i < line.len() && line[i] == b',' {
            return Err(Fault::EmptyField);
        }
    }
    Ok(i)
}

/// Parse one line (without its `\n`; a trailing `\r` is allowed).
#[inline]
pub fn parse_line(line: &[u8]) -> Result<Line<'_>, Fault> {
    let line = match line.last() {
        Some(b'\r') => &line[..line.len() - 1],
        _ => line,
    };
    let mut i = 0;
    while i < line.len() && is_blank(line[i]) {
        i += 1;
    }
    if i == line.len() {
        return Ok(Line::Blank);
    }
    match line[i] {
        b'#' | b'%' => return Ok(Line::Comment),
        b',' => return Err(Fault::EmptyField),
        _ => {}
    }
    let (a, end) = token(line, i)?;
    let i = separator(line, end)?;
    if i == line.len() {
        return Err(Fault::OneField);
    }
    let (b, end) = token(line, i)?;
    // Anything but blanks after the second id is an extra column.
    let extra = line[end..].iter().any(|&c| !is_blank(c));
    Ok(Line::Edge { a, b, extra })
}

/// Fast path for the commonest line shape: `digits SEP digits` ending in `\n`, `\r\n` or the end
/// of `bytes`, with SEP a single space, tab or comma and each id at most 19 digits (so no
/// overflow check is needed). Returns both ids and the index just past the line. `None` means
/// "use [`parse_line`]", which gives the same answer for every line this accepts.
#[inline(always)]
pub fn quick_pair(bytes: &[u8], pos: usize) -> Option<(Token<'_>, Token<'_>, usize)> {
    let (a, i) = digits(bytes, pos)?;
    match bytes.get(i) {
        Some(b' ' | b'\t' | b',') => {}
        _ => return None,
    }
    let (b, j) = digits(bytes, i + 1)?;
    let next = match bytes.get(j) {
        None => j,
        Some(b'\n') => j + 1,
        Some(b'\r') if bytes.get(j + 1) == Some(&b'\n') => j + 2,
        _ => return None,
    };
    let ta = Token {
        raw: &bytes[pos..i],
        int: Some(a),
    };
    let tb = Token {
        raw: &bytes[i + 1..j],
        int: Some(b),
    };
    Some((ta, tb, next))
}

/// Leading decimal digits at `pos` (at most 19, so no overflow check is needed): their value and
/// the index just past them. Eight bytes are judged at once when eight are there; ids of up to
/// seven digits, the common case, then cost no per-byte branch.
#[inline(always)]
fn digits(bytes: &[u8], pos: usize) -> Option<(u64, usize)> {
    let (mut v, mut i) = (0u64, pos);
    if let Some(word) = bytes.get(pos..pos + 8) {
        let w = u64::from_le_bytes(word.try_into().unwrap());
        let n = leading_digits(w);
        if n < 8 {
            return (n > 0).then(|| (eight_digits(w << (8 * (8 - n))), pos + n));
        }
        v = eight_digits(w);
        i = pos + 8;
    }
    while let Some(&c) = bytes.get(i) {
        let d = c.wrapping_sub(b'0');
        if d >= 10 {
            break;
        }
        v = v * 10 + d as u64;
        i += 1;
        if i - pos > 19 {
            return None;
        }
    }
    (i > pos).then_some((v, i))
}

/// How many of the eight bytes of `w` (first byte lowest) are ASCII digits before the first that
/// is not. A byte is a digit when its high nibble is 3 both as is and after adding 6; a carry
/// out of a non-digit byte can only disturb bytes after it, which are not counted.
#[inline(always)]
fn leading_digits(w: u64) -> usize {
    const HIGH: u64 = 0xF0F0_F0F0_F0F0_F0F0;
    let t = (w & HIGH) | ((w.wrapping_add(0x0606_0606_0606_0606) & HIGH) >> 4);
    let x = t ^ 0x3333_3333_3333_3333;
    // The top bit of each byte that is not zero.
    let nonzero =
        (((x & 0x7F7F_7F7F_7F7F_7F7F) + 0x7F7F_7F7F_7F7F_7F7F) | x) & 0x8080_8080_8080_8080;
    (nonzero.trailing_zeros() / 8) as usize
}

/// The value of eight ASCII digits, the first in the lowest byte; bytes shifted in from below
/// are zero and read as leading zeros. The multiply-and-combine steps follow Lemire's
/// eight-digit parse (Langdale and Lemire, 2019, "Parsing gigabytes of JSON per second").
#[inline(always)]
fn eight_digits(w: u64) -> u64 {
    // The low nibble of a digit is its value, and of a zero byte shifted in, zero.
    let mut v = w & 0x0F0F_0F0F_0F0F_0F0F;
    v = v.wrapping_mul(10).wrapping_add(v >> 8);
    const MASK: u64 = 0x0000_00FF_0000_00FF;
    const MUL1: u64 = 0x000F_4240_0000_0064; // 100 + (1_000_000 << 32)
    const MUL2: u64 = 0x0000_2710_0000_0001; // 1 + (10_000 << 32)
    ((v & MASK)
        .wrapping_mul(MUL1)
        .wrapping_add(((v >> 16) & MASK).wrapping_mul(MUL2)))
        >> 32
}

/// Decide whether the first data line of a file is a column header rather than an edge.
///
/// A header is a line with at least one non-integer id where either the next data line has two
/// integer ids, or its first two fields are common column names. A text-id file whose first line
/// happens to look like data is left alone; the `--header` flag overrides this guess.
pub fn looks_like_header(first: &[u8], next: Option<&[u8]>) -> bool {
    looks_like_header_parsed(
        parse_line(first).ok(),
        next.and_then(|l| parse_line(l).ok()),
    )
}

/// [`looks_like_header`] on lines already parsed (by the chosen columns of a delimited export,
/// say).
pub(crate) fn looks_like_header_parsed(first: Option<Line>, next: Option<Line>) -> bool {
    let Some(Line::Edge { a, b, .. }) = first else {
        return false;
    };
    if a.int.is_some() && b.int.is_some() {
        return false;
    }
    let next_is_int = matches!(
        next,
        Some(Line::Edge { a, b, .. }) if a.int.is_some() && b.int.is_some()
    );
    let named = |t: Token| t.int.is_none() && is_column_name(t.raw);
    next_is_int || (named(a) && named(b))
}

fn is_column_name(s: &[u8]) -> bool {
    const NAMES: &[&str] = &[
        // No single letters: graphs with nodes named "a" or "u" are common.
        "source", "target", "src", "dst", "dest", "from", "to", "node", "node1", "node2", "node_1",
        "node_2", "id1", "id2", "head", "tail", "left", "right", "start", "end", "sender",
        "receiver", "caller", "callee", "parent", "child",
    ];
    let mut s = s.trim_ascii();
    while let [b'"' | b'\'', rest @ ..] = s {
        s = rest;
    }
    while let [rest @ .., b'"' | b'\''] = s {
        s = rest;
    }
    NAMES.iter().any(|n| n.as_bytes().eq_ignore_ascii_case(s))
        || s.eq_ignore_ascii_case(b"from_id")
        || s.eq_ignore_ascii_case(b"to_id")
        || s.to_ascii_lowercase().ends_with(b"_id")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(Debug, PartialEq)]
    enum T<'a> {
        Int(u64),
        Text(&'a [u8]),
    }

    fn t(t: Token<'_>) -> T<'_> {
        match t.int {
            Some(v) => T::Int(v),
            None => T::Text(t.raw),
        }
    }

    fn edge(line: &str) -> (T<'_>, T<'_>, bool) {
        match parse_line(line.as_bytes()) {
            Ok(Line::Edge { a, b, extra }) => (t(a), t(b), extra),
            other => panic!("{line:?} parsed as {other:?}"),
        }
    }

    #[test]
    fn separators_and_columns() {
        assert_eq!(edge("1 2"), (T::Int(1), T::Int(2), false));
        assert_eq!(edge("1\t2\r"), (T::Int(1), T::Int(2), false));
        assert_eq!(edge("  7 , 8  "), (T::Int(7), T::Int(8), false));
        assert_eq!(edge("7,8,0.5"), (T::Int(7), T::Int(8), true));
        assert_eq!(edge("7 8 1700000000 x"), (T::Int(7), T::Int(8), true));
        assert_eq!(
            edge("alice bob"),
            (T::Text(b"alice"), T::Text(b"bob"), false)
        );
        assert_eq!(
            edge("18446744073709551615 18446744073709551616"),
            (T::Int(u64::MAX), T::Text(b"18446744073709551616"), false)
        );
    }

    #[test]
    fn comments_blanks_faults() {
        assert_eq!(parse_line(b""), Ok(Line::Blank));
        assert_eq!(parse_line(b" \t\r"), Ok(Line::Blank));
        assert_eq!(parse_line(b"# 1 2"), Ok(Line::Comment));
        assert_eq!(parse_line(b"  % x"), Ok(Line::Comment));
        assert_eq!(parse_line(b"12"), Err(Fault::OneField));
        assert_eq!(parse_line(b"12 ,"), Err(Fault::OneField));
        assert_eq!(parse_line(b"1,,2"), Err(Fault::EmptyField));
        assert_eq!(parse_line(b",2"), Err(Fault::EmptyField));
        assert_eq!(parse_line(b"1\x002 3"), Err(Fault::ControlByte));
    }

    #[test]
    fn quick_path_agrees_with_the_general_parser() {
        let cases: &[&[u8]] = &[
            b"1 2\n",
            b"1\t2\r\n",
            b"1,2",
            b"12345678901234567890 1\n",
            b"1 2 3\n",
            b"1  2\n",
            b"1 2\r",
            b"a 2\n",
            b"1 b\n",
            b"\n",
            b"1\n",
            b"0 0\n",
            b"1 ,2\n",
        ];
        for &c in cases {
            if let Some((a, b, next)) = quick_pair(c, 0) {
                let end = c.iter().position(|&x| x == b'\n').unwrap_or(c.len());
                assert_eq!(next, (end + 1).min(c.len()), "{c:?}");
                assert_eq!(
                    parse_line(&c[..end]),
                    Ok(Line::Edge { a, b, extra: false }),
                    "{c:?}"
                );
            }
        }
        assert!(quick_pair(b"12345678901234567890 1\n", 0).is_none());
        assert!(quick_pair(b"1 2\n", 0).is_some());
    }

    /// The plain per-byte reading, twin of the eight-at-once `digits`.
    fn digits_naive(bytes: &[u8], pos: usize) -> Option<(u64, usize)> {
        let n = bytes[pos.min(bytes.len())..]
            .iter()
            .take_while(|c| c.is_ascii_digit())
            .count();
        if n == 0 || n > 19 {
            return None;
        }
        let text = std::str::from_utf8(&bytes[pos..pos + n]).unwrap();
        Some((text.parse().unwrap(), pos + n))
    }

    proptest::proptest! {
        #[test]
        fn digits_equal_their_plain_twin(
            text in proptest::collection::vec(
                proptest::prop_oneof![
                    8 => b'0'..=b'9',
                    1 => proptest::prelude::any::<u8>(),
                    1 => proptest::prop_oneof![proptest::strategy::Just(b' '), proptest::strategy::Just(b'\n')],
                ],
                0..40,
            ),
            pos in 0usize..40,
        ) {
            let pos = pos.min(text.len());
            proptest::prop_assert_eq!(digits(&text, pos), digits_naive(&text, pos));
        }
    }

    #[test]
    fn digits_at_every_length_and_edge_byte() {
        // Lengths 1..=20 with each byte just outside '0'..='9' (and 0xFA.., which carries) after.
        for len in 1..=20usize {
            for stop in [b'/', b':', b' ', b'\n', 0x00, 0xF9, 0xFA, 0xFF] {
                let mut t: Vec<u8> = (0..len).map(|i| b'1' + (i % 9) as u8).collect();
                t.push(stop);
                t.extend_from_slice(b"99999999");
                assert_eq!(digits(&t, 0), digits_naive(&t, 0), "{t:?}");
            }
        }
    }

    #[test]
    fn header_guess() {
        assert!(looks_like_header(b"source,target", Some(b"1,2")));
        assert!(looks_like_header(b"from to weight", Some(b"ann bo 1")));
        assert!(looks_like_header(b"member_id,peer_id", None));
        assert!(!looks_like_header(b"ann bo", Some(b"cy dee")));
        assert!(!looks_like_header(b"1 2", Some(b"3 4")));
    }
}

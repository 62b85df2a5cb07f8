//! Edge lines whose two ids sit in chosen columns of a delimited export (a header names them, or
//! 1-based positions count them), as pure functions over byte slices.
//!
//! The delimiter is one of tab, comma or runs of blanks, decided once per file from its header or
//! first data line. With commas, fields may be quoted as RFC 4180 describes (Shafranovich, 2005,
//! "Common Format and MIME Type for Comma-Separated Values (CSV) Files"): a quoted field runs to
//! its closing quote, commas inside it are data, and a doubled quote stands for one quote (the
//! rare id holding one is unescaped into a scratch buffer; the others borrow the text). A line
//! break inside quotes is not supported (the text is cut into pieces at line breaks) and makes
//! the line malformed. Blanks around a field are dropped.

use crate::error::ParamError;
use crate::read::edgeline::{Line, Token, int_token};

/// One of the two columns, as the user named it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ColumnRef {
    /// 1-based position.
    Position(usize),
    /// A name in the header line.
    Name(String),
}

impl std::fmt::Display for ColumnRef {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ColumnRef::Position(p) => write!(f, "column {p}"),
            ColumnRef::Name(n) => write!(f, "column {n:?}"),
        }
    }
}

/// Which two columns hold an edge's ends (for a directed export, the first is the source).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ColumnChoice {
    /// The column of the first id.
    pub first: ColumnRef,
    /// The column of the second id.
    pub second: ColumnRef,
}

impl ColumnChoice {
    /// Read `A,B`: each a header name or a 1-based position (a whole number is a position).
    pub fn parse(s: &str) -> Result<Self, ParamError> {
        let parts: Vec<&str> = s.split(',').map(str::trim).collect();
        let [a, b] = parts[..] else {
            return Err(format!(
                "columns are given as two names or 1-based positions separated by a comma, such \
                 as `sender,recipient` or `2,4` (got {s:?})"
            )
            .into());
        };
        let one = |p: &str| -> Result<ColumnRef, ParamError> {
            if p.is_empty() {
                return Err(format!("an empty column in {s:?}").into());
            }
            match p.parse::<usize>() {
                Ok(0) => Err("column positions count from 1".into()),
                Ok(n) => Ok(ColumnRef::Position(n)),
                Err(_) => Ok(ColumnRef::Name(p.to_string())),
            }
        };
        let choice = ColumnChoice {
            first: one(a)?,
            second: one(b)?,
        };
        if choice.first == choice.second {
            return Err(format!("the two columns must differ (got {s:?} twice)").into());
        }
        Ok(choice)
    }

    /// Whether a header line is needed to resolve the choice.
    pub fn needs_header(&self) -> bool {
        matches!(self.first, ColumnRef::Name(_)) || matches!(self.second, ColumnRef::Name(_))
    }
}

/// How fields are separated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Delimiter {
    /// One tab between fields.
    Tab,
    /// One comma between fields, RFC 4180 quoting.
    Comma,
    /// Any run of spaces and tabs.
    Blanks,
}

impl Delimiter {
    /// Decide from a header or first data line: a tab makes it tab-separated, else a comma
    /// outside quotes makes it comma-separated, else blanks separate.
    pub(crate) fn sniff(line: &[u8]) -> Delimiter {
        if line.contains(&b'\t') {
            return Delimiter::Tab;
        }
        let mut quoted = false;
        for &c in line {
            match c {
                b'"' => quoted = !quoted,
                b',' if !quoted => return Delimiter::Comma,
                _ => {}
            }
        }
        Delimiter::Blanks
    }

    /// Its name in reports.
    pub(crate) fn name(self) -> &'static str {
        match self {
            Delimiter::Tab => "tab-separated",
            Delimiter::Comma => "comma-separated",
            Delimiter::Blanks => "blank-separated",
        }
    }
}

/// The two columns resolved to 0-based field indices, and the delimiter.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Picked {
    /// Field index of the first id.
    pub a: usize,
    /// Field index of the second id.
    pub b: usize,
    /// How fields are separated.
    pub delim: Delimiter,
}

/// Why a column choice does not fit the header.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Unresolved {
    /// The column that is not there.
    pub(crate) missing: ColumnRef,
    /// The header's fields (empty when there was no header to look in).
    pub(crate) header: Vec<String>,
}

/// Resolve `choice` against the header line (when names need one) with delimiter `delim`. A
/// name matches a header field exactly, else the one field equal to it ignoring ASCII case.
pub(crate) fn resolve(
    choice: &ColumnChoice,
    header: Option<&[u8]>,
    delim: Delimiter,
) -> Result<Picked, Unresolved> {
    let names: Vec<String> = header
        .map(|h| {
            fields(strip_cr(h), delim)
                .map(|f| {
                    let f = f.unwrap_or_default();
                    let mut out = Vec::new();
                    String::from_utf8_lossy(f.unescaped(&mut out)).into_owned()
                })
                .collect()
        })
        .unwrap_or_default();
    let find = |c: &ColumnRef| -> Result<usize, Unresolved> {
        let missing = || Unresolved {
            missing: c.clone(),
            header: names.clone(),
        };
        match c {
            ColumnRef::Position(p) => Ok(p - 1),
            ColumnRef::Name(n) => names.iter().position(|h| h == n).map_or_else(
                || {
                    let close: Vec<usize> = (0..names.len())
                        .filter(|&i| names[i].eq_ignore_ascii_case(n))
                        .collect();
                    match close[..] {
                        [i] => Ok(i),
                        _ => Err(missing()),
                    }
                },
                Ok,
            ),
        }
    };
    Ok(Picked {
        a: find(&choice.first)?,
        b: find(&choice.second)?,
        delim,
    })
}

fn strip_cr(line: &[u8]) -> &[u8] {
    line.strip_suffix(b"\r").unwrap_or(line)
}

#[inline]
fn is_blank(b: u8) -> bool {
    b == b' ' || b == b'\t'
}

fn trim(mut f: &[u8]) -> &[u8] {
    while let [first, rest @ ..] = f
        && is_blank(*first)
    {
        f = rest;
    }
    while let [rest @ .., last] = f
        && is_blank(*last)
    {
        f = rest;
    }
    f
}

/// Why a field could not be read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum FieldFault {
    /// A quote opened and not closed on the line.
    Unclosed,
    /// Something other than the delimiter after a closing quote.
    AfterQuote,
}

/// One field of a line: its bytes (inside the quotes when quoted, doubled quotes as written).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub(crate) struct Field<'a> {
    pub(crate) bytes: &'a [u8],
    pub(crate) quoted: bool,
}

impl<'a> Field<'a> {
    /// Whether a doubled quote must be undone.
    fn escaped(&self) -> bool {
        self.quoted && memchr::memchr(b'"', self.bytes).is_some()
    }

    /// The field's value: its bytes, or with doubled quotes undone into `out`.
    pub(crate) fn unescaped<'b>(&self, out: &'b mut Vec<u8>) -> &'b [u8]
    where
        'a: 'b,
    {
        if !self.escaped() {
            return self.bytes;
        }
        out.clear();
        unescape_into(self.bytes, out);
        out
    }
}

fn unescape_into(bytes: &[u8], out: &mut Vec<u8>) {
    let mut i = 0;
    while i < bytes.len() {
        out.push(bytes[i]);
        // Inside a closed quoted field every quote is doubled.
        i += if bytes[i] == b'"' { 2 } else { 1 };
    }
}

/// The fields of a line (without its line break), each trimmed of blanks and unquoted.
pub(crate) fn fields(
    line: &[u8],
    delim: Delimiter,
) -> impl Iterator<Item = Result<Field<'_>, FieldFault>> {
    let plain = |bytes| Field {
        bytes,
        quoted: false,
    };
    let mut rest = Some(line);
    std::iter::from_fn(move || {
        let line = rest?;
        match delim {
            Delimiter::Blanks => {
                let start = line.iter().position(|&c| !is_blank(c))?;
                let line = &line[start..];
                let end = line.iter().position(|&c| is_blank(c)).unwrap_or(line.len());
                rest = Some(&line[end..]);
                Some(Ok(plain(&line[..end])))
            }
            Delimiter::Tab => {
                let end = memchr::memchr(b'\t', line);
                rest = end.map(|e| &line[e + 1..]);
                Some(Ok(plain(trim(&line[..end.unwrap_or(line.len())]))))
            }
            Delimiter::Comma => {
                let lead = line.iter().take_while(|&&c| is_blank(c)).count();
                if line.get(lead) != Some(&b'"') {
                    let end = memchr::memchr(b',', line);
                    rest = end.map(|e| &line[e + 1..]);
                    return Some(Ok(plain(trim(&line[..end.unwrap_or(line.len())]))));
                }
                // A quoted field: its closing quote is one not followed by another quote.
                let body = &line[lead + 1..];
                let mut i = 0;
                let close = loop {
                    match memchr::memchr(b'"', &body[i..]) {
                        None => {
                            rest = None;
                            return Some(Err(FieldFault::Unclosed));
                        }
                        Some(q) if body.get(i + q + 1) == Some(&b'"') => i += q + 2,
                        Some(q) => break i + q,
                    }
                };
                let after = &body[close + 1..];
                let skip = after.iter().take_while(|&&c| is_blank(c)).count();
                match after.get(skip) {
                    None => rest = None,
                    Some(b',') => rest = Some(&after[skip + 1..]),
                    Some(_) => {
                        rest = None;
                        return Some(Err(FieldFault::AfterQuote));
                    }
                }
                Some(Ok(Field {
                    bytes: &body[..close],
                    quoted: true,
                }))
            }
        }
    })
}

/// Why a line does not give an edge from the chosen columns.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum PickFault {
    /// Fewer fields than the chosen columns need; carries how many there were.
    TooFew(usize),
    /// A chosen field is empty.
    Empty,
    /// A control byte inside a chosen field.
    ControlByte,
    /// A quoting error before or in a chosen field.
    Quote(FieldFault),
}

impl PickFault {
    /// The problem in words.
    pub(crate) fn problem(self, picked: &Picked) -> String {
        match self {
            PickFault::TooFew(n) => format!(
                "only {n} field{} where the chosen columns need {}",
                if n == 1 { "" } else { "s" },
                picked.a.max(picked.b) + 1
            ),
            PickFault::Empty => "an empty (or null) node id in a chosen column".into(),
            PickFault::ControlByte => "a control character inside a node id".into(),
            PickFault::Quote(FieldFault::Unclosed) => {
                "a quoted field is not closed on its line (line breaks inside quotes are not \
                 supported)"
                    .into()
            }
            PickFault::Quote(FieldFault::AfterQuote) => {
                "text after a closing quote (a quote inside a quoted field is written twice)".into()
            }
        }
    }
}

/// What a line with chosen columns must look like, for error messages.
pub(crate) const EXPECTED_PICKED: &str =
    "a line with the chosen columns, each a node id (quoted fields allowed with commas)";

/// Parse a line (without its `\n`; a trailing `\r` is allowed) by the chosen columns. Blank and
/// comment lines are as in the plain grammar; the other columns are expected, so `extra` is
/// never set. Fields after the chosen ones are not read. An id with a doubled quote is unescaped
/// into `scratch`; the others borrow `line`.
pub(crate) fn parse_picked<'a>(
    line: &'a [u8],
    picked: &Picked,
    scratch: &'a mut Vec<u8>,
) -> Result<Line<'a>, PickFault> {
    let line = strip_cr(line);
    let first = line.iter().position(|&c| !is_blank(c));
    let Some(first) = first else {
        return Ok(Line::Blank);
    };
    if matches!(line[first], b'#' | b'%') {
        return Ok(Line::Comment);
    }
    let want = picked.a.max(picked.b);
    let (mut a, mut b) = (None, None);
    let mut seen = 0;
    for (i, f) in fields(line, picked.delim).enumerate() {
        let f = f.map_err(PickFault::Quote)?;
        seen = i + 1;
        if i == picked.a {
            a = Some(f);
        }
        if i == picked.b {
            b = Some(f);
        }
        if i > want {
            break;
        }
    }
    let (Some(a), Some(b)) = (a, b) else {
        return Err(PickFault::TooFew(seen));
    };
    let (a, b): (&'a [u8], &'a [u8]) = if a.escaped() || b.escaped() {
        // Both values go to the scratch buffer, then are sliced out of it.
        scratch.clear();
        unescape_into(a.bytes, scratch);
        let split = scratch.len();
        unescape_into(b.bytes, scratch);
        let (x, y) = scratch.split_at(split);
        (
            if a.escaped() { x } else { a.bytes },
            if b.escaped() { y } else { b.bytes },
        )
    } else {
        (a.bytes, b.bytes)
    };
    let token = |f: &'a [u8]| -> Result<Token<'a>, PickFault> {
        if f.is_empty() {
            return Err(PickFault::Empty);
        }
        if f.iter().any(|&c| c < 0x20 || c == 0x7f) {
            return Err(PickFault::ControlByte);
        }
        Ok(int_token(f))
    };
    Ok(Line::Edge {
        a: token(a)?,
        b: token(b)?,
        extra: false,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pick(a: usize, b: usize, delim: Delimiter) -> Picked {
        Picked { a, b, delim }
    }

    fn parse(line: &[u8], p: &Picked) -> Result<Line<'static>, PickFault> {
        // Leaked so the tokens outlive the call; tests only.
        let line: &'static [u8] = Box::leak(line.to_vec().into_boxed_slice());
        let scratch: &'static mut Vec<u8> = Box::leak(Box::new(Vec::new()));
        parse_picked(line, p, scratch)
    }

    fn ids(line: &[u8], p: &Picked) -> (Vec<u8>, Vec<u8>) {
        match parse(line, p) {
            Ok(Line::Edge { a, b, .. }) => (a.raw.to_vec(), b.raw.to_vec()),
            other => panic!("{:?}: {other:?}", String::from_utf8_lossy(line)),
        }
    }

    #[test]
    fn choices_parse_names_and_positions() {
        let c = ColumnChoice::parse("sender, 4").unwrap();
        assert_eq!(c.first, ColumnRef::Name("sender".into()));
        assert_eq!(c.second, ColumnRef::Position(4));
        assert!(c.needs_header());
        assert!(ColumnChoice::parse("0,2").is_err());
        assert!(ColumnChoice::parse("a").is_err());
        assert!(ColumnChoice::parse("a,b,c").is_err());
        assert!(ColumnChoice::parse("a,a").is_err());
        assert!(ColumnChoice::parse(",b").is_err());
    }

    #[test]
    fn quoted_fields_follow_rfc_4180() {
        // RFC 4180 section 2, rules 5-7: quotes around fields, commas inside, doubled quotes.
        let p = pick(1, 3, Delimiter::Comma);
        let line = br#"2026-10-01,"ward 7, east","note ""x""",bed-12,3.5"#;
        assert_eq!(
            ids(line, &p),
            (b"ward 7, east".to_vec(), b"bed-12".to_vec())
        );
        let p = pick(2, 0, Delimiter::Comma);
        assert_eq!(
            ids(br#" "a" , b , "c""d" "#, &p),
            (b"c\"d".to_vec(), b"a".to_vec())
        );
        assert_eq!(
            parse(br#""open,1"#, &pick(0, 1, Delimiter::Comma)),
            Err(PickFault::Quote(FieldFault::Unclosed))
        );
        assert_eq!(
            parse(br#""a"b,1"#, &pick(0, 1, Delimiter::Comma)),
            Err(PickFault::Quote(FieldFault::AfterQuote))
        );
    }

    #[test]
    fn empty_other_fields_are_fine_but_empty_ids_are_not() {
        let p = pick(0, 3, Delimiter::Comma);
        assert_eq!(ids(b"7,,,9,\r", &p), (b"7".to_vec(), b"9".to_vec()));
        assert_eq!(parse(b"7,,,,", &p), Err(PickFault::Empty));
        assert_eq!(parse(b"7,1", &p), Err(PickFault::TooFew(2)));
        let p = pick(2, 1, Delimiter::Tab);
        assert_eq!(ids(b"x\t 12 \t13\t", &p), (b"13".to_vec(), b"12".to_vec()));
        let p = pick(1, 2, Delimiter::Blanks);
        assert_eq!(ids(b"  x   12 13 y", &p), (b"12".to_vec(), b"13".to_vec()));
        assert_eq!(parse(b"  # note", &p), Ok(Line::Comment));
        assert_eq!(parse(b" \t ", &p), Ok(Line::Blank));
    }

    #[test]
    fn ids_in_chosen_columns_are_integers_when_they_are_digits() {
        let p = pick(1, 0, Delimiter::Comma);
        match parse(b"12,\"0034\",x", &p) {
            Ok(Line::Edge { a, b, extra }) => {
                assert_eq!((a.int, b.int, extra), (Some(34), Some(12), false));
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn the_delimiter_is_sniffed_outside_quotes() {
        assert_eq!(Delimiter::sniff(b"a\tb,c"), Delimiter::Tab);
        assert_eq!(Delimiter::sniff(b"\"a,b\" c"), Delimiter::Blanks);
        assert_eq!(Delimiter::sniff(b"\"a b\",c"), Delimiter::Comma);
        assert_eq!(Delimiter::sniff(b"a b"), Delimiter::Blanks);
    }

    #[test]
    fn names_resolve_against_the_header() {
        let c = ColumnChoice::parse("Recipient,sender").unwrap();
        let h = b"when,\"sender\",recipient,size\r";
        let p = resolve(&c, Some(h), Delimiter::Comma).unwrap();
        assert_eq!((p.a, p.b), (2, 1));
        let c = ColumnChoice::parse("to,sender").unwrap();
        let e = resolve(&c, Some(h), Delimiter::Comma).unwrap_err();
        assert_eq!(e.missing, ColumnRef::Name("to".into()));
        assert_eq!(e.header, ["when", "sender", "recipient", "size"]);
    }
}

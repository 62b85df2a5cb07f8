//! A deliberately naive reader of edge lists and Matrix Market files: line by line, with ordered
//! sets and no parallelism. It exists to check the fast builder (property tests and fuzz targets
//! compare the two on the same bytes) and is far too slow for real inputs.

use std::collections::BTreeSet;

use crate::read::edgeline;

/// The graph as the reference reads it: node ids as bytes (integers in canonical decimal) and
/// edges as ordered pairs of them.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct RefGraph {
    /// Every node, as written.
    pub nodes: BTreeSet<Vec<u8>>,
    /// Every edge, as an ordered pair of ids.
    pub edges: BTreeSet<(Vec<u8>, Vec<u8>)>,
}

impl RefGraph {
    fn add(&mut self, a: Vec<u8>, b: Vec<u8>) {
        self.nodes.insert(a.clone());
        self.nodes.insert(b.clone());
        if a != b {
            self.edges.insert(if a < b { (a, b) } else { (b, a) });
        }
    }
}

/// The reference's verdict on a malformed file: the 1-based line and the byte offset of its start.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RefError {
    /// Line of the first bad line, from 1.
    pub line: u64,
    /// Its byte offset.
    pub byte: u64,
}

fn is_blank(c: u8) -> bool {
    c == b' ' || c == b'\t'
}

/// Split a data line into its first two fields, naively: strip blanks, cut at blanks or a comma.
/// Also says whether anything but blanks follows them. `None` for a malformed line.
fn fields(line: &[u8]) -> Option<(Vec<&[u8]>, bool)> {
    let mut out = Vec::new();
    let mut rest = line;
    loop {
        let start = rest.iter().position(|&c| !is_blank(c))?;
        rest = &rest[start..];
        let end = rest
            .iter()
            .position(|&c| is_blank(c) || c == b',')
            .unwrap_or(rest.len());
        if end == 0 {
            return None; // a comma where a field should start
        }
        let field = &rest[..end];
        if field.iter().any(|&c| c < 0x20 || c == 0x7f) {
            return None;
        }
        out.push(field);
        rest = &rest[end..];
        if out.len() == 2 {
            return Some((out, rest.iter().any(|&c| !is_blank(c))));
        }
        // Separator: blanks, at most one comma, blanks.
        let mut i = rest.iter().take_while(|&&c| is_blank(c)).count();
        if rest.get(i) == Some(&b',') {
            i += 1;
            i += rest[i..].iter().take_while(|&&c| is_blank(c)).count();
            if rest.get(i) == Some(&b',') {
                return None;
            }
        }
        rest = &rest[i..];
        if rest.is_empty() {
            return None;
        }
    }
}

/// Canonical decimal when the token is an unsigned integer that fits in u64.
fn as_int(t: &[u8]) -> Option<u64> {
    if t.is_empty() || !t.iter().all(u8::is_ascii_digit) {
        return None;
    }
    std::str::from_utf8(t).ok()?.parse().ok()
}

/// Lines of `data` with the byte offset where each starts (a final newline ends the last line).
fn split_lines(data: &[u8]) -> Vec<(u64, &[u8])> {
    let mut lines = Vec::new();
    let mut offset = 0u64;
    for raw in data.split(|&c| c == b'\n') {
        lines.push((offset, raw));
        offset += raw.len() as u64 + 1;
    }
    if data.ends_with(b"\n") {
        lines.pop();
    }
    lines
}

fn strip_cr(l: &[u8]) -> &[u8] {
    l.strip_suffix(b"\r").unwrap_or(l)
}

fn is_data(l: &[u8]) -> bool {
    let t: Vec<u8> = l.iter().copied().skip_while(|&c| is_blank(c)).collect();
    !(t.is_empty() || t[0] == b'#' || t[0] == b'%')
}

/// The two id fields of a data line, as written.
pub type TokenPair = (Vec<u8>, Vec<u8>);

/// The two id fields of every data line, skipping line number `skip` (1-based); or the first
/// malformed line.
pub fn edge_tokens(data: &[u8], skip: Option<u64>) -> Result<Vec<TokenPair>, RefError> {
    let mut pairs = Vec::new();
    for (i, &(byte, raw)) in split_lines(data).iter().enumerate() {
        let l = strip_cr(raw);
        if Some(i as u64 + 1) == skip || !is_data(l) {
            continue;
        }
        let (f, _) = fields(l).ok_or(RefError {
            line: i as u64 + 1,
            byte,
        })?;
        pairs.push((f[0].to_vec(), f[1].to_vec()));
    }
    Ok(pairs)
}

/// Read an edge list with the default options (header guessed, strict about malformed lines).
pub fn edge_list(data: &[u8]) -> Result<RefGraph, RefError> {
    let lines = split_lines(data);
    let data_lines: Vec<usize> = (0..lines.len())
        .filter(|&i| is_data(strip_cr(lines[i].1)))
        .take(2)
        .collect();
    // The header guess is policy, not parsing: the reference applies the same rule.
    let header = data_lines.first().copied().filter(|&i| {
        edgeline::looks_like_header(lines[i].1, data_lines.get(1).map(|&j| lines[j].1))
    });
    let pairs = edge_tokens(data, header.map(|i| i as u64 + 1))?;
    let all_int = pairs
        .iter()
        .all(|(a, b)| as_int(a).is_some() && as_int(b).is_some());
    let name = |t: &[u8]| match as_int(t) {
        Some(v) if all_int => v.to_string().into_bytes(),
        _ => t.to_vec(),
    };
    let mut g = RefGraph::default();
    for (a, b) in pairs {
        g.add(name(&a), name(&b));
    }
    Ok(g)
}

/// Read a Matrix Market coordinate file, naively. Only success or failure is compared.
pub fn matrix_market(data: &[u8]) -> Option<RefGraph> {
    let mut lines = data
        .split(|&c| c == b'\n')
        .map(|l| l.strip_suffix(b"\r").unwrap_or(l));
    let words = |l: &[u8]| -> Vec<Vec<u8>> {
        l.split(|c| c.is_ascii_whitespace())
            .filter(|w| !w.is_empty())
            .map(|w| w.to_ascii_lowercase())
            .collect()
    };
    let banner = words(lines.next()?);
    let banner: Vec<&[u8]> = banner.iter().map(Vec::as_slice).collect();
    let field_cols = match banner[..] {
        [b"%%matrixmarket", b"matrix", b"coordinate", field, sym]
            if [&b"general"[..], b"symmetric", b"skew-symmetric"].contains(&sym) =>
        {
            match field {
                b"pattern" => 2,
                b"integer" | b"real" | b"double" => 3,
                _ => return None,
            }
        }
        _ => return None,
    };
    let mut size: Option<(u64, u64)> = None;
    let mut entries = BTreeSet::new();
    let mut count = 0u64;
    for l in lines {
        if size.is_none() {
            let t = l.trim_ascii();
            if t.is_empty() || t[0] == b'%' {
                continue;
            }
            let nums: Vec<u64> = words(l)
                .iter()
                .map(|w| std::str::from_utf8(w).ok()?.parse().ok())
                .collect::<Option<_>>()?;
            match nums[..] {
                [r, c, e] if r == c => size = Some((r, e)),
                _ => return None,
            }
            continue;
        }
        let t: Vec<u8> = l.iter().copied().skip_while(|&c| is_blank(c)).collect();
        if t.is_empty() || t[0] == b'#' || t[0] == b'%' {
            continue;
        }
        let (f, extra) = fields(l)?;
        let (i, j) = (as_int(f[0])?, as_int(f[1])?);
        let n = size?.0;
        if i == 0 || j == 0 || i > n || j > n || (field_cols == 2) == extra {
            return None;
        }
        count += 1;
        entries.insert((i, j));
    }
    let (n, e) = size?;
    if count != e {
        return None;
    }
    let mut g = RefGraph::default();
    for v in 1..=n {
        g.nodes.insert(v.to_string().into_bytes());
    }
    for (i, j) in entries {
        g.add(i.to_string().into_bytes(), j.to_string().into_bytes());
    }
    Some(g)
}

/// The same view of a graph built by the fast path.
pub fn view(g: &crate::store::graph::Graph) -> RefGraph {
    let mut r = RefGraph::default();
    for u in 0..g.node_count() as u32 {
        for &v in g.csr.neighbors(u) {
            r.add(
                g.ids.label_bytes(u).into_owned(),
                g.ids.label_bytes(v).into_owned(),
            );
        }
        r.nodes.insert(g.ids.label_bytes(u).into_owned());
    }
    r
}

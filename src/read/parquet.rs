//! Parquet input (the Apache Parquet file format specification): only the two id columns are
//! read, row group by row group, each decoded on its own worker by the `parquet` crate.
//!
//! A decoded row group becomes a piece of text with one line per row, `first,second`, integers as
//! decimal and strings quoted as RFC 4180 writes them; the text builder then reads it by its
//! chosen-columns grammar (first and second field, commas). So Parquet takes the same two passes,
//! checks, counts, build on disk and reports as every other input, and line `n` of the piece is
//! row `n` of the file (a null id is an empty field: a malformed row, skipped and counted with
//! `--skip-malformed`). Only the id columns' chunks are copied out of the file; the rest is never
//! touched.

use bytes::{Buf, Bytes};
use parquet::basic::{LogicalType, Type as Physical};
use parquet::column::reader::{ColumnReader, get_column_reader};
use parquet::data_type::ByteArray;
use parquet::errors::ParquetError;
use parquet::file::metadata::{ParquetMetaData, ParquetMetaDataReader};
use parquet::file::reader::{ChunkReader, Length};
use parquet::file::serialized_reader::SerializedPageReader;
use parquet::schema::types::ColumnDescPtr;

use crate::read::columns::{ColumnChoice, ColumnRef};

/// What the file's footer says, and which two leaf columns hold the ids.
pub struct ParquetPlan {
    meta: ParquetMetaData,
    cols: [usize; 2],
    /// Columns' names and types, for the report.
    pub described: String,
}

/// Why a Parquet file cannot be read.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ParquetFault {
    /// The footer or a page is damaged (the crate's words).
    Unreadable(String),
    /// The chosen columns are not there, or not of a type that holds ids.
    Columns(String),
}

/// The file as one slice, for reading the footer.
struct Whole<'a>(&'a [u8]);

impl Length for Whole<'_> {
    fn len(&self) -> u64 {
        self.0.len() as u64
    }
}

impl<'a> ChunkReader for Whole<'a> {
    type T = &'a [u8];
    fn get_read(&self, start: u64) -> parquet::errors::Result<&'a [u8]> {
        self.0
            .get(start as usize..)
            .ok_or_else(|| ParquetError::EOF(format!("no byte {start} in the file")))
    }
    fn get_bytes(&self, start: u64, length: usize) -> parquet::errors::Result<Bytes> {
        let s = start as usize;
        self.0
            .get(s..s.saturating_add(length))
            .map(Bytes::copy_from_slice)
            .ok_or_else(|| ParquetError::EOF(format!("bytes {start}+{length} past the end")))
    }
}

/// One column chunk copied out of the file, answering reads at the file's own offsets.
struct Chunk {
    base: u64,
    bytes: Bytes,
}

impl Length for Chunk {
    fn len(&self) -> u64 {
        self.base + self.bytes.len() as u64
    }
}

impl ChunkReader for Chunk {
    type T = bytes::buf::Reader<Bytes>;
    fn get_read(&self, start: u64) -> parquet::errors::Result<Self::T> {
        Ok(self.bytes.slice(self.at(start)?..).reader())
    }
    fn get_bytes(&self, start: u64, length: usize) -> parquet::errors::Result<Bytes> {
        let s = self.at(start)?;
        let e = s.saturating_add(length);
        if e > self.bytes.len() {
            return Err(ParquetError::EOF(format!(
                "bytes {start}+{length} past the column chunk"
            )));
        }
        Ok(self.bytes.slice(s..e))
    }
}

impl Chunk {
    fn at(&self, start: u64) -> parquet::errors::Result<usize> {
        start
            .checked_sub(self.base)
            .map(|s| s as usize)
            .filter(|&s| s <= self.bytes.len())
            .ok_or_else(|| ParquetError::EOF(format!("byte {start} outside the column chunk")))
    }
}

/// Most rows reserved for up front (a damaged footer may claim any count).
const MAX_RESERVE: usize = 1 << 22;

fn unreadable(e: ParquetError) -> ParquetFault {
    ParquetFault::Unreadable(e.to_string())
}

fn type_name(c: &ColumnDescPtr) -> String {
    if c.converted_type() == parquet::basic::ConvertedType::UTF8 {
        return "string".into();
    }
    match c.logical_type_ref() {
        Some(LogicalType::String) => "string".into(),
        Some(LogicalType::Integer(t)) => {
            format!("{}int{}", if t.is_signed { "" } else { "u" }, t.bit_width)
        }
        _ => c.physical_type().to_string(),
    }
}

fn unsigned(c: &ColumnDescPtr) -> bool {
    matches!(c.logical_type_ref(), Some(LogicalType::Integer(t)) if !t.is_signed)
}

/// Read the footer and choose the id columns: `choice` by leaf name (or dotted path) or 1-based
/// position, else the first two columns.
pub fn plan(data: &[u8], choice: Option<&ColumnChoice>) -> Result<ParquetPlan, ParquetFault> {
    guarded(|| plan_unguarded(data, choice))
}

fn plan_unguarded(data: &[u8], choice: Option<&ColumnChoice>) -> Result<ParquetPlan, ParquetFault> {
    if data.len() < 12 || !data.ends_with(&crate::read::magic::PARQUET) {
        return Err(ParquetFault::Unreadable(
            "the file does not end with the Parquet footer's magic bytes: truncated?".into(),
        ));
    }
    let meta = ParquetMetaDataReader::new()
        .parse_and_finish(&Whole(data))
        .map_err(unreadable)?;
    let schema = meta.file_metadata().schema_descr();
    let leaves = schema.columns();
    let listing = || {
        leaves
            .iter()
            .enumerate()
            .map(|(i, c)| format!("{} {:?} ({})", i + 1, c.path().string(), type_name(c)))
            .collect::<Vec<_>>()
            .join(", ")
    };
    let find = |r: &ColumnRef| -> Result<usize, ParquetFault> {
        let found = match r {
            ColumnRef::Position(p) => (*p <= leaves.len()).then(|| p - 1),
            ColumnRef::Name(n) => leaves
                .iter()
                .position(|c| c.path().string() == *n || c.name() == n)
                .or_else(|| {
                    let close: Vec<usize> = (0..leaves.len())
                        .filter(|&i| leaves[i].name().eq_ignore_ascii_case(n))
                        .collect();
                    (close.len() == 1).then(|| close[0])
                }),
        };
        found.ok_or_else(|| {
            ParquetFault::Columns(format!(
                "{r} is not in the file's schema; its columns are: {}",
                listing()
            ))
        })
    };
    let cols = match choice {
        Some(c) => [find(&c.first)?, find(&c.second)?],
        None if leaves.len() >= 2 => [0, 1],
        None => {
            return Err(ParquetFault::Columns(format!(
                "the file has fewer than two columns to take ids from: {}",
                listing()
            )));
        }
    };
    for &i in &cols {
        let c = &leaves[i];
        let ok = matches!(
            c.physical_type(),
            Physical::INT32 | Physical::INT64 | Physical::BYTE_ARRAY
        );
        if !ok || c.max_rep_level() > 0 {
            return Err(ParquetFault::Columns(format!(
                "column {} {:?} is {}{}; node ids must be integers or strings, one per row",
                i + 1,
                c.path().string(),
                if c.max_rep_level() > 0 {
                    "repeated "
                } else {
                    ""
                },
                type_name(c)
            )));
        }
    }
    let described = format!(
        "columns {} {:?} ({}) and {} {:?} ({}), {} row group{}",
        cols[0] + 1,
        leaves[cols[0]].path().string(),
        type_name(&leaves[cols[0]]),
        cols[1] + 1,
        leaves[cols[1]].path().string(),
        type_name(&leaves[cols[1]]),
        meta.num_row_groups(),
        if meta.num_row_groups() == 1 { "" } else { "s" }
    );
    Ok(ParquetPlan {
        meta,
        cols,
        described,
    })
}

impl ParquetPlan {
    /// Row groups in the file.
    pub fn row_groups(&self) -> usize {
        self.meta.num_row_groups()
    }

    /// Rows in the file.
    pub fn rows(&self) -> u64 {
        self.meta.file_metadata().num_rows().max(0) as u64
    }
}

/// One id column of a row group: values (non-null only) and, when nullable, the definition
/// level of every row.
enum Values {
    Ints(Vec<i64>, bool),
    Strings(Vec<ByteArray>),
}

struct Column {
    values: Values,
    defs: Option<Vec<i16>>,
}

fn read_column(
    data: &[u8],
    plan: &ParquetPlan,
    rg: usize,
    col: usize,
) -> Result<Column, ParquetFault> {
    let group = plan.meta.row_group(rg);
    let chunk_meta = group.column(col);
    let (start, len) = chunk_meta.byte_range();
    let bytes = data
        .get(start as usize..(start + len) as usize)
        .ok_or_else(|| {
            ParquetFault::Unreadable(format!(
                "row group {rg}'s column chunk at byte {start} runs past the end of the file \
                 (truncated?)"
            ))
        })?;
    let chunk = std::sync::Arc::new(Chunk {
        base: start,
        bytes: Bytes::copy_from_slice(bytes),
    });
    let rows = group.num_rows().max(0) as usize;
    let pages = SerializedPageReader::new(chunk, chunk_meta, rows, None).map_err(unreadable)?;
    let descr = plan.meta.file_metadata().schema_descr().column(col);
    let nullable = descr.max_def_level() > 0;
    // The row count comes from the file: reserve no more than a bounded amount up front.
    let room = rows.min(MAX_RESERVE);
    let mut defs = nullable.then(|| Vec::with_capacity(room));
    let is_unsigned = unsigned(&descr);
    let values = match get_column_reader(descr, Box::new(pages)) {
        ColumnReader::Int32ColumnReader(mut r) => {
            let mut v: Vec<i32> = Vec::with_capacity(room);
            r.read_records(rows, defs.as_mut(), None, &mut v)
                .map_err(unreadable)?;
            let wide = if is_unsigned {
                v.iter().map(|&x| x as u32 as i64).collect()
            } else {
                v.iter().map(|&x| x as i64).collect()
            };
            Values::Ints(wide, false)
        }
        ColumnReader::Int64ColumnReader(mut r) => {
            let mut v: Vec<i64> = Vec::with_capacity(room);
            r.read_records(rows, defs.as_mut(), None, &mut v)
                .map_err(unreadable)?;
            Values::Ints(v, is_unsigned)
        }
        ColumnReader::ByteArrayColumnReader(mut r) => {
            let mut v: Vec<ByteArray> = Vec::with_capacity(room);
            r.read_records(rows, defs.as_mut(), None, &mut v)
                .map_err(unreadable)?;
            Values::Strings(v)
        }
        _ => unreachable!("plan() admits only INT32, INT64 and BYTE_ARRAY id columns"),
    };
    let held = match (&values, &defs) {
        (_, Some(d)) => d.len(),
        (Values::Ints(v, _), None) => v.len(),
        (Values::Strings(v), None) => v.len(),
    };
    if held != rows {
        return Err(ParquetFault::Unreadable(format!(
            "row group {rg} claims {rows} rows but column {} holds {held}",
            col + 1
        )));
    }
    Ok(Column { values, defs })
}

impl Column {
    /// Write row `row`'s id (its value index advanced past non-null values) to `out`; nothing
    /// for a null.
    #[inline]
    fn write(&self, row: usize, next: &mut usize, out: &mut Vec<u8>) {
        if let Some(d) = &self.defs
            && d[row] == 0
        {
            return;
        }
        let i = *next;
        *next += 1;
        match &self.values {
            Values::Ints(v, unsigned) => {
                let mut buf = itoa::Buffer::new();
                out.extend_from_slice(
                    if *unsigned {
                        buf.format(v[i] as u64)
                    } else {
                        buf.format(v[i])
                    }
                    .as_bytes(),
                );
            }
            Values::Strings(v) => {
                let s = v[i].data();
                out.push(b'"');
                for &c in s {
                    if c == b'"' {
                        out.push(b'"');
                    }
                    out.push(c);
                }
                out.push(b'"');
            }
        }
    }
}

thread_local! {
    /// Set while this thread runs the Parquet reader: its panics are reported as errors.
    static GUARDED: std::cell::Cell<bool> = const { std::cell::Cell::new(false) };
}

/// Run the Parquet reader on possibly damaged bytes. The reader can panic on some damaged pages
/// (found by `tests/parquet.rs`); such a panic becomes an `Unreadable` fault, and the panic
/// message is kept off standard error (other panics still print through the previous hook).
fn guarded<T>(f: impl FnOnce() -> Result<T, ParquetFault>) -> Result<T, ParquetFault> {
    static HOOK: std::sync::Once = std::sync::Once::new();
    HOOK.call_once(|| {
        let previous = std::panic::take_hook();
        std::panic::set_hook(Box::new(move |info| {
            if !GUARDED.with(|g| g.get()) {
                previous(info);
            }
        }));
    });
    GUARDED.with(|g| g.set(true));
    let result = std::panic::catch_unwind(std::panic::AssertUnwindSafe(f));
    GUARDED.with(|g| g.set(false));
    result.unwrap_or_else(|payload| {
        let why = payload
            .downcast_ref::<String>()
            .cloned()
            .or_else(|| payload.downcast_ref::<&str>().map(|s| s.to_string()))
            .unwrap_or_else(|| "no message".into());
        Err(ParquetFault::Unreadable(format!(
            "damaged data stopped the Parquet reader: {why}"
        )))
    })
}

/// Decode row group `rg`'s two id columns into lines `first,second\n`, one per row.
pub fn render_row_group(
    data: &[u8],
    plan: &ParquetPlan,
    rg: usize,
) -> Result<Vec<u8>, ParquetFault> {
    guarded(|| render_unguarded(data, plan, rg))
}

fn render_unguarded(data: &[u8], plan: &ParquetPlan, rg: usize) -> Result<Vec<u8>, ParquetFault> {
    // The crate's page errors do not say where: name the row group and its column.
    let place = |col: usize, f: ParquetFault| match f {
        ParquetFault::Unreadable(p) if !p.starts_with("row group") => {
            ParquetFault::Unreadable(format!(
                "row group {rg} (of {}), column {}: {p}",
                plan.row_groups(),
                col + 1
            ))
        }
        other => other,
    };
    let a = read_column(data, plan, rg, plan.cols[0]).map_err(|f| place(plan.cols[0], f))?;
    let b = read_column(data, plan, rg, plan.cols[1]).map_err(|f| place(plan.cols[1], f))?;
    let rows = plan.meta.row_group(rg).num_rows().max(0) as usize;
    let mut out = Vec::with_capacity(rows.min(MAX_RESERVE) * 16);
    let (mut ia, mut ib) = (0, 0);
    for row in 0..rows {
        a.write(row, &mut ia, &mut out);
        out.push(b',');
        b.write(row, &mut ib, &mut out);
        out.push(b'\n');
    }
    Ok(out)
}

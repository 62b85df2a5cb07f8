//! Typed errors. Every input error carries where it happened (file, line, byte offset) so a user
//! can open the file at the right place; the CLI maps the variants to exit codes.

use std::path::PathBuf;

/// Where in an input something went wrong. `line` is 1-based; `byte` is the 0-based offset of the
/// start of that line in the (decompressed) text.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Position {
    /// Line of the text, from 1.
    pub line: u64,
    /// Byte offset from the start of the text.
    pub byte: u64,
    /// The offset counts decompressed bytes.
    pub decoded: bool,
    /// `line` counts the rows of a Parquet file (the byte offset is then not shown).
    pub rows: bool,
}

impl std::fmt::Display for Position {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.rows {
            return write!(f, "row {} of the file", self.line);
        }
        write!(f, "line {}, byte offset {}", self.line, self.byte)?;
        if self.decoded {
            f.write_str(" of the decompressed text")?;
        }
        Ok(())
    }
}

/// The broad class of a failure, used by the CLI to choose an exit code.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ErrorClass {
    /// The input is malformed or violates a limit.
    BadInput,
    /// Reading or writing failed at the operating-system level.
    Io,
    /// The work would exceed a resource budget.
    Budget,
    /// The request itself is impossible (model parameters out of range).
    Usage,
}

/// Everything that can go wrong, each with the file and, for bad input, the line and byte
/// offset.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// A file could not be opened, read, mapped or written.
    #[error("{path}: cannot {action}: {source}")]
    Io {
        /// The file concerned.
        path: PathBuf,
        /// What was being done ("open", "read", …).
        action: &'static str,
        /// The operating system's error.
        #[source]
        source: std::io::Error,
    },

    /// A line does not follow the edge-list grammar.
    #[error("{path}: {pos}: {problem}; expected {expected} (line starts: {excerpt:?})")]
    Malformed {
        /// The input file.
        path: PathBuf,
        /// Where the line is.
        pos: Position,
        /// What is wrong with it.
        problem: String,
        /// What the grammar expects.
        expected: &'static str,
        /// The line's start, as written.
        excerpt: String,
    },

    /// A line longer than `--max-line`.
    #[error("{path}: {pos}: line is longer than the limit of {limit} bytes")]
    LineTooLong {
        /// The input file.
        path: PathBuf,
        /// Where the line starts.
        pos: Position,
        /// The limit in bytes.
        limit: usize,
    },

    /// The input holds no edges and no nodes.
    #[error("{path}: the input holds no edges and no nodes ({detail})")]
    Empty {
        /// The input file.
        path: PathBuf,
        /// What was found instead of edges.
        detail: String,
    },

    /// A compressed stream is damaged or cut short.
    #[error("{path}: {format} stream is {problem} (compressed byte offset {offset})")]
    Compressed {
        /// The input file.
        path: PathBuf,
        /// The compression ("zstd", "gzip").
        format: &'static str,
        /// What the decoder said.
        problem: String,
        /// Compressed byte offset where it failed.
        offset: u64,
    },

    #[error(
        "{path}: the input is {format}-compressed, which plumb does not read; decompress it, or \
         recompress it with zstd or gzip"
    )]
    /// A compression plumb recognises but does not read.
    Unsupported {
        /// The input file.
        path: PathBuf,
        /// The compression, by name.
        format: &'static str,
    },

    /// The input is neither text nor a format plumb knows by its magic bytes.
    #[error(
        "{path}: the input looks binary and is not a compression or format plumb knows (first \
         bytes: {first_bytes}); expected an edge list or Matrix Market text, plain, zstd or \
         gzip, or a plumb store file"
    )]
    Binary {
        /// The input file.
        path: PathBuf,
        /// Its first bytes in hex.
        first_bytes: String,
    },

    /// A Matrix Market header or entry is wrong.
    #[error("{path}: {pos}: Matrix Market: {problem}")]
    MatrixMarket {
        /// The input file.
        path: PathBuf,
        /// Where.
        pos: Position,
        /// What is wrong.
        problem: String,
    },

    /// A Parquet file that cannot be read: a damaged footer or page, or id columns that are
    /// missing or of the wrong type.
    #[error("{path}: Parquet: {problem}")]
    Parquet {
        /// The input file.
        path: PathBuf,
        /// What is wrong, in words (a missing column lists the file's columns).
        problem: String,
    },

    /// The chosen id columns do not fit the file (a name not in its header, no header).
    #[error("{path}: {problem}")]
    Columns {
        /// The input file.
        path: PathBuf,
        /// What is wrong, listing the header's columns when a name is missing.
        problem: String,
    },

    /// More distinct nodes than 32-bit indices hold (or `--max-nodes`).
    #[error("{path}: more than {limit} distinct nodes (plumb indexes nodes with 32-bit integers)")]
    TooManyNodes {
        /// The input file.
        path: PathBuf,
        /// The most nodes allowed.
        limit: u64,
    },

    /// A node's degree does not fit 32 bits.
    #[error("{path}: node {node} has more than {limit} edge lines; per-node degrees are 32-bit")]
    DegreeTooLarge {
        /// The input file.
        path: PathBuf,
        /// The node, as written.
        node: String,
        /// The limit.
        limit: u64,
    },

    #[error(
        "{path}: {what} needs about {needed_mib} MiB, over the memory budget of {budget_mib} MiB \
         (raise it with --memory-budget if the machine has the memory)"
    )]
    /// The build would exceed the memory budget.
    OverBudget {
        /// The input file.
        path: PathBuf,
        /// What would need the memory.
        what: String,
        /// Memory needed, in MiB.
        needed_mib: u64,
        /// The budget, in MiB.
        budget_mib: u64,
    },

    /// The build went to disk (over the memory budget) and the scratch folder's disk lacks
    /// the room for its sorted runs and the store.
    #[error(
        "{path}: building on disk needs about {needed_mib} MiB of scratch space in {dir}, but \
         {available_mib} MiB {when} (point --scratch at a larger disk, or raise --memory-budget \
         if the machine has the memory)"
    )]
    ScratchFull {
        /// The input file.
        path: PathBuf,
        /// The scratch folder.
        dir: PathBuf,
        /// Space needed, in MiB.
        needed_mib: u64,
        /// Space usable there, in MiB (free space less what `--scratch-keep-free` keeps).
        available_mib: u64,
        /// "are free" before starting, or "were left when the disk filled up" mid-run.
        when: &'static str,
    },

    /// A store file that fails its checks.
    #[error("{path}: not a usable store file: {problem}")]
    Store {
        /// The store file.
        path: PathBuf,
        /// What is wrong, in words.
        problem: String,
    },

    /// An output (or history) file that cannot be used.
    #[error("{path}: {problem}")]
    Output {
        /// The file concerned.
        path: PathBuf,
        /// What is wrong, in words.
        problem: String,
    },

    /// A file that should hold a profile report does not.
    #[error("{path}: not a plumb profile report: {problem}")]
    Report {
        /// The file that should hold a report.
        path: PathBuf,
        /// What is wrong, in words.
        problem: String,
    },

    /// Another process of a distributed run failed; its message as it gave it, and its class.
    #[error("{problem}")]
    Remote {
        /// What the other process reported, naming the file and line where it has them.
        problem: String,
        /// The class of the other process's failure.
        class: ErrorClass,
    },

    /// An option or parameter outside what it allows (usage error).
    #[error("{problem}")]
    Parameters {
        /// What is wrong, naming the option or parameter.
        problem: String,
    },
}

impl Error {
    /// The error's class, which the command line maps to an exit code.
    pub fn class(&self) -> ErrorClass {
        match self {
            Error::Io { .. } => ErrorClass::Io,
            Error::OverBudget { .. } | Error::ScratchFull { .. } => ErrorClass::Budget,
            Error::Parameters { .. } => ErrorClass::Usage,
            Error::Remote { class, .. } => *class,
            _ => ErrorClass::BadInput,
        }
    }

    /// Where in the input the error is, for errors placed at a line or row.
    pub fn position(&self) -> Option<&Position> {
        match self {
            Error::Malformed { pos, .. }
            | Error::LineTooLong { pos, .. }
            | Error::MatrixMarket { pos, .. } => Some(pos),
            _ => None,
        }
    }

    /// The file the error concerns, when there is one.
    pub fn path(&self) -> Option<&std::path::Path> {
        match self {
            Error::Io { path, .. }
            | Error::Malformed { path, .. }
            | Error::LineTooLong { path, .. }
            | Error::Empty { path, .. }
            | Error::Compressed { path, .. }
            | Error::Unsupported { path, .. }
            | Error::Binary { path, .. }
            | Error::MatrixMarket { path, .. }
            | Error::Parquet { path, .. }
            | Error::Columns { path, .. }
            | Error::TooManyNodes { path, .. }
            | Error::DegreeTooLarge { path, .. }
            | Error::OverBudget { path, .. }
            | Error::ScratchFull { path, .. }
            | Error::Store { path, .. }
            | Error::Output { path, .. }
            | Error::Report { path, .. } => Some(path),
            Error::Parameters { .. } | Error::Remote { .. } => None,
        }
    }

    pub(crate) fn io(
        path: impl Into<PathBuf>,
        action: &'static str,
        source: std::io::Error,
    ) -> Self {
        Error::Io {
            path: path.into(),
            action,
            source,
        }
    }
}

/// Results of plumb's fallible operations.
pub type Result<T, E = Error> = std::result::Result<T, E>;

/// A parameter outside what its model or option allows: the problem in words, naming the
/// parameter and the value given. Reported as a usage error (exit 2) by the command line.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{problem}")]
pub struct ParamError {
    /// What is wrong, e.g. "the probability p must lie in [0, 1] (got 1.5)".
    pub problem: String,
}

impl From<String> for ParamError {
    fn from(problem: String) -> Self {
        ParamError { problem }
    }
}

impl From<&str> for ParamError {
    fn from(problem: &str) -> Self {
        ParamError {
            problem: problem.to_string(),
        }
    }
}

impl From<ParamError> for Error {
    fn from(e: ParamError) -> Self {
        Error::Parameters { problem: e.problem }
    }
}

/// Shorten a line for an error message without splitting a UTF-8 character.
pub(crate) fn excerpt(line: &[u8]) -> String {
    const MAX: usize = 60;
    let line = line.strip_suffix(b"\r").unwrap_or(line);
    if line.len() <= MAX {
        return String::from_utf8_lossy(line).into_owned();
    }
    let mut s = String::from_utf8_lossy(&line[..MAX]).into_owned();
    // A cut through a multi-byte character shows as U+FFFD; drop it rather than mislead.
    while s.ends_with('\u{FFFD}') {
        s.pop();
    }
    s.push('…');
    s
}

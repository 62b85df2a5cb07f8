//! Progress reporting without printing: the library calls these hooks, the CLI draws bars.

/// Receives progress from long-running work. All methods default to doing nothing.
pub trait Progress: Sync {
    /// A new stage starts; `total` is its size in `unit`s when known.
    fn stage(&self, _name: &str, _total: Option<u64>, _unit: Unit) {}
    /// `done` more units of the current stage are finished (may be called from any thread).
    fn advance(&self, _done: u64) {}
    /// The current stage is finished.
    fn finish(&self) {}
}

/// What a stage's total counts.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Unit {
    /// Bytes of input.
    Bytes,
    /// Items of work.
    Items,
}

/// Reports nothing.
pub struct Quiet;

impl Progress for Quiet {}

//! Monitoring: history directories of reports, comparisons between two reports or graphs, the
//! `track` workflow and the trend page, and comparisons as text (`changes`, which reads this
//! folder's types, so it lives here rather than in `output`). Uses `profile` and `output`.

pub mod changes;
pub mod compare;
pub mod drift;
pub mod history;
pub mod track;
pub mod trend;

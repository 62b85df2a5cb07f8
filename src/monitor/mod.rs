//! Monitoring: history directories of reports, comparisons between two reports or graphs, the
//! `track` workflow and the trend page. Uses `profile` and `output`.

pub mod compare;
pub mod drift;
pub mod history;
pub mod track;
pub mod trend;

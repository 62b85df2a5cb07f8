//! Wall time of each profiling stage, told to the progress display as it starts and ends.

use std::time::Instant;

use crate::progress::{Progress, Unit};
use crate::store::intake::{Stage, StageName};

pub(crate) struct Clock<'a> {
    at: Instant,
    pub(crate) stages: Vec<Stage>,
    pub(crate) progress: &'a dyn Progress,
}

impl<'a> Clock<'a> {
    pub(crate) fn new(progress: &'a dyn Progress) -> Self {
        Clock {
            at: Instant::now(),
            stages: Vec::new(),
            progress,
        }
    }

    pub(crate) fn start(&mut self, name: StageName) {
        self.progress.stage(name.label(), None, Unit::Items);
        self.at = Instant::now();
    }

    pub(crate) fn done(&mut self, name: StageName) {
        self.stages.push(Stage {
            name,
            seconds: self.at.elapsed().as_secs_f64(),
        });
        self.progress.finish();
    }

    /// Seconds spent so far on stages that satisfy `which`.
    pub(crate) fn seconds_of(&self, which: impl Fn(StageName) -> bool) -> f64 {
        self.stages
            .iter()
            .filter(|s| which(s.name))
            .map(|s| s.seconds)
            .sum()
    }
}

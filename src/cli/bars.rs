//! Progress bars on stderr, drawn only when stderr is a terminal.

use std::io::IsTerminal;
use std::sync::Mutex;

use indicatif::{ProgressBar, ProgressStyle};
use plumb::progress::{Progress, Unit};

pub struct Bars {
    on: bool,
    bar: Mutex<Option<ProgressBar>>,
}

impl Bars {
    pub fn new(quiet: bool) -> Self {
        Bars {
            on: !quiet && std::io::stderr().is_terminal(),
            bar: Mutex::new(None),
        }
    }
}

impl Progress for Bars {
    fn stage(&self, name: &str, total: Option<u64>, unit: Unit) {
        if !self.on {
            return;
        }
        let bar = match total {
            Some(t) => ProgressBar::new(t),
            None => ProgressBar::new_spinner(),
        };
        let template = match (total, unit) {
            (Some(_), Unit::Bytes) => {
                "{msg:>16} [{bar:32}] {bytes}/{total_bytes} {binary_bytes_per_sec} eta {eta}"
            }
            (Some(_), Unit::Items) => "{msg:>16} [{bar:32}] {pos}/{len} eta {eta}",
            (None, Unit::Bytes) => "{msg:>16} {spinner} {bytes} {binary_bytes_per_sec}",
            (None, Unit::Items) => "{msg:>16} {spinner} {elapsed}",
        };
        if let Ok(style) = ProgressStyle::with_template(template) {
            bar.set_style(style.progress_chars("=> "));
        }
        bar.set_message(name.to_string());
        bar.enable_steady_tick(std::time::Duration::from_millis(120));
        if let Ok(mut slot) = self.bar.lock()
            && let Some(old) = slot.replace(bar)
        {
            old.finish_and_clear();
        }
    }

    fn advance(&self, done: u64) {
        if let Ok(slot) = self.bar.lock()
            && let Some(b) = slot.as_ref()
        {
            b.inc(done);
        }
    }

    fn finish(&self) {
        if let Ok(mut slot) = self.bar.lock()
            && let Some(b) = slot.take()
        {
            b.finish_and_clear();
        }
    }
}

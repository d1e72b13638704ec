//! The progress bar: the command line's receiver of the library's progress
//! reports, drawn on stderr only when it is a terminal.

use causeway::progress::{Progress, Reporter};
use std::io::IsTerminal;
use std::sync::{Arc, Mutex};

/// A bar on stderr, made when a task starts.
struct Bar(Mutex<Option<indicatif::ProgressBar>>);

impl Progress for Bar {
    fn start(&self, task: &str, total: u64) {
        let pb =
            indicatif::ProgressBar::with_draw_target(Some(total), indicatif::ProgressDrawTarget::stderr());
        if let Ok(style) = indicatif::ProgressStyle::with_template(&format!(
            "{task} {{bar:30}} {{pos}}/{{len}}, {{per_sec}}, {{eta}} left"
        )) {
            pb.set_style(style);
        }
        if let Ok(mut slot) = self.0.lock() {
            *slot = Some(pb);
        }
    }

    fn advance(&self, n: u64) {
        if let Ok(slot) = self.0.lock()
            && let Some(pb) = slot.as_ref()
        {
            pb.inc(n);
        }
    }

    fn finish(&self) {
        if let Ok(mut slot) = self.0.lock()
            && let Some(pb) = slot.take()
        {
            pb.finish_and_clear();
        }
    }
}

/// A reporter that draws a bar on stderr, or reports to no one when `quiet`
/// is set or stderr is not a terminal.
pub fn reporter(quiet: bool) -> Reporter {
    if quiet || !std::io::stderr().is_terminal() {
        Reporter::none()
    } else {
        Reporter::to(Arc::new(Bar(Mutex::new(None))))
    }
}

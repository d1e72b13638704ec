//! Progress of long work, reported through a callback the caller supplies.
//! The library never draws anything itself: the command line turns these
//! calls into a bar on a terminal; other front ends may ignore them.

use std::fmt;
use std::sync::Arc;

/// Receives progress: `start` once with the task's name and number of
/// steps, `advance` after each step (from any thread, in any order), then
/// `finish`.
pub trait Progress: Send + Sync {
    /// The task begins; it has `total` steps.
    fn start(&self, task: &str, total: u64);
    /// `n` more steps are done.
    fn advance(&self, n: u64);
    /// The task is over (done or stopped by an error).
    fn finish(&self);
}

/// An optional progress receiver, cheap to clone; the default reports to
/// no one.
#[derive(Clone, Default)]
pub struct Reporter(Option<Arc<dyn Progress>>);

impl Reporter {
    /// Reports to `p`.
    pub fn to(p: Arc<dyn Progress>) -> Self {
        Reporter(Some(p))
    }

    /// Reports to no one.
    pub fn none() -> Self {
        Reporter(None)
    }

    /// Starts a task of `total` steps.
    pub fn start(&self, task: &str, total: u64) {
        if let Some(p) = &self.0 {
            p.start(task, total);
        }
    }

    /// `n` more steps are done.
    pub fn advance(&self, n: u64) {
        if let Some(p) = &self.0 {
            p.advance(n);
        }
    }

    /// The task is over.
    pub fn finish(&self) {
        if let Some(p) = &self.0 {
            p.finish();
        }
    }
}

impl fmt::Debug for Reporter {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(if self.0.is_some() {
            "Reporter(to a receiver)"
        } else {
            "Reporter(none)"
        })
    }
}

/// Two reporters are equal when both report to no one or to the same
/// receiver.
impl PartialEq for Reporter {
    fn eq(&self, other: &Self) -> bool {
        match (&self.0, &other.0) {
            (None, None) => true,
            (Some(a), Some(b)) => Arc::ptr_eq(a, b),
            _ => false,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::atomic::{AtomicU64, Ordering};

    #[derive(Default)]
    struct Count {
        total: AtomicU64,
        done: AtomicU64,
        finished: AtomicU64,
    }

    impl Progress for Count {
        fn start(&self, _task: &str, total: u64) {
            self.total.store(total, Ordering::SeqCst);
        }
        fn advance(&self, n: u64) {
            self.done.fetch_add(n, Ordering::SeqCst);
        }
        fn finish(&self) {
            self.finished.fetch_add(1, Ordering::SeqCst);
        }
    }

    #[test]
    fn reports_reach_the_receiver_and_none_is_silent() {
        let c = Arc::new(Count::default());
        let r = Reporter::to(c.clone());
        r.start("work", 3);
        (0..3).for_each(|_| r.advance(1));
        r.finish();
        assert_eq!(c.total.load(Ordering::SeqCst), 3);
        assert_eq!(c.done.load(Ordering::SeqCst), 3);
        assert_eq!(c.finished.load(Ordering::SeqCst), 1);
        assert_eq!(r.clone(), r);
        assert_ne!(r, Reporter::none());
        Reporter::none().advance(1);
    }
}

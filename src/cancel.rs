//! One cancellation token for long work: the command line sets it on Ctrl-C,
//! bindings on an interrupt from their host, tests through a deterministic hook.
//!
//! The fitting objective polls it before every evaluation; once it is set every
//! evaluation fails with [`crate::Error::Cancelled`], the optimisers wind down
//! within a few cheap steps and `fit` returns that error. Nothing is written by a
//! cancelled fit (writers only run on a finished result), and a batch records no
//! row for a cancelled fit, so a resumed batch refits it.

use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::Arc;

/// A shared flag: clones observe the same state. The default never cancels
/// unless [`Cancel::cancel`] is called on it or a clone.
#[derive(Debug, Clone, Default)]
pub struct Cancel {
    flag: Arc<AtomicBool>,
    /// Test hook: polls left before the token cancels itself (None: never).
    countdown: Option<Arc<AtomicU64>>,
}

impl Cancel {
    /// A token that is not cancelled.
    pub fn new() -> Self {
        Self::default()
    }

    /// A token that cancels itself at its `polls`-th poll (fault injection in
    /// tests: deterministic, unlike a timer).
    pub fn after(polls: u64) -> Self {
        Cancel {
            flag: Arc::default(),
            countdown: Some(Arc::new(AtomicU64::new(polls))),
        }
    }

    /// Ask the work to stop.
    pub fn cancel(&self) {
        self.flag.store(true, Ordering::SeqCst);
    }

    /// Has the work been asked to stop? Counts one poll for [`Cancel::after`].
    pub fn is_cancelled(&self) -> bool {
        if let Some(c) = &self.countdown {
            let before = c
                .fetch_update(Ordering::SeqCst, Ordering::SeqCst, |n| n.checked_sub(1))
                .unwrap_or(0);
            if before <= 1 {
                self.cancel();
            }
        }
        self.flag.load(Ordering::SeqCst)
    }

    /// Whether the token is set, without counting a poll.
    pub fn is_set(&self) -> bool {
        self.flag.load(Ordering::SeqCst)
    }

    /// `Err(Error::Cancelled)` once cancelled.
    pub fn check(&self) -> crate::Result<()> {
        if self.is_cancelled() {
            Err(crate::Error::Cancelled)
        } else {
            Ok(())
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn clones_share_the_flag_and_the_hook_counts_polls() {
        let a = Cancel::new();
        let b = a.clone();
        assert!(!b.is_cancelled());
        a.cancel();
        assert!(b.is_cancelled());
        let t = Cancel::after(3);
        assert!(!t.is_cancelled());
        assert!(!t.is_cancelled());
        assert!(t.is_cancelled());
        assert!(t.clone().is_cancelled());
    }
}

//! Resource caps checked before work starts.
//!
//! One process-wide working-memory budget, `--max-memory <MB>` on the command line
//! (default [`DEFAULT_MAX_MEMORY_MB`] = 4,096 MB; the development machine has
//! 24 GiB, so the default leaves room for other work and for several processes).
//! Work whose estimated memory exceeds the budget is refused up front with
//! [`crate::Error::Limit`] (exit code 5) and a message giving the estimate:
//! * regression templates: the base draws (draws × design columns, see
//!   `templates::regression` `working_bytes`);
//! * batch tables: at most [`MAX_BATCH_ROWS`] rows at the default budget, scaled
//!   in proportion when the budget is raised (each row holds a copy of the base
//!   file's parsed table until it runs).
//!
//! The budget is a setting of the process (like the rayon thread count), not of a
//! belief file: the same file gives the same numbers whatever the budget.

use std::sync::atomic::{AtomicU64, Ordering};

/// Default working-memory budget, MB (10⁶ bytes).
pub const DEFAULT_MAX_MEMORY_MB: u64 = 4_096;

/// Batch rows allowed at the default budget.
pub const MAX_BATCH_ROWS: usize = 100_000;

static MAX_MEMORY_MB: AtomicU64 = AtomicU64::new(DEFAULT_MAX_MEMORY_MB);

/// Set the working-memory budget in MB (at least 1).
pub fn set_max_memory_mb(mb: u64) {
    MAX_MEMORY_MB.store(mb.max(1), Ordering::Relaxed);
}

/// The working-memory budget in MB.
pub fn max_memory_mb() -> u64 {
    MAX_MEMORY_MB.load(Ordering::Relaxed)
}

/// The working-memory budget in bytes.
pub fn max_memory_bytes() -> u64 {
    max_memory_mb().saturating_mul(1_000_000)
}

/// Rows a batch table may have under the current budget.
pub fn max_batch_rows() -> usize {
    let scaled =
        (MAX_BATCH_ROWS as u128 * max_memory_mb() as u128 / DEFAULT_MAX_MEMORY_MB as u128).max(1);
    usize::try_from(scaled).unwrap_or(usize::MAX)
}

/// Megabytes, rounded up, for messages.
pub fn mb(bytes: u64) -> u64 {
    bytes.div_ceil(1_000_000)
}

/// The hint every memory-limit message ends with.
pub fn hint() -> String {
    format!(
        "the limit is {} MB (default {DEFAULT_MAX_MEMORY_MB} MB); raise it deliberately with \
         --max-memory MB if the machine has the memory",
        max_memory_mb()
    )
}

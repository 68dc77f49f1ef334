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
//! The budget is passed as a value (`spec::Overrides::max_memory_mb`), not kept
//! in a global; it is not part of a belief file: the same file gives the same
//! numbers whatever the budget.

/// Default working-memory budget, MB (10⁶ bytes).
pub const DEFAULT_MAX_MEMORY_MB: u64 = 4_096;

/// Batch rows allowed at the default budget.
pub const MAX_BATCH_ROWS: usize = 100_000;

/// The budget in MB: the one given (at least 1), or the default.
pub fn budget_mb(given: Option<u64>) -> u64 {
    given.map_or(DEFAULT_MAX_MEMORY_MB, |mb| mb.max(1))
}

/// A budget of `mb` MB in bytes.
pub fn bytes(mb: u64) -> u64 {
    mb.saturating_mul(1_000_000)
}

/// Rows a batch table may have under a budget of `mb` MB.
pub fn max_batch_rows(mb: u64) -> usize {
    let scaled = (MAX_BATCH_ROWS as u128 * mb as u128 / DEFAULT_MAX_MEMORY_MB as u128).max(1);
    usize::try_from(scaled).unwrap_or(usize::MAX)
}

/// Megabytes, rounded up, for messages.
pub fn mb(bytes: u64) -> u64 {
    bytes.div_ceil(1_000_000)
}

/// The hint every memory-limit message ends with, for a budget of `mb` MB.
pub fn hint(mb: u64) -> String {
    format!(
        "the limit is {mb} MB (default {DEFAULT_MAX_MEMORY_MB} MB); raise it deliberately with \
         --max-memory MB if the machine has the memory"
    )
}

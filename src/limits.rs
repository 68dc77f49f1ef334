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
//! * files read whole: at most [`TEXT_BYTES`] for belief files and fit.json,
//!   [`TABLE_BYTES`] for CSV tables (history, batch tables, draws.csv), checked
//!   while reading ([`read_capped`]), so that a device or a runaway file cannot
//!   grow without bound.
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

/// Beliefs in one file: each is tabulated (about 8 ms for a beta belief) and
/// matched on every evaluation, so `check` of a full file stays within seconds.
pub const MAX_BELIEFS: usize = 500;

/// Experts in one pooled belief.
pub const MAX_EXPERTS: usize = 100;

/// Largest belief file, spec or fit.json read (bytes): a belief file of this
/// size already holds tens of thousands of beliefs.
pub const TEXT_BYTES: u64 = 16_000_000;

/// Largest CSV table read whole (bytes): history data, batch tables, draws.csv.
pub const TABLE_BYTES: u64 = 1_000_000_000;

/// Read at most `cap` bytes of `path`; a longer file (or a device that never
/// ends) is refused with [`crate::Error::Limit`] naming the file, `what` it is
/// and the cap, after reading no more than `cap + 1` bytes.
pub fn read_capped(path: &std::path::Path, cap: u64, what: &str) -> crate::Result<Vec<u8>> {
    use std::io::Read;
    let err = |e| crate::Error::io(path, e);
    let file = std::fs::File::open(path).map_err(err)?;
    let too_big = || {
        crate::Error::Limit(format!(
            "{}: the {what} is larger than {} MB, the most priorsmith reads",
            path.display(),
            mb(cap)
        ))
    };
    if let Ok(m) = file.metadata() {
        if m.is_file() && m.len() > cap {
            return Err(too_big());
        }
    }
    let mut buf = Vec::new();
    file.take(cap.saturating_add(1))
        .read_to_end(&mut buf)
        .map_err(err)?;
    if buf.len() as u64 > cap {
        return Err(too_big());
    }
    Ok(buf)
}

/// [`read_capped`] as UTF-8 text; bytes that are not UTF-8 are refused with
/// the line and the byte offset of the first one.
pub fn read_text(path: &std::path::Path, cap: u64, what: &str) -> crate::Result<String> {
    let buf = read_capped(path, cap, what)?;
    String::from_utf8(buf).map_err(|e| {
        let at = e.utf8_error().valid_up_to();
        let bytes = e.as_bytes();
        let line = 1 + bytes[..at].iter().filter(|b| **b == b'\n').count();
        crate::Error::input(
            crate::error::Location {
                file: Some(path.to_path_buf()),
                line: Some(line),
                key: None,
            },
            format!(
                "the {what} is not UTF-8 text: byte {at} (0x{:02x}) on line {line} is not valid UTF-8",
                bytes[at]
            ),
        )
        .with_hint("save the file as UTF-8 (plain text)")
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_file_over_the_cap_is_refused_and_an_endless_device_stops_at_it() {
        let d = tempfile::tempdir().unwrap();
        let p = d.path().join("big.toml");
        std::fs::write(&p, vec![b'#'; 101]).unwrap();
        assert!(
            matches!(read_capped(&p, 100, "belief file"), Err(crate::Error::Limit(m)) if m.contains("big.toml"))
        );
        assert_eq!(read_capped(&p, 101, "x").unwrap().len(), 101);
        // /dev/zero never ends and reports no length.
        let z = std::path::Path::new("/dev/zero");
        if z.exists() {
            assert!(matches!(
                read_capped(z, 1000, "belief file"),
                Err(crate::Error::Limit(_))
            ));
        }
    }

    #[test]
    fn non_utf8_names_line_and_byte() {
        let d = tempfile::tempdir().unwrap();
        let p = d.path().join("b.toml");
        std::fs::write(&p, b"a = 1\nb = \"\xff\"\n").unwrap();
        let e = read_text(&p, 1000, "belief file").unwrap_err().to_string();
        assert!(
            e.contains("b.toml:2") && e.contains("byte 11") && e.contains("0xff"),
            "{e}"
        );
    }
}

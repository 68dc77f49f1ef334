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

/// Longest line of a CSV table read by streaming (bytes): a design of 1,000,000
/// columns of 20-character numbers fits; a device without newlines stops here.
pub const LINE_BYTES: u64 = 64_000_000;

/// Why a [`Guarded`] reader stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Stop {
    /// More than the byte cap in all.
    Total(u64),
    /// A line longer than [`LINE_BYTES`], starting on this line.
    Line(u64),
    /// A NUL byte (binary data, not text) at this byte offset, on this line.
    Binary(u64, u64),
}

/// A reader of a streamed CSV table that refuses, with an I/O error whose
/// reason it keeps ([`Guarded::stopped`]), more than `cap` bytes in all, a
/// line longer than [`LINE_BYTES`], or a NUL byte (a binary file is not CSV
/// text): an endless device or a binary file ends with a clear error after a
/// bounded read instead of growing one record without end.
pub struct Guarded<R> {
    inner: R,
    cap: u64,
    read: u64,
    line: u64,
    line_len: u64,
    stopped: std::rc::Rc<std::cell::Cell<Option<Stop>>>,
}

impl<R: std::io::Read> Guarded<R> {
    pub fn new(inner: R, cap: u64) -> Self {
        Guarded {
            inner,
            cap,
            read: 0,
            line: 1,
            line_len: 0,
            stopped: Default::default(),
        }
    }

    /// Where the reason a read was refused will be found.
    pub fn stopped(&self) -> std::rc::Rc<std::cell::Cell<Option<Stop>>> {
        self.stopped.clone()
    }
}

impl<R: std::io::Read> std::io::Read for Guarded<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        if let Some(s) = self.stopped.get() {
            return Err(std::io::Error::other(format!("{s:?}")));
        }
        let n = self.inner.read(buf)?;
        for (i, b) in buf[..n].iter().enumerate() {
            let stop = if *b == 0 {
                Some(Stop::Binary(self.read + i as u64, self.line))
            } else if *b == b'\n' {
                self.line += 1;
                self.line_len = 0;
                None
            } else {
                self.line_len += 1;
                (self.line_len > LINE_BYTES).then_some(Stop::Line(self.line))
            };
            if let Some(s) = stop {
                self.stopped.set(Some(s));
                return Err(std::io::Error::other(format!("{s:?}")));
            }
        }
        self.read += n as u64;
        if self.read > self.cap {
            self.stopped.set(Some(Stop::Total(self.cap)));
            return Err(std::io::Error::other("too large"));
        }
        Ok(n)
    }
}

/// The error for a [`Stop`] of the table at `path` (`what` it is).
pub fn stop_error(path: &std::path::Path, what: &str, s: Stop) -> crate::Error {
    let loc = |line: u64| crate::error::Location {
        file: Some(path.to_path_buf()),
        line: Some(line as usize),
        key: None,
    };
    match s {
        Stop::Total(cap) => crate::Error::Limit(format!(
            "{}: the {what} is larger than {} MB, the most priorsmith reads",
            path.display(),
            mb(cap)
        )),
        Stop::Line(line) => crate::Error::Limit(format!(
            "{}:{line}: a line of the {what} is longer than {} MB, the most priorsmith reads \
             (is it a text CSV file?)",
            path.display(),
            mb(LINE_BYTES)
        )),
        Stop::Binary(at, line) => crate::Error::input(
            loc(line),
            format!(
                "the {what} is not a text CSV file: byte {at} is a NUL byte (0x00), as in \
                 binary data"
            ),
        )
        .with_hint("give a CSV file: a header row of names, then one row per line"),
    }
}

/// SHA-256 (hex) of the file at `path`, read in pieces and at most `cap`
/// bytes; `None` when it cannot be read or is longer (the caller's own
/// validation then reports it). Memory stays bounded for any file or device.
pub fn sha256_capped(path: &std::path::Path, cap: u64) -> Option<String> {
    use sha2::Digest;
    use std::io::Read;
    let f = std::fs::File::open(path).ok()?;
    let mut r = f.take(cap.saturating_add(1));
    let mut h = sha2::Sha256::new();
    let mut buf = vec![0u8; 1 << 16];
    let mut total = 0u64;
    loop {
        let n = r.read(&mut buf).ok()?;
        if n == 0 {
            break;
        }
        total += n as u64;
        if total > cap {
            return None;
        }
        h.update(&buf[..n]);
    }
    Some(format!("{:x}", h.finalize()))
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

    /// The streaming guard stops at the byte cap, at a NUL byte (with its
    /// offset and line) and at a line without end, and keeps the reason.
    #[test]
    fn guarded_reader_stops_with_the_reason() {
        use std::io::Read;
        let drain = |bytes: Vec<u8>, cap: u64| {
            let g = Guarded::new(std::io::Cursor::new(bytes), cap);
            let why = g.stopped();
            let r = std::io::copy(&mut g.take(u64::MAX), &mut std::io::sink());
            (r.is_ok(), why.get())
        };
        assert_eq!(drain(b"a,b\n1,2\n".to_vec(), 100), (true, None));
        assert_eq!(drain(vec![b'1'; 101], 100), (false, Some(Stop::Total(100))));
        assert_eq!(
            drain(b"a,b\n1,\x002\n".to_vec(), 100),
            (false, Some(Stop::Binary(6, 2)))
        );
        let long = vec![b'x'; LINE_BYTES as usize + 1];
        assert_eq!(drain(long, u64::MAX), (false, Some(Stop::Line(1))));
        let e = stop_error(
            std::path::Path::new("d.csv"),
            "design file",
            Stop::Binary(6, 2),
        );
        assert!(e.to_string().starts_with("d.csv:2: "), "{e}");
        assert!(e.to_string().contains("not a text CSV file"), "{e}");
    }

    #[test]
    fn capped_digest_streams_and_refuses_long_files() {
        let d = tempfile::tempdir().unwrap();
        let p = d.path().join("x.csv");
        std::fs::write(&p, b"abc").unwrap();
        // SHA-256("abc"), FIPS 180-2 appendix B.1.
        assert_eq!(
            sha256_capped(&p, 3).unwrap(),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert_eq!(sha256_capped(&p, 2), None);
        if std::path::Path::new("/dev/zero").exists() {
            assert_eq!(
                sha256_capped(std::path::Path::new("/dev/zero"), 1 << 20),
                None
            );
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

//! Writers: `fit.json`, `summary.txt`, `draws.csv`. Writers read a [`FitResult`],
//! never the spec. Every file is written to a temporary sibling and renamed into
//! place, so a reader never sees a half-written file, and a failed run leaves no
//! partial output behind.

pub mod explain;
pub mod folder;
pub mod labels;
pub mod plots;
pub mod summary;
pub mod svg;

use crate::error::{Error, Result};
use crate::fit::FitResult;
use std::io::Write;
use std::path::{Path, PathBuf};

/// Write `bytes` to `path` atomically (temporary file in the same folder + rename).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    write_all_atomic(&[(path.to_path_buf(), bytes.to_vec())])
}

/// Create the output folder (and parents) with a clear error.
pub fn ensure_dir(dir: &Path) -> Result<()> {
    std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, e))?;
    // Probe writability before any work lands.
    let probe = dir.join(format!(".priorsmith-probe-{}", std::process::id()));
    std::fs::write(&probe, b"").map_err(|e| Error::io(dir, e))?;
    let _ = std::fs::remove_file(probe);
    Ok(())
}

/// `fit.json`: the fit record (see README, "Outputs", and [`crate::fit::record`]).
pub fn fit_json(r: &FitResult) -> Result<String> {
    crate::fit::record::to_json(r)
}

/// `draws.csv`: one row per fresh draw, one column per belief's quantity.
pub fn draws_csv(r: &FitResult) -> Result<Vec<u8>> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let mut header = vec!["draw".to_string()];
    header.extend(r.beliefs.iter().map(|b| b.label.clone()));
    w.write_record(&header)
        .map_err(|e| Error::Internal(e.to_string()))?;
    let n = r.draws_fresh.first().map_or(0, Vec::len);
    for i in 0..n {
        let mut row = vec![(i + 1).to_string()];
        row.extend(r.draws_fresh.iter().map(|c| fmt_csv(c[i])));
        w.write_record(&row)
            .map_err(|e| Error::Internal(e.to_string()))?;
    }
    w.into_inner().map_err(|e| Error::Internal(e.to_string()))
}

pub use crate::numerics::format::csv as fmt_csv;

/// A point where a test may kill the process (fault injection): when the
/// environment variable `PRIORSMITH_TEST_KILL_AT_WRITE` is `k`, the k-th call in
/// the process aborts it on the spot, as SIGKILL would, leaving whatever is on
/// disk. Every file write and the folder swap pass here. Unset: nothing happens.
pub fn fault_point() {
    use std::sync::atomic::{AtomicUsize, Ordering};
    use std::sync::OnceLock;
    static AT: OnceLock<Option<usize>> = OnceLock::new();
    static COUNT: AtomicUsize = AtomicUsize::new(0);
    let at = AT.get_or_init(|| {
        std::env::var("PRIORSMITH_TEST_KILL_AT_WRITE")
            .ok()
            .and_then(|v| v.parse().ok())
    });
    if let Some(k) = at {
        if COUNT.fetch_add(1, Ordering::SeqCst) + 1 == *k {
            std::process::abort();
        }
    }
}

/// Write a set of files into place all together: every file goes to a temporary
/// sibling first; only when all are complete are they renamed. On any failure the
/// temporaries are removed and no file of the set is replaced.
pub fn write_all_atomic(files: &[(PathBuf, Vec<u8>)]) -> Result<()> {
    let mut tmps: Vec<PathBuf> = Vec::new();
    let cleanup = |tmps: &[PathBuf]| {
        for t in tmps {
            let _ = std::fs::remove_file(t);
        }
    };
    for (path, bytes) in files {
        let dir = path
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        let name = path
            .file_name()
            .map(|s| s.to_string_lossy().to_string())
            .unwrap_or_default();
        let tmp = dir.join(format!(".{name}.tmp-{}", std::process::id()));
        fault_point();
        let res = (|| {
            let mut f = std::fs::File::create(&tmp)?;
            f.write_all(bytes)?;
            f.sync_all()
        })();
        tmps.push(tmp);
        if let Err(e) = res {
            cleanup(&tmps);
            return Err(Error::io(path, e));
        }
    }
    for ((path, _), tmp) in files.iter().zip(&tmps) {
        fault_point();
        if let Err(e) = std::fs::rename(tmp, path) {
            cleanup(&tmps);
            return Err(Error::io(path, e));
        }
    }
    Ok(())
}

/// Write every output of a fit into `dir`; returns the paths written.
pub fn write_fit(dir: &Path, r: &FitResult) -> Result<Vec<PathBuf>> {
    write_fit_files(dir, r, true)
}

/// As [`write_fit`]; `draws` = false leaves out draws.csv (batch lean folders).
pub fn write_fit_files(dir: &Path, r: &FitResult, draws: bool) -> Result<Vec<PathBuf>> {
    ensure_dir(dir)?;
    // Render everything first, so an error leaves no file behind.
    let mut files = vec![
        (dir.join("fit.json"), fit_json(r)?.into_bytes()),
        (dir.join("summary.txt"), summary::render(r).into_bytes()),
    ];
    if draws {
        files.push((dir.join("draws.csv"), draws_csv(r)?));
    }
    if let Some(f) = &r.pareto {
        files.push((dir.join("pareto.csv"), plots::pareto_csv(f)?));
        files.push((dir.join("pareto.svg"), plots::pareto_svg(f)?.into_bytes()));
    }
    write_all_atomic(&files)?;
    Ok(files.into_iter().map(|f| f.0).collect())
}

#[cfg(test)]
mod tests {
    #[test]
    fn atomic_write_replaces_whole_file() {
        let d = tempfile::tempdir().unwrap();
        let p = d.path().join("a.txt");
        super::write_atomic(&p, b"first").unwrap();
        super::write_atomic(&p, b"second").unwrap();
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "second");
        let leftovers: Vec<_> = std::fs::read_dir(d.path()).unwrap().collect();
        assert_eq!(leftovers.len(), 1);
    }
}

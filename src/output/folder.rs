//! Output folders replaced as a whole.
//!
//! `fit`, `sweep` and `report` build their whole output in a sibling staging
//! folder `.<name>.new-<pid>` and then swap it in, so that after any
//! interruption (an error, Ctrl-C, SIGKILL, a full disk) the folder holds the
//! whole previous set of files or the whole new set, never a mix and never
//! temporary files:
//!
//! 1. **Lock.** `.<name>.lock` beside the folder is locked exclusively
//!    (an advisory `flock`); a second writer to the
//!    same folder is refused with a clear error instead of silently replacing
//!    the first one's result. The lock dies with its process.
//! 2. **Recover.** Holding the lock, staging folders left by an interrupted run
//!    are removed (they carry a mark until the swap); an unmarked one is an old
//!    set exchanged out just before the interruption, and becomes the kept
//!    previous set; when the folder itself is missing but a previous set is kept
//!    (an interruption between the two renames of the fallback below), the
//!    previous set is put back.
//! 3. **Stage.** The caller writes every file into the staging folder.
//! 4. **Swap.** On Linux, `renameat2(RENAME_EXCHANGE)` exchanges the staging
//!    folder and the old folder in one step (atomic: a reader sees one set or the
//!    other); elsewhere, or on a file system without it, two renames: old →
//!    `.<name>.previous`, staging → the folder (an interruption between them is
//!    repaired by step 2 of the next run). The previous set is then kept as
//!    `.<name>.previous` (one generation), so writing over an earlier result never
//!    loses it: rename it back to recover it.
//!
//! Dropping a [`Staging`] without [`Staging::commit`] removes the staging folder.
//!
//! `report` rewrites files of an existing folder (report.html, plots/) rather
//! than making a new result: [`Staging::begin_rewrite`] stages in
//! `.<name>.redo-<pid>`, the caller copies the files it keeps (hard links where
//! the file system allows: priorsmith never writes a file in place) and writes
//! the new ones, and [`Staging::commit`] exchanges the folders and then deletes
//! the old set instead of keeping it, so the previous *fit* kept as
//! `.<name>.previous` survives a report. Recovery removes `redo` folders left
//! by an interruption (a marked one was never swapped in; an unmarked one is
//! the old set exchanged out, or, after an interruption between the two renames
//! of the fallback, one of two whole sets: it is put back when the folder is
//! missing).

use crate::error::{Error, Result};
use std::fs::{self, File};
use std::path::{Path, PathBuf};

/// Marks a staging folder whose set has not been swapped in (removed just
/// before the swap), so that recovery tells it from an old set exchanged out.
const MARK: &str = ".priorsmith-staging";

/// A folder being rebuilt in a sibling staging folder.
pub struct Staging {
    target: PathBuf,
    staging: PathBuf,
    previous: PathBuf,
    committed: bool,
    /// `report`'s mode: the old set is deleted after the swap, not kept.
    rewrite: bool,
    _lock: File,
}

/// Sibling path `.<name>.<suffix>` of `target`.
fn sibling(target: &Path, suffix: &str) -> PathBuf {
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "out".into());
    parent_of(target).join(format!(".{name}.{suffix}"))
}

fn parent_of(target: &Path) -> PathBuf {
    target
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .map_or_else(|| PathBuf::from("."), Path::to_path_buf)
}

/// Where the previous set of files of `target` is kept after a replacement.
pub fn previous_of(target: &Path) -> PathBuf {
    sibling(target, "previous")
}

impl Staging {
    /// Lock `target`, repair what an interrupted run left, and create an empty
    /// staging folder. `target` may exist (a folder: it will be replaced) or
    /// not; anything else there (a file, a dangling link) is refused.
    pub fn begin(target: &Path) -> Result<Staging> {
        Self::begin_as(target, false)
    }

    /// As [`Staging::begin`] for a folder whose files are being rewritten
    /// (`report`): `target` must be a folder; the old set is not kept.
    pub fn begin_rewrite(target: &Path) -> Result<Staging> {
        if !target.is_dir() {
            return Err(Error::io(
                target,
                std::io::Error::new(
                    std::io::ErrorKind::NotFound,
                    "no such folder: give the output folder of `priorsmith fit`",
                ),
            ));
        }
        Self::begin_as(target, true)
    }

    fn begin_as(target: &Path, rewrite: bool) -> Result<Staging> {
        if let Ok(m) = fs::symlink_metadata(target) {
            let is_dir = m.is_dir() || (m.file_type().is_symlink() && target.is_dir());
            if !is_dir {
                let what = if m.file_type().is_symlink() {
                    "a link that leads to no folder"
                } else {
                    "a file, not a folder"
                };
                return Err(Error::io(
                    target,
                    std::io::Error::other(format!(
                        "the output path is {what}; choose another --out"
                    )),
                ));
            }
        }
        let parent = parent_of(target);
        fs::create_dir_all(&parent).map_err(|e| Error::io(&parent, e))?;
        let lock_path = sibling(target, "lock");
        let lock = File::options()
            .create(true)
            .truncate(false)
            .write(true)
            .open(&lock_path)
            .map_err(|e| Error::io(&lock_path, e))?;
        match try_lock(&lock) {
            Ok(true) => {}
            Ok(false) => {
                return Err(Error::io(
                    target,
                    std::io::Error::other(
                        "another priorsmith process is writing this folder; wait for it to \
                         finish, or choose another --out",
                    ),
                ))
            }
            Err(e) => return Err(Error::io(&lock_path, e)),
        }
        let previous = previous_of(target);
        recover(target, &previous)?;
        let kind = if rewrite { "redo" } else { "new" };
        let staging = sibling(target, &format!("{kind}-{}", std::process::id()));
        fs::create_dir(&staging).map_err(|e| Error::io(&staging, e))?;
        let mark = staging.join(MARK);
        fs::write(&mark, b"").map_err(|e| Error::io(&mark, e))?;
        Ok(Staging {
            target: target.to_path_buf(),
            staging,
            previous,
            committed: false,
            rewrite,
            _lock: lock,
        })
    }

    /// The folder to write into.
    pub fn path(&self) -> &Path {
        &self.staging
    }

    /// The folder that will be replaced.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Swap the staged folder in. Returns where the previous set of files is
    /// kept, when there was one.
    pub fn commit(mut self) -> Result<Option<PathBuf>> {
        let mark = self.staging.join(MARK);
        fs::remove_file(&mark).map_err(|e| Error::io(&mark, e))?;
        sync_dir(&self.staging);
        let had_old = self.target.is_dir();
        let result = if had_old && self.rewrite {
            self.swap_discarding()
        } else if had_old {
            self.swap_in()
        } else {
            fs::rename(&self.staging, &self.target).map_err(|e| Error::io(&self.target, e))
        };
        result?;
        self.committed = true;
        sync_dir(&parent_of(&self.target));
        Ok((had_old && !self.rewrite).then(|| self.previous.clone()))
    }

    /// Swap the staged set in and delete the old one (`report`).
    fn swap_discarding(&self) -> Result<()> {
        let t = &self.target;
        super::fault_point();
        if exchange(&self.staging, t).is_ok() {
            super::fault_point();
            // The staging path now holds the old set.
            return remove_all(&self.staging);
        }
        let old = sibling(t, &format!("redo-old-{}", std::process::id()));
        fs::rename(t, &old).map_err(|e| Error::io(t, e))?;
        super::fault_point();
        fs::rename(&self.staging, t).map_err(|e| Error::io(t, e))?;
        super::fault_point();
        remove_all(&old)
    }

    fn swap_in(&self) -> Result<()> {
        let t = &self.target;
        super::fault_point();
        if exchange(&self.staging, t).is_ok() {
            super::fault_point();
            // The staging path now holds the old set: keep it as the previous one.
            remove_all(&self.previous)?;
            return fs::rename(&self.staging, &self.previous).map_err(|e| Error::io(t, e));
        }
        // Two renames; `recover` repairs an interruption between them.
        remove_all(&self.previous)?;
        fs::rename(t, &self.previous).map_err(|e| Error::io(t, e))?;
        super::fault_point();
        fs::rename(&self.staging, t).map_err(|e| Error::io(t, e))
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        if !self.committed {
            let _ = fs::remove_dir_all(&self.staging);
        }
    }
}

/// Remove staging folders of interrupted runs (the lock is held, so none is in
/// use) and put a kept previous set back when the folder itself is missing.
fn recover(target: &Path, previous: &Path) -> Result<()> {
    let parent = parent_of(target);
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let prefix = format!(".{name}.new-");
    if let Ok(entries) = fs::read_dir(&parent) {
        for e in entries.flatten() {
            if e.file_name().to_string_lossy().starts_with(&prefix) {
                let p = e.path();
                if p.join(MARK).exists() {
                    // A set that was never swapped in.
                    remove_all(&p)?;
                } else {
                    // The old set, exchanged out just before an interruption.
                    remove_all(previous)?;
                    fs::rename(&p, previous).map_err(|e| Error::io(&p, e))?;
                }
            }
        }
    }
    // `report`'s staging folders: a marked one was never swapped in; an
    // unmarked one is an old set (or, when the folder is missing, a whole set
    // to put back).
    let redo = format!(".{name}.redo-");
    if let Ok(entries) = fs::read_dir(&parent) {
        let mut found: Vec<PathBuf> = entries
            .flatten()
            .filter(|e| e.file_name().to_string_lossy().starts_with(&redo))
            .map(|e| e.path())
            .collect();
        found.sort();
        for p in found {
            if !p.join(MARK).exists() && !target.exists() {
                fs::rename(&p, target).map_err(|e| Error::io(&p, e))?;
            } else {
                remove_all(&p)?;
            }
        }
    }
    if !target.exists() && previous.is_dir() {
        fs::rename(previous, target).map_err(|e| Error::io(target, e))?;
    }
    Ok(())
}

/// Put every entry of folder `from` into folder `to` except those named in
/// `skip` (top level only): files as hard links where possible, else copies;
/// sub-folders recursively. Used by `report` to carry the fit's own files into
/// its staging folder.
pub fn carry_over(from: &Path, to: &Path, skip: &[&str]) -> Result<()> {
    for e in fs::read_dir(from).map_err(|e| Error::io(from, e))? {
        let e = e.map_err(|e| Error::io(from, e))?;
        let name = e.file_name();
        let n = name.to_string_lossy();
        if skip.iter().any(|s| *s == n) || n == MARK {
            continue;
        }
        let (src, dst) = (e.path(), to.join(&name));
        let ft = e.file_type().map_err(|e| Error::io(&src, e))?;
        super::fault_point();
        if ft.is_dir() {
            fs::create_dir(&dst).map_err(|e| Error::io(&dst, e))?;
            carry_over(&src, &dst, &[])?;
        } else if fs::hard_link(&src, &dst).is_err() {
            fs::copy(&src, &dst).map_err(|e| Error::io(&src, e))?;
        }
    }
    Ok(())
}

fn remove_all(p: &Path) -> Result<()> {
    match fs::remove_dir_all(p) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(()),
        Err(e) => Err(Error::io(p, e)),
    }
}

/// Flush a folder's entries to disk (best effort: not every platform can).
fn sync_dir(p: &Path) {
    if let Ok(f) = File::open(p) {
        let _ = f.sync_all();
    }
}

/// Take an exclusive advisory lock on `f` without waiting: `Ok(false)` when
/// another process holds it.
#[cfg(unix)]
fn try_lock(f: &File) -> std::io::Result<bool> {
    use std::os::unix::io::AsRawFd;
    // SAFETY: a valid open descriptor; flock does not touch memory.
    if unsafe { libc::flock(f.as_raw_fd(), libc::LOCK_EX | libc::LOCK_NB) } == 0 {
        return Ok(true);
    }
    let e = std::io::Error::last_os_error();
    if e.kind() == std::io::ErrorKind::WouldBlock {
        Ok(false)
    } else {
        Err(e)
    }
}

#[cfg(not(unix))]
fn try_lock(_f: &File) -> std::io::Result<bool> {
    Ok(true)
}

/// Exchange two paths atomically (Linux `renameat2` with `RENAME_EXCHANGE`).
#[cfg(target_os = "linux")]
fn exchange(a: &Path, b: &Path) -> std::io::Result<()> {
    use std::ffi::CString;
    use std::os::unix::ffi::OsStrExt;
    let ca = CString::new(a.as_os_str().as_bytes())?;
    let cb = CString::new(b.as_os_str().as_bytes())?;
    // SAFETY: both are valid NUL-terminated paths; AT_FDCWD resolves them from
    // the current folder as `rename` would.
    let r = unsafe {
        libc::renameat2(
            libc::AT_FDCWD,
            ca.as_ptr(),
            libc::AT_FDCWD,
            cb.as_ptr(),
            libc::RENAME_EXCHANGE,
        )
    };
    if r == 0 {
        Ok(())
    } else {
        Err(std::io::Error::last_os_error())
    }
}

#[cfg(not(target_os = "linux"))]
fn exchange(_a: &Path, _b: &Path) -> std::io::Result<()> {
    Err(std::io::Error::from(std::io::ErrorKind::Unsupported))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn files(p: &Path) -> Vec<String> {
        let mut v: Vec<String> = fs::read_dir(p)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn a_new_set_replaces_the_old_as_a_whole_and_the_old_is_kept() {
        let d = tempfile::tempdir().unwrap();
        let out = d.path().join("out");
        let s = Staging::begin(&out).unwrap();
        fs::write(s.path().join("fit.json"), "1").unwrap();
        fs::write(s.path().join("pareto.csv"), "1").unwrap();
        assert_eq!(s.commit().unwrap(), None);
        assert_eq!(files(&out), ["fit.json", "pareto.csv"]);
        let s = Staging::begin(&out).unwrap();
        fs::write(s.path().join("fit.json"), "2").unwrap();
        let kept = s.commit().unwrap().unwrap();
        // No stale pareto.csv beside the new fit; the old set is whole.
        assert_eq!(files(&out), ["fit.json"]);
        assert_eq!(fs::read_to_string(out.join("fit.json")).unwrap(), "2");
        assert_eq!(files(&kept), ["fit.json", "pareto.csv"]);
        assert_eq!(fs::read_to_string(kept.join("fit.json")).unwrap(), "1");
        // Only the folder, its kept previous set and the lock are left.
        assert_eq!(files(d.path()), [".out.lock", ".out.previous", "out"]);
    }

    #[test]
    fn an_interrupted_run_leaves_the_old_set_and_is_cleaned_up_next_time() {
        let d = tempfile::tempdir().unwrap();
        let out = d.path().join("out");
        fs::create_dir(&out).unwrap();
        fs::write(out.join("fit.json"), "old").unwrap();
        {
            let s = Staging::begin(&out).unwrap();
            fs::write(s.path().join("fit.json"), "half").unwrap();
            // Dropped without commit: an error in the middle.
        }
        assert_eq!(fs::read_to_string(out.join("fit.json")).unwrap(), "old");
        assert_eq!(files(d.path()), [".out.lock", "out"]);
        // A killed run leaves its staging folder: the next run removes it.
        fs::create_dir(d.path().join(".out.new-999999")).unwrap();
        fs::write(d.path().join(".out.new-999999").join(MARK), "").unwrap();
        // …and a kill between the fallback's two renames leaves no folder but
        // the previous set: the next run puts it back first.
        fs::rename(&out, d.path().join(".out.previous")).unwrap();
        let s = Staging::begin(&out).unwrap();
        assert_eq!(fs::read_to_string(out.join("fit.json")).unwrap(), "old");
        assert!(!d.path().join(".out.new-999999").exists());
        drop(s);
    }

    #[test]
    fn a_second_writer_is_refused_while_the_first_holds_the_folder() {
        let d = tempfile::tempdir().unwrap();
        let out = d.path().join("out");
        let first = Staging::begin(&out).unwrap();
        let e = Staging::begin(&out).err().unwrap().to_string();
        assert!(e.contains("another priorsmith process"), "{e}");
        drop(first);
        assert!(Staging::begin(&out).is_ok());
    }

    #[test]
    fn a_file_or_a_dangling_link_as_the_folder_is_refused_clearly() {
        let d = tempfile::tempdir().unwrap();
        let f = d.path().join("plain");
        fs::write(&f, "x").unwrap();
        let e = Staging::begin(&f).err().unwrap().to_string();
        assert!(e.contains("a file, not a folder"), "{e}");
        let l = d.path().join("link");
        std::os::unix::fs::symlink(d.path().join("nowhere"), &l).unwrap();
        let e = Staging::begin(&l).err().unwrap().to_string();
        assert!(e.contains("leads to no folder"), "{e}");
    }
}

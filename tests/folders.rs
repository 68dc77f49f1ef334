//! Output folders are replaced as a whole: the real binary, killed at every
//! write step (the test-only hook `PRIORSMITH_TEST_KILL_AT_WRITE`), leaves the
//! whole previous set or the whole new set, never a mix and never temporary
//! files; a refit keeps the previous set; a second writer is refused.

mod common;
use common::*;
use std::collections::BTreeSet;
use std::path::Path;

fn spec_with_seed(seed: u64) -> String {
    EXAMPLE
        .replace("draws = 20000", "draws = 2048")
        .replace("seed = 11", &format!("seed = {seed}"))
}

/// Every file under `dir` (relative paths), and the seed recorded in fit.json.
fn snapshot(dir: &Path) -> (BTreeSet<String>, Vec<u8>, Vec<u8>) {
    let mut names = BTreeSet::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                stack.push(p);
            } else {
                names.insert(p.strip_prefix(dir).unwrap().to_string_lossy().into_owned());
            }
        }
    }
    let draws = std::fs::read(dir.join("draws.csv")).unwrap_or_default();
    let spec = std::fs::read(dir.join("spec.toml")).unwrap_or_default();
    (names, draws, spec)
}

fn fit(spec: &Path, out: &Path, kill_at: Option<usize>) -> std::process::Output {
    let mut c = bin();
    c.args(["-q", "fit"]).arg(spec).arg("--out").arg(out);
    if let Some(k) = kill_at {
        c.env("PRIORSMITH_TEST_KILL_AT_WRITE", k.to_string());
    }
    c.output().unwrap()
}

#[test]
fn a_fit_killed_at_any_write_leaves_the_old_set_or_the_new_one() {
    let d = tempfile::tempdir().unwrap();
    let (a, b) = (
        write(d.path(), "a.toml", &spec_with_seed(1)),
        write(d.path(), "b.toml", &spec_with_seed(2)),
    );
    // The two complete sets, for reference (draws.csv depends on the seed only).
    let (ra, rb) = (d.path().join("ref-a"), d.path().join("ref-b"));
    assert!(fit(&a, &ra, None).status.success());
    assert!(fit(&b, &rb, None).status.success());
    let (set_a, set_b) = (snapshot(&ra), snapshot(&rb));
    assert_eq!(set_a.0, set_b.0, "both runs write the same files");
    assert_ne!(set_a.1, set_b.1);

    let out = d.path().join("out");
    assert!(fit(&a, &out, None).status.success());
    let mut killed = 0;
    for k in 1..200 {
        let o = fit(&b, &out, Some(k));
        let now = snapshot(&out);
        let whole_a = now.0 == set_a.0 && now.1 == set_a.1;
        let whole_b = now.0 == set_b.0 && now.1 == set_b.1 && now.2 != set_a.2;
        assert!(
            whole_a || whole_b,
            "killed at write {k}: the folder holds a mix: {:?}",
            now.0
        );
        assert!(
            !now.0.iter().any(|n| n.contains(".tmp-")),
            "killed at write {k}: temporary files in the folder"
        );
        if o.status.success() {
            assert!(whole_b, "a complete run leaves the new set");
            break;
        }
        killed += 1;
        // Back to the old set for the next kill point (a completed swap kept it).
        assert!(fit(&a, &out, None).status.success());
        assert_eq!(snapshot(&out).1, set_a.1);
    }
    assert!(killed >= 8, "only {killed} write steps were interrupted");
    // After a complete run nothing is left beside the folder but its lock and
    // the kept previous set, which is the old set, whole.
    let mut beside: Vec<String> = std::fs::read_dir(d.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with(".out"))
        .collect();
    beside.sort();
    assert_eq!(beside, [".out.lock", ".out.previous"]);
    assert_eq!(snapshot(&d.path().join(".out.previous")).1, set_a.1);
}

#[test]
fn a_refit_leaves_no_stale_files_and_keeps_the_previous_set() {
    let d = tempfile::tempdir().unwrap();
    let traced = spec_with_seed(1).replace("[fit]\n", "[fit]\ntie_break = \"knee\"\n");
    let a = write(d.path(), "a.toml", &traced);
    let b = write(d.path(), "b.toml", &spec_with_seed(1));
    let out = d.path().join("out");
    assert!(fit(&a, &out, None).status.success());
    assert!(
        out.join("pareto.csv").exists(),
        "the traced front is written"
    );
    let o = fit(&b, &out, None);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(
        !out.join("pareto.csv").exists() && !out.join("pareto.svg").exists(),
        "a fit without a front keeps the previous fit's front beside it"
    );
    assert!(d.path().join(".out.previous").join("pareto.csv").exists());
}

#[test]
fn a_second_writer_is_refused_and_a_file_is_not_a_folder() {
    use std::os::unix::io::AsRawFd;
    let d = tempfile::tempdir().unwrap();
    let a = write(d.path(), "a.toml", &spec_with_seed(1));
    let out = d.path().join("out");
    // Another process holding the folder's lock (as a running fit does).
    let lock = std::fs::File::create(d.path().join(".out.lock")).unwrap();
    assert_eq!(
        unsafe { libc::flock(lock.as_raw_fd(), libc::LOCK_EX | libc::LOCK_NB) },
        0
    );
    let o = fit(&a, &out, None);
    assert_eq!(o.status.code(), Some(4), "{}", stderr(&o));
    assert!(stderr(&o).contains("another priorsmith process is writing"));
    assert!(!out.exists());
    drop(lock);
    let o = fit(&a, &out, None);
    assert!(o.status.success(), "{}", stderr(&o));
    // A file where the folder should be, and a link to nowhere.
    let f = write(d.path(), "plain", "x");
    let o = fit(&a, &f, None);
    assert_eq!(o.status.code(), Some(4));
    assert!(
        stderr(&o).contains("a file, not a folder"),
        "{}",
        stderr(&o)
    );
    let l = d.path().join("dangling");
    std::os::unix::fs::symlink(d.path().join("nowhere"), &l).unwrap();
    let o = fit(&a, &l, None);
    assert_eq!(o.status.code(), Some(4));
    assert!(stderr(&o).contains("leads to no folder"), "{}", stderr(&o));
}

/// Every file under `dir` with its bytes.
fn contents(dir: &Path) -> std::collections::BTreeMap<String, Vec<u8>> {
    snapshot(dir)
        .0
        .into_iter()
        .map(|n| {
            let b = std::fs::read(dir.join(&n)).unwrap();
            (n, b)
        })
        .collect()
}

#[test]
fn a_report_killed_at_any_write_leaves_the_old_set_or_the_new_one() {
    let d = tempfile::tempdir().unwrap();
    let a = write(d.path(), "a.toml", &spec_with_seed(1));
    let out = d.path().join("out");
    assert!(fit(&a, &out, None).status.success());
    // The new set: what a complete `report` leaves.
    let o = run(&["-q", "report", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let new_set = contents(&out);
    // A recognisable old set: an old report and a plot the new one does not write.
    let make_old = || {
        std::fs::write(out.join("report.html"), "old report").unwrap();
        std::fs::write(out.join("plots").join("stale.svg"), "<svg/>").unwrap();
        contents(&out)
    };
    let old_set = make_old();
    // The fit kept no previous set, and a report must not make one.
    assert!(!d.path().join(".out.previous").exists());
    let mut killed = 0;
    for k in 1..400 {
        let o = bin()
            .args(["-q", "report"])
            .arg(&out)
            .env("PRIORSMITH_TEST_KILL_AT_WRITE", k.to_string())
            .output()
            .unwrap();
        let now = contents(&out);
        assert!(
            now == old_set || now == new_set,
            "report killed at write {k}: the folder holds a mix: {:?}",
            now.keys().collect::<Vec<_>>()
        );
        if o.status.success() {
            assert!(now == new_set, "a complete report leaves the new set");
            break;
        }
        killed += 1;
        make_old();
    }
    assert!(killed >= 5, "only {killed} write steps were interrupted");
    // After the complete run nothing is left beside the folder but its lock.
    let beside: Vec<String> = std::fs::read_dir(d.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with(".out"))
        .collect();
    assert_eq!(beside, [".out.lock"]);
}

#[test]
fn a_report_keeps_the_previous_fit_and_refuses_a_second_writer() {
    use std::os::unix::io::AsRawFd;
    let d = tempfile::tempdir().unwrap();
    let (a, b) = (
        write(d.path(), "a.toml", &spec_with_seed(1)),
        write(d.path(), "b.toml", &spec_with_seed(2)),
    );
    let out = d.path().join("out");
    assert!(fit(&a, &out, None).status.success());
    assert!(fit(&b, &out, None).status.success());
    let kept = contents(&d.path().join(".out.previous"));
    let o = run(&["-q", "report", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(contents(&d.path().join(".out.previous")), kept);
    let lock = std::fs::File::open(d.path().join(".out.lock")).unwrap();
    assert_eq!(
        unsafe { libc::flock(lock.as_raw_fd(), libc::LOCK_EX | libc::LOCK_NB) },
        0
    );
    let before = contents(&out);
    let o = run(&["-q", "report", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(4), "{}", stderr(&o));
    assert!(stderr(&o).contains("another priorsmith process is writing"));
    assert_eq!(contents(&out), before);
}

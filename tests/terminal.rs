//! The terminal as a log file or a cluster job sees it (stderr not a terminal):
//! plain progress lines of a batch, and Ctrl-C (SIGINT sent to the real binary)
//! ending a batch with exit 130 and a word on what was committed and how to
//! resume. Both run in a few seconds: rows of an invented two-belief cure model
//! at 2,000 draws take about 0.1 s each.

mod common;

use std::path::{Path, PathBuf};
use std::process::Stdio;
use std::time::{Duration, Instant};

const BASE: &str = r#"
title = "terminal test (invented)"
[model]
template = "mixture-cure"
latency = "exponential"
[simulation]
draws = 2000
seed = 1
[prior.cure_logit]
family = "normal"
mean = { fit = [-4.0, 4.0] }
sd = { fit = [0.05, 2.5] }
[prior.log_scale]
family = "normal"
mean = { fit = [0.0, 5.0] }
sd = 0.3
[[belief]]
quantity = "cure_fraction"
quantiles = { "0.1" = 0.15, "0.5" = 0.25, "0.9" = 0.40 }
[[belief]]
quantity = "survival_prob"
horizon = 36
distribution = { family = "beta", alpha = 12, beta = 18 }
"#;

/// Base file and a table of `n` rows (varied median and seed) in `dir`.
fn setup(dir: &Path, n: usize) -> (PathBuf, PathBuf) {
    let base = common::write(dir, "base.toml", BASE);
    let mut t = String::from("id,belief.1.quantiles.0.5,simulation.seed\n");
    for k in 0..n {
        t.push_str(&format!(
            "r{k:03},{},{}\n",
            0.18 + 0.02 * (k % 10) as f64,
            100 + k
        ));
    }
    (base, common::write(dir, "table.csv", &t))
}

fn rows_committed(out: &Path) -> usize {
    std::fs::read_dir(out.join("rows")).map_or(0, |d| {
        d.flatten()
            .filter(|e| e.path().extension().is_some_and(|x| x == "json"))
            .count()
    })
}

/// With stderr a pipe and `PRIORSMITH_PROGRESS_EVERY=0`, a batch prints one
/// plain line per row: count of total, running not-met and failed counts, the
/// elapsed time and an ETA; the default interval (5 s) prints none in a run
/// shorter than that.
#[test]
fn plain_progress_lines_when_stderr_is_not_a_terminal() {
    let d = tempfile::tempdir().unwrap();
    let (base, table) = setup(d.path(), 4);
    let o = common::bin()
        .env("PRIORSMITH_PROGRESS_EVERY", "0")
        .args(["batch", "--threads", "1", "--spec"])
        .arg(&base)
        .arg(&table)
        .arg("--out")
        .arg(d.path().join("out"))
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", common::stderr(&o));
    let err = common::stderr(&o);
    let lines: Vec<&str> = err
        .lines()
        .filter(|l| l.starts_with("priorsmith: models "))
        .collect();
    assert_eq!(lines.len(), 4, "one line per row:\n{err}");
    for (k, l) in lines.iter().enumerate() {
        assert!(l.contains(&format!("models {}/4, ", k + 1)), "{l}");
        assert!(l.contains(" not met, ") && l.contains(" failed ("), "{l}");
        assert!(l.contains(" s elapsed"), "{l}");
        if k < 3 {
            assert!(l.contains("s left)"), "ETA missing: {l}");
        }
    }
    // No terminal control characters in a log.
    assert!(!err.contains('\u{1b}') && !err.contains('\r'), "{err:?}");
    // A bad value is named and the default used.
    let o = common::bin()
        .env("PRIORSMITH_PROGRESS_EVERY", "soon")
        .args(["batch", "--threads", "1", "--spec"])
        .arg(&base)
        .arg(&table)
        .arg("--out")
        .arg(d.path().join("out2"))
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", common::stderr(&o));
    let err = common::stderr(&o);
    assert!(
        err.contains("PRIORSMITH_PROGRESS_EVERY=\"soon\" is not a number of seconds"),
        "{err}"
    );
}

/// SIGINT to the real binary while a batch runs (stderr a pipe): exit 130, the
/// number of committed rows (equal to the records left in rows/), where they
/// are and how to resume; the same command then resumes and skips them.
#[test]
fn sigint_ends_a_batch_with_130_and_says_what_was_committed() {
    let d = tempfile::tempdir().unwrap();
    // Far more rows than can finish before the signal (about 0.1 s each).
    let (base, table) = setup(d.path(), 300);
    let out = d.path().join("out");
    let child = common::bin()
        .args(["batch", "--threads", "1", "--spec"])
        .arg(&base)
        .arg(&table)
        .arg("--out")
        .arg(&out)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // Wait until a few rows are committed (bounded wait, not a retry).
    let start = Instant::now();
    while rows_committed(&out) < 3 {
        assert!(
            start.elapsed() < Duration::from_secs(60),
            "no rows committed in 60 s"
        );
        std::thread::sleep(Duration::from_millis(20));
    }
    let st = std::process::Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(st.success());
    let o = child.wait_with_output().unwrap();
    let err = common::stderr(&o);
    assert_eq!(o.status.code(), Some(130), "{err}");
    let n = rows_committed(&out);
    assert!((3..300).contains(&n), "{n} rows committed");
    assert!(
        err.contains(&format!("interrupted: {n} row(s) are committed in ")),
        "{err}"
    );
    assert!(
        err.contains("run the same command again to resume"),
        "{err}"
    );
    assert_eq!(err.matches("interrupted").count(), 1, "said once: {err}");
    assert!(!out.join("results.csv").exists(), "no tables after Ctrl-C");
    // The same command resumes: its first shard of 100 (rows 1–3, contiguous,
    // committed first on one thread) is skipped whole without fitting all 300.
    let o = common::bin()
        .args(["batch", "--threads", "1", "--shard", "1/100", "--spec"])
        .arg(&base)
        .arg(&table)
        .arg("--out")
        .arg(&out)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", common::stderr(&o));
    let s = common::stdout(&o);
    assert!(s.contains("0 fitted, 3 already done (skipped)"), "{s}");
}

/// `report` on a lean batch model folder (no draws.csv) fails with exit 4 and
/// says why and what to do, once.
#[test]
fn report_of_a_lean_batch_folder_names_the_cause() {
    let d = tempfile::tempdir().unwrap();
    let (base, table) = setup(d.path(), 1);
    let out = d.path().join("out");
    let o = common::bin()
        .args(["-q", "batch", "--spec"])
        .arg(&base)
        .arg(&table)
        .arg("--out")
        .arg(&out)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", common::stderr(&o));
    let o = common::run(&["report", out.join("models/r000").to_str().unwrap()]);
    let err = common::stderr(&o);
    assert_eq!(o.status.code(), Some(4), "{err}");
    assert!(err.contains("draws.csv: not found"), "{err}");
    assert!(err.contains("--model-files full"), "{err}");
    assert_eq!(err.matches("draws.csv").count(), 1, "printed once: {err}");
}

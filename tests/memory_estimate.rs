//! The working-memory estimate checked by `--max-memory` is an upper bound of
//! what a fit really holds: the real binary's peak resident size (getrusage
//! `ru_maxrss` of the child, the kernel's VmHWM) minus that of `check` on the
//! same file (the program and the input alone) must not exceed the estimate,
//! read from the limit message of `check --max-memory 1`. Slow (whole fits at
//! tens of thousands of draws): `cargo test --release --test memory_estimate --
//! --ignored`.

mod common;
use common::*;

/// Run the binary with `args`; returns whether it succeeded, its standard
/// error and its own peak resident size in bytes (wait4's rusage: the kernel's
/// high-water mark of that child alone).
#[allow(clippy::zombie_processes)] // reaped by wait4 below, which also gives its rusage
fn run_peak(args: &[&str], dir: &std::path::Path) -> (bool, String, u64) {
    let err_path = dir.join("stderr.txt");
    let child = bin()
        .args(args)
        .stdout(std::process::Stdio::null())
        .stderr(std::fs::File::create(&err_path).unwrap())
        .spawn()
        .unwrap();
    let mut status = 0i32;
    // SAFETY: wait4 on our own child's pid fills `status` and `u`.
    let mut u: libc::rusage = unsafe { std::mem::zeroed() };
    let r = unsafe { libc::wait4(child.id() as i32, &mut status, 0, &mut u) };
    assert_eq!(r, child.id() as i32);
    let ok = libc::WIFEXITED(status) && libc::WEXITSTATUS(status) == 0;
    let err = std::fs::read_to_string(&err_path).unwrap_or_default();
    (ok, err, u.ru_maxrss as u64 * 1024)
}

/// (estimate, measured working bytes) for `fit` of `text` at `draws`, one thread.
fn measure(text: &str, from: &str, draws: usize) -> (u64, u64) {
    assert!(text.contains(from));
    let d = tempfile::tempdir().unwrap();
    let spec = write(
        d.path(),
        "s.toml",
        &text.replace(from, &format!("draws = {draws}")),
    );
    let s = spec.to_str().unwrap();
    let o = run(&["--threads", "1", "--max-memory", "1", "check", s]);
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(5), "{err}");
    let mb: u64 = err
        .split("about ")
        .nth(1)
        .and_then(|s| s.split(' ').next())
        .and_then(|s| s.parse().ok())
        .expect("MB figure");
    let (ok, err, base) = run_peak(&["--threads", "1", "check", s], d.path());
    assert!(ok, "{err}");
    let out = d.path().join("out");
    let (ok, err, peak) = run_peak(
        &[
            "-q",
            "--threads",
            "1",
            "fit",
            s,
            "--out",
            out.to_str().unwrap(),
        ],
        d.path(),
    );
    assert!(ok, "{err}");
    let working = peak.saturating_sub(base);
    eprintln!(
        "draws {draws}: estimate {mb} MB, measured {:.1} MB (peak {:.1} MB − check {:.1} MB)",
        working as f64 / 1e6,
        peak as f64 / 1e6,
        base as f64 / 1e6
    );
    (mb * 1_000_000, working)
}

#[test]
#[ignore]
fn regularised_horseshoe_estimate_bounds_the_measured_peak() {
    let text = include_str!("../model-templates/logistic.toml");
    assert!(text.contains("regularised-horseshoe"));
    let (est, got) = measure(text, "draws = 4000", 20_000);
    assert!(got <= est, "measured {got} B above the estimate {est} B");
}

#[test]
#[ignore]
fn mixture_cure_estimate_bounds_the_measured_peak() {
    let (est, got) = measure(EXAMPLE, "draws = 20000", 200_000);
    assert!(got <= est, "measured {got} B above the estimate {est} B");
}

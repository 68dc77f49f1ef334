//! The working-memory estimate checked by `--max-memory` is an upper bound of
//! what a fit really holds: the real binary's peak resident size (getrusage
//! `ru_maxrss` of the child, the kernel's VmHWM) minus that of `check` on the
//! same file (the program and the input alone) must not exceed the estimate,
//! read from the limit message of `check --max-memory 1`. Slow (whole fits at
//! tens of thousands of draws): `cargo test --release --test memory_estimate --
//! --ignored`.

mod common;
use common::*;

/// Largest peak resident size (bytes) of any child waited for so far.
fn children_peak() -> u64 {
    // SAFETY: getrusage fills the struct it is given.
    let mut u: libc::rusage = unsafe { std::mem::zeroed() };
    assert_eq!(unsafe { libc::getrusage(libc::RUSAGE_CHILDREN, &mut u) }, 0);
    u.ru_maxrss as u64 * 1024
}

/// (estimate, measured working bytes) for `fit` of `text` at `draws`, one thread.
fn measure(text: &str, draws: usize) -> (u64, u64) {
    let d = tempfile::tempdir().unwrap();
    let spec = write(d.path(), "s.toml", text);
    let s = spec.to_str().unwrap();
    let n = draws.to_string();
    let o = run(&["--threads", "1", "--max-memory", "1", "check", s, "--draws", &n]);
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(5), "{err}");
    let mb: u64 = err
        .split("about ")
        .nth(1)
        .and_then(|s| s.split(' ').next())
        .and_then(|s| s.parse().ok())
        .expect("MB figure");
    let o = run(&["--threads", "1", "check", s, "--draws", &n]);
    assert!(o.status.success(), "{}", stderr(&o));
    let base = children_peak();
    let out = d.path().join("out");
    let o = run(&["-q", "--threads", "1", "fit", s, "--draws", &n, "--out", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let peak = children_peak();
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
    let (est, got) = measure(text, 20_000);
    assert!(got <= est, "measured {got} B above the estimate {est} B");
}

#[test]
#[ignore]
fn mixture_cure_estimate_bounds_the_measured_peak() {
    let (est, got) = measure(EXAMPLE, 200_000);
    assert!(got <= est, "measured {got} B above the estimate {est} B");
}

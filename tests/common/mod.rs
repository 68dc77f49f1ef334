//! Helpers for integration tests: run the real binary on temporary files.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

pub fn bin() -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_priorsmith"));
    c.env_remove("RUST_BACKTRACE");
    c
}

pub fn run(args: &[&str]) -> Output {
    bin().args(args).output().expect("binary runs")
}

pub fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).to_string()
}

pub fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).to_string()
}

pub fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).expect("write temp file");
    p
}

pub fn json(path: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path).expect("read json")).expect("parse json")
}

/// The starter shipped for the mixture-cure template (the README example).
pub const EXAMPLE: &str = include_str!("../../model-templates/mixture-cure.toml");

/// `check` and `fit` on `spec` must both fail with exit `code`, name `file_named`,
/// print every needle, print no panic text and create no output folder.
pub fn assert_rejected(dir: &Path, spec: &Path, file_named: &str, code: i32, needles: &[&str]) {
    for cmd in ["check", "fit"] {
        let out = dir.join("out");
        let mut args = vec![cmd, spec.to_str().unwrap()];
        if cmd == "fit" {
            args.extend(["--out", out.to_str().unwrap()]);
        }
        let r = run(&args);
        let err = stderr(&r);
        assert_eq!(r.status.code(), Some(code), "{cmd}: {err}");
        assert!(!err.contains("panicked"), "{cmd} panicked: {err}");
        assert!(err.contains(file_named), "{cmd}: no file name in {err}");
        for n in needles {
            assert!(err.contains(n), "{cmd}: expected {n:?} in\n{err}");
        }
        assert!(
            !out.exists(),
            "{cmd}: output folder created despite the error"
        );
    }
}

/// Compare `got` with the golden file `tests/golden/REL` (written by our own
/// exporter and reviewed by hand; `PRIORSMITH_BLESS=1` rewrites it first); a
/// difference fails with "`what` differs from PATH".
pub fn assert_golden(got: &str, rel: &str, what: &str) {
    let golden = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/golden")
        .join(rel);
    if std::env::var_os("PRIORSMITH_BLESS").is_some() {
        std::fs::create_dir_all(golden.parent().unwrap()).unwrap();
        std::fs::write(&golden, got).unwrap();
    }
    let want = std::fs::read_to_string(&golden).unwrap_or_default();
    assert_eq!(got, want, "{what} differs from {}", golden.display());
}

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

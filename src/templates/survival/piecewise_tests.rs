//! Unit checks of the piecewise-exponential template (see tests/piecewise.rs
//! for the binary).
use super::*;

#[test]
fn placeholder_builds() {}

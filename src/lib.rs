//! priorsmith: choose prior hyperparameters from beliefs about the quantities a
//! model implies.
//!
//! Data flow, one way: belief file ([`spec`]) → validated [`spec::Spec`] with a
//! template's [`templates::Model`] and tabulated beliefs ([`target`]) → the
//! deterministic objective on common random numbers ([`fit::objective`]) →
//! optimiser ([`fit`]) → [`fit::FitResult`] → writers ([`output`]). The command
//! line is the binary's own module (`src/cli/`) and uses only what this library
//! exposes.

pub mod batch;
pub mod cancel;
pub mod conflict;
pub mod demo;
pub mod design;
pub mod discrepancy;
pub mod dist;
pub mod error;
pub mod export;
pub mod fit;
pub mod history;
pub mod input;
pub mod limits;
pub mod numerics;
pub mod output;
pub mod report;
pub mod rng;
pub mod simulate;
pub mod spec;
pub mod sweep;
pub mod target;
pub mod templates;

pub use error::{Error, Result};

//! The fit record's types: what a fit produces (see [`super::record`] for how
//! it is written and read).

use super::{diagnostics, pareto, replicate, simplex, verdict};
use crate::discrepancy::Kind;
use crate::rng;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use verdict::{BeliefReport, Verdict};

/// One local search, for the record.
/// A stage of the optimiser, for the record.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Stage {
    /// Nelder–Mead on the coarse draws.
    #[serde(rename = "coarse")]
    Coarse,
    /// Newton's method at full draws.
    #[serde(rename = "newton")]
    Newton,
    /// Newton, then Nelder–Mead at full draws.
    #[serde(rename = "newton+simplex")]
    NewtonSimplex,
    /// Nelder–Mead at full draws (warm starts).
    #[serde(rename = "full")]
    Full,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct SearchRecord {
    pub stage: Stage,
    pub start: usize,
    #[serde(with = "crate::numerics::ext::num")]
    pub cost: f64,
    pub iterations: u64,
    pub stop: simplex::Stop,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Totals {
    #[serde(with = "crate::numerics::ext::num")]
    pub in_sample: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub fresh: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub noise_floor: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct OptimiserRecord {
    pub evaluations: u64,
    pub starts: usize,
    pub coarse_draws: usize,
    pub searches: Vec<SearchRecord>,
}

/// The tie-break a fit applied.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum TieBreakUsed {
    /// None: no direction was flat, or `tie_break = "off"`.
    Off,
    /// The widest prior within one reference floor of the best.
    Widest,
    /// The knee of the Pareto front.
    Knee,
    /// A fixed weight κ on the secondary objective (noise floors).
    Kappa(f64),
}

impl TieBreakUsed {
    pub fn words(&self) -> String {
        match self {
            TieBreakUsed::Off => "off".into(),
            TieBreakUsed::Widest => "widest".into(),
            TieBreakUsed::Knee => "knee".into(),
            TieBreakUsed::Kappa(k) => format!("kappa {k}"),
        }
    }
}

/// The outcome of a fit: what the writers need, and nothing of the spec's raw
/// form. It is the fit record: `fit.json` is this struct, written and read only
/// through [`record`] (versioned by [`record::SCHEMA_VERSION`]).
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct FitResult {
    /// Version of the fit.json layout ([`record::SCHEMA_VERSION`]).
    pub schema_version: u32,
    pub title: String,
    pub template: String,
    pub spec_digest: String,
    pub seed: u64,
    pub draws: usize,
    pub discrepancy: Kind,
    /// Every hyperparameter (fixed ones too), keyed `<parameter>.<hyperparameter>`.
    pub hyperparameters: BTreeMap<String, f64>,
    /// Order of the hyperparameters as the template defines them.
    pub order: Vec<String>,
    pub free: Vec<String>,
    pub bounds: BTreeMap<String, (f64, f64)>,
    pub beliefs: Vec<BeliefReport>,
    pub total: Totals,
    pub verdict: Verdict,
    /// `[fit] tolerance`: the largest root-mean-square CDF gap counted as "met
    /// approximately" (kept so outputs can show how near a verdict is to it).
    #[serde(with = "crate::numerics::ext::num")]
    pub tolerance: f64,
    pub optimiser: OptimiserRecord,
    #[serde(with = "crate::numerics::ext::num")]
    pub wall_time_s: f64,
    pub prior: Vec<crate::templates::PriorStatement>,
    pub tool_version: String,
    /// Curvature analysis at the optimum: which hyperparameters the beliefs leave undetermined.
    pub identifiability: diagnostics::Identifiability,
    /// What the tie-break did.
    pub tie_break: TieBreakUsed,
    /// The Pareto front between discrepancy and spread, when traced.
    pub pareto: Option<pareto::Front>,
    /// Spread of the fitted hyperparameters across independent seeds, when asked.
    pub replicates: Option<replicate::Replicates>,
    /// What set each hyperparameter: beliefs, tie-break, bound, undetermined, fixed.
    pub set_by: BTreeMap<String, SetBy>,
    /// Monte Carlo standard error of each free hyperparameter on its own scale
    /// (null: undetermined and not settled by a tie-break).
    pub mc_error: BTreeMap<String, Option<f64>>,
    /// How the number of draws was chosen.
    pub draws_chosen: DrawsRecord,
    /// The template's likelihood code (language → section → lines), for
    /// `export --with-likelihood`; absent for templates that supply none.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub likelihood: Option<crate::templates::Code>,
    /// Fresh draws of each belief's quantity at the fitted prior (not serialised).
    #[serde(skip)]
    pub draws_fresh: Vec<Vec<f64>>,
    #[serde(skip)]
    pub full: Vec<f64>,
}

/// How the number of draws was chosen: fixed by the file or the command line, or
/// raised by precision mode until every determined hyperparameter's Monte Carlo
/// error met its target.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct DrawsRecord {
    pub mode: DrawsMode,
    /// The fitting draws' points.
    pub points: rng::Points,
    /// Precision mode's relative target (its location target is
    /// min(0.1·δ*, 0.005) on the optimiser's scale).
    pub target: Option<f64>,
    /// Each fit made: (draws, largest error / target).
    pub steps: Vec<(usize, f64)>,
    /// Whether the last fit met the target (always true in fixed mode).
    pub reached: bool,
}

/// How the number of draws was set.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum DrawsMode {
    /// By `draws` in the file or on the command line.
    Fixed,
    /// Raised by precision mode.
    Precision,
}

/// What set a hyperparameter's value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum SetBy {
    /// The beliefs determine it (the optimum).
    Beliefs,
    /// The beliefs leave it (nearly) undetermined; the tie-break chose it.
    TieBreak,
    /// It sits at a bound: the beliefs push it there, or the tie-break ran to it.
    Bound,
    /// Undetermined, and no tie-break ran (`tie_break = "off"`): arbitrary.
    Undetermined,
    /// Fixed in the belief file.
    Fixed,
}

impl SetBy {
    pub fn words(&self) -> &'static str {
        match self {
            SetBy::Beliefs => "beliefs",
            SetBy::TieBreak => "tie-break",
            SetBy::Bound => "bound",
            SetBy::Undetermined => "undetermined",
            SetBy::Fixed => "fixed",
        }
    }
}

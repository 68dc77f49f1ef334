//! Model templates: parameters, their priors, a simulator and derived quantities.
//!
//! A template turns the `[model]` and `[prior.*]` tables into a [`Model`]: an
//! ordered list of hyperparameters (fixed or free), a generator of base variates
//! drawn once per fit (common random numbers), and a simulator mapping a full
//! hyperparameter vector plus base variates to draws of each requested derived
//! quantity. Templates never see the command line, and read the belief file only
//! through [`crate::input`] (never `spec`, which builds on them).
//!
//! A template owns everything about itself: its quantity table ([`quantity`]),
//! its registry entry [`TemplateInfo`] (catalogue, starter text, `build`, brms
//! layout) and its [`Model`]. A model validates each belief's request without
//! changing ([`Model::request`]), is prepared once for all of them
//! ([`Model::prepare`]), then draws and simulates from plain fields.
//!
//! To add a template: write `src/templates/<name>.rs` with its quantity table, a
//! `pub static INFO: TemplateInfo` and a struct implementing [`Model`], a starter
//! file `model-templates/<name>.toml` (compiled into `INFO`), and add one line to
//! [`TEMPLATES`] (DEVELOPERS.md, "Add a model template").

pub mod linear;
pub mod linear_multilevel;
pub mod logistic;
pub mod logistic_multilevel;
pub mod poisson;
pub mod poisson_multilevel;
pub mod priors;
pub mod quantity;
pub mod regression;
pub mod survival;

use crate::dist::Support;
use crate::error::Result;
use crate::input::raw::RawBelief;
use crate::input::{Ctx, Seg};
use std::any::Any;

pub use crate::input::HyperValue;
pub use priors::{PriorSet, ScalarPrior};
pub use quantity::{At, Detail, QuantityDef};

/// One hyperparameter, named `<parameter>.<hyperparameter>` (e.g. `cure_logit.mean`).
#[derive(Debug, Clone, serde::Serialize)]
pub struct Hyper {
    pub name: String,
    pub value: HyperValue,
    /// Optimise on the log scale within the bounds (positive bounds spanning ≥ 100×).
    pub log_scale: bool,
}

impl Hyper {
    pub fn new(name: String, value: HyperValue) -> Self {
        let log_scale =
            matches!(value, HyperValue::Free { lo, hi, .. } if lo > 0.0 && hi / lo >= 100.0);
        Self {
            name,
            value,
            log_scale,
        }
    }
    pub fn is_free(&self) -> bool {
        matches!(self.value, HyperValue::Free { .. })
    }
    /// A representative value: the fixed value, the start, or the bounds' centre.
    pub fn default_value(&self) -> f64 {
        match self.value {
            HyperValue::Fixed(v) => v,
            HyperValue::Free { start: Some(s), .. } => s,
            HyperValue::Free { lo, hi, .. } => {
                if self.log_scale {
                    (lo * hi).sqrt()
                } else {
                    0.5 * (lo + hi)
                }
            }
        }
    }
}

/// A validated request for draws of one derived quantity.
#[derive(Debug, Clone)]
pub struct Request {
    pub quantity: String,
    /// The template's own description: its quantity and what it resolved.
    pub detail: Detail,
    pub horizon: Option<f64>,
    /// Resolved covariate vectors (one, or two for a contrast).
    pub profiles: Vec<Vec<f64>>,
    pub profile_names: Vec<String>,
    pub support: Support,
    /// Whether +∞ is a possible value (e.g. a median never reached).
    pub allows_inf: bool,
    pub label: String,
    pub unit: Option<String>,
}

/// Catalogue entry for a derived quantity.
#[derive(Debug, Clone, Copy, serde::Serialize)]
pub struct QuantityInfo {
    pub name: &'static str,
    pub about: &'static str,
    pub needs: &'static str,
}

impl QuantityInfo {
    pub const fn new(name: &'static str, about: &'static str, needs: &'static str) -> Self {
        Self { name, about, needs }
    }
}

/// Catalogue entry for a template.
pub struct TemplateInfo {
    pub name: &'static str,
    pub about: &'static str,
    /// Parameters and what they mean.
    pub parameters: &'static [(&'static str, &'static str)],
    pub quantities: &'static [QuantityInfo],
    /// Keys of the `[model]` table and what they mean.
    pub options: &'static [(&'static str, &'static str)],
    /// Commented starter file (compiled in).
    pub starter: &'static str,
    pub build: fn(&Ctx) -> Result<Box<dyn Model>>,
    /// How brms states the template's scalar parameters.
    pub brms: &'static BrmsLayout,
}

/// How brms states a template's scalar parameters: read by `export::brms`, which
/// finds it by the template name recorded in fit.json ([`brms_layout`]).
pub struct BrmsLayout {
    /// Comment lines above the prior list: the `brm()` call the priors belong to.
    pub usage: &'static [&'static str],
    /// Parameters that are brms classes of their own; every other scalar
    /// parameter is a non-linear parameter (class "b", `nlpar`).
    pub classes: &'static [BrmsClass],
    /// Scalar parameters named `<prefix><column>` are single population-level
    /// coefficients: `set_prior(…, class = "b", coef = "<column>")`.
    pub coef_prefix: Option<&'static str>,
    /// Scalar parameters named `<prefix>…` that the template's supplied brms
    /// code states itself (random-slope sds, which need their group): the brms
    /// export writes nothing else for them.
    pub code_prefix: Option<&'static str>,
}

/// A parameter that brms knows as a class of its own.
pub struct BrmsClass {
    pub parameter: &'static str,
    pub class: &'static str,
    /// brms takes no bounds for the class: what to say when the prior has them.
    /// `None`: the class has its bounds built in (nothing written, nothing said).
    pub bounds_note: Option<&'static str>,
}

impl BrmsLayout {
    /// Every parameter a non-linear parameter of an intercept-only formula.
    pub const NONLINEAR: BrmsLayout = BrmsLayout {
        usage: &[
            "Each parameter is a non-linear parameter (class \"b\") of an intercept-only formula,",
            "e.g. bf(y ~ <your model in these parameters>, cureLogit ~ 1, nl = TRUE);",
            "change class / nlpar to match your model. Pass `prior = priors` to brm().",
        ],
        classes: &[],
        coef_prefix: None,
        code_prefix: None,
    };

    /// The class of `parameter`, when brms has one for it.
    pub fn class(&self, parameter: &str) -> Option<&'static BrmsClass> {
        self.classes.iter().find(|c| c.parameter == parameter)
    }
}

/// The brms layout of the template named `template` ([`BrmsLayout::NONLINEAR`]
/// for a name this version does not know).
pub fn brms_layout(template: &str) -> &'static BrmsLayout {
    find(template).map_or(&BrmsLayout::NONLINEAR, |t| t.brms)
}

impl TemplateInfo {
    pub fn quantity_names(&self) -> Vec<&'static str> {
        self.quantities.iter().map(|q| q.name).collect()
    }
}

/// Base variates drawn once per fit. `cols` holds one column per source of
/// randomness; `extra` lets a template cache λ-independent work.
pub struct BaseDraws {
    pub n: usize,
    pub cols: Vec<Vec<f64>>,
    pub extra: Option<Box<dyn Any + Send + Sync>>,
}

/// Template-supplied export code: language (`stan`, `pymc`, `brms`) → section →
/// lines (see `crate::export` for the sections each language reads).
pub type Code = std::collections::BTreeMap<String, std::collections::BTreeMap<String, Vec<String>>>;

/// A prior statement for reports and code export: parameter, family, values, and
/// optionally the template's own code for it (vector priors, transformed scales).
#[derive(Debug, Clone, serde::Serialize, serde::Deserialize)]
pub struct PriorStatement {
    pub parameter: String,
    /// Empty when the template supplies its own code.
    #[serde(default)]
    pub family: String,
    #[serde(default)]
    pub params: Vec<(String, f64)>,
    #[serde(default)]
    pub about: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub code: Option<Code>,
}

/// A template instantiated from a belief file.
pub trait Model: Send + Sync {
    fn template(&self) -> &'static str;
    /// All hyperparameters, fixed and free, in a fixed order.
    fn hypers(&self) -> &[Hyper];
    /// Validate a belief's quantity and its options (horizon, profile …) and say
    /// what it needs; the model is not changed.
    fn request(&self, ctx: &Ctx, path: &[Seg], quantity: &str, raw: &RawBelief) -> Result<Request>;
    /// Prepare for the validated requests: called once, after every belief is
    /// validated and before any base draws, with every request the beliefs made
    /// (e.g. the regression templates record which design products to compute).
    fn prepare(&mut self, _requests: &[&Request]) -> Result<()> {
        Ok(())
    }
    /// Beliefs the template cannot meet at any hyperparameters, each named with
    /// its remedy (e.g. a non-null median under a prior symmetric about zero).
    /// Called once the model is prepared; `spec` keeps the messages and `check`
    /// and `fit` print them before fitting. Default: none.
    fn warnings(&self, _beliefs: &[(&Request, &crate::target::Target)]) -> Vec<String> {
        Vec::new()
    }
    /// Base variates for `n` draws from the streams (and points) of `plan`.
    fn draw_base(&self, n: usize, plan: &crate::rng::Plan) -> BaseDraws;
    /// Draws of each requested quantity at hyperparameters `h` (full vector).
    /// `out[r]` has length `base.n` on return.
    fn simulate(
        &self,
        h: &[f64],
        base: &BaseDraws,
        reqs: &[&Request],
        out: &mut [Vec<f64>],
    ) -> Result<()>;
    /// The prior at hyperparameters `h`, one statement per parameter.
    fn priors(&self, h: &[f64]) -> Vec<PriorStatement>;
    /// Mean log standard deviation of the prior's components at `h` (the spread
    /// the tie-breaking objective rewards; see `fit::pareto`).
    fn spread(&self, h: &[f64]) -> f64;
    /// The likelihood matching the template's parameterisation, as export code
    /// (language → section → lines; see `crate::export::likelihood`), or `None`
    /// when the template supplies none.
    fn likelihood(&self) -> Option<Code> {
        None
    }
    /// Estimated bytes [`Model::draw_base`] and one simulation allocate for `n`
    /// draws, and what they scale with (checked against [`crate::limits`] before a
    /// fit starts; 0 = small).
    fn working_bytes(&self, _n: usize) -> (u64, String) {
        (0, String::new())
    }
}

/// Bytes a fit holds at its peak when one set of base draws (with one
/// simulation's buffers) costs `per_draw` bytes a draw, plus `once` bytes held
/// once (a table built on the fitting draws, the design). A fit holds, at the
/// Monte Carlo error step, the full fitting set (n draws), the coarse set of
/// the global search (`fit::optimise::coarse_draws`: at most
/// next_power_of_two(max(n/5, 2000)), never above n) and one replicate set per
/// worker thread (at most 8 replicates, in parallel); afterwards the fitting
/// and the fresh sets (2n). The larger of the two, plus 15 % for allocator
/// overhead and transient buffers not itemised (the measured gap was 3–7 %:
/// tests/memory_estimate.rs).
pub fn fit_peak_bytes(n: usize, per_draw: u64, once: u64) -> u64 {
    let n = n as u64;
    let coarse = (n / 5).max(2000).next_power_of_two().min(n);
    let threads = (rayon::current_num_threads() as u64).clamp(1, 8);
    let sets = (n + coarse + threads * n).max(2 * n);
    let raw = sets.saturating_mul(per_draw).saturating_add(once);
    raw.saturating_add(raw / 100 * 15)
}

/// All templates. Adding a template adds one line here.
pub static TEMPLATES: &[&TemplateInfo] = &[
    &survival::mixture_cure::INFO,
    &survival::promotion_time::INFO,
    &survival::parametric::INFO,
    &survival::piecewise::INFO,
    &linear::INFO,
    &logistic::INFO,
    &poisson::INFO,
    &linear_multilevel::INFO,
    &logistic_multilevel::INFO,
    &poisson_multilevel::INFO,
];

pub fn find(name: &str) -> Option<&'static TemplateInfo> {
    TEMPLATES.iter().copied().find(|t| t.name == name)
}

pub fn names() -> Vec<&'static str> {
    TEMPLATES.iter().map(|t| t.name).collect()
}

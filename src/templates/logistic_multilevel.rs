//! Logistic regression with random intercepts: P(y_ij = 1) = logistic(α + u_j + (x_ij − x̄)ᵀβ), with a random intercept u_j ~ N(0, σ_u²) per cluster
//! (`[design]` `group` column or `clusters = J`), a prior on σ_u (`[prior.cluster_sd]`)
//! fitted from beliefs about the intraclass correlation, the median odds ratio, the spread of
//! cluster-level event risk and the marginal and conditional R², and a shrinkage prior on β.
//! Optional random slopes, uncorrelated with the intercepts: `[prior.cluster_slope_sd.NAME]`
//! per covariate, fitted from `slope_spread` beliefs.
//! Machinery, formulas and references: [`super::regression`] and
//! [`super::regression::multilevel`].

use super::logistic::{Q_EVENT_PROB, Q_ODDS_RATIO};
use super::quantity::catalogue;
use super::regression::multilevel::{
    q_slope_spread, q_spread, Q_ICC, Q_MOR, Q_R2_COND, Q_R2_FIXED,
};
use super::regression::{self, q_mean, Link, RegDef, Q_EFF, Q_SIGNAL};
use super::{Model, TemplateInfo};
use crate::dist::Support;
use crate::error::Result;
use crate::input::Ctx;

/// The quantity table (the catalogue lists it in this order).
static QUANTITIES: [RegDef; 11] = [
    Q_ICC,
    Q_MOR,
    q_spread(
        "5–95 % range of cluster event risk at a profile",
        Support::Unit,
    ),
    Q_R2_FIXED,
    Q_R2_COND,
    q_slope_spread(
        "5–95 % range over clusters of the odds ratio for a contrast with a random slope",
    ),
    Q_EVENT_PROB,
    Q_ODDS_RATIO,
    q_mean(Support::Unit),
    Q_SIGNAL,
    Q_EFF,
];

pub static INFO: TemplateInfo = TemplateInfo {
    name: "logistic-multilevel",
    about: "logistic regression with a random intercept per cluster and a shrinkage prior on the coefficients",
    parameters: &[
        ("intercept", "log-odds of the event at the design mean in a typical cluster (u = 0)"),
        ("cluster_sd", "sd σ_u of the random intercepts (any family on (0, ∞): half-normal, half-student-t, half-cauchy, exponential, …)"),
        ("cluster_slope_sd.NAME", "sd σ_v of a random slope of design column NAME, one table per slope (optional; any family on (0, ∞))"),
        ("coefficients", "shrinkage prior: normal | student-t | laplace | horseshoe | regularised-horseshoe | r2d2 | spike-and-slab"),
        ("NAME", "a design column: a prior of its own for its coefficient, per unit as given (or [prior.LABEL] with covariates = [...])"),
    ],
    quantities: &catalogue(&QUANTITIES),
    options: &[("template", "\"logistic-multilevel\"")],
    starter: include_str!("../../model-templates/logistic-multilevel.toml"),
    build,
    brms: &regression::code::BRMS_MULTILEVEL,
};

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    regression::build_with(ctx, &INFO, Link::Logit, &QUANTITIES, true)
}

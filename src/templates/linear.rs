//! Linear (Gaussian) regression: y = α + (x − x̄)ᵀβ + ε, ε ~ N(0, σ²), with a
//! shrinkage prior on β chosen from beliefs about R², the signal and the mean
//! response. Machinery, formulas and references: [`super::regression`].

use super::quantity::catalogue;
use super::regression::{
    self, q_mean, Link, RegDef, Q_EFF, Q_R2, Q_R2_MARGINAL, Q_R2_SHARE, Q_SIGNAL,
};
use super::{Model, TemplateInfo};
use crate::dist::Support;
use crate::error::Result;
use crate::input::Ctx;

/// The quantity table (the catalogue lists it in this order).
static QUANTITIES: [RegDef; 6] = [
    Q_R2,
    Q_R2_MARGINAL,
    Q_R2_SHARE,
    Q_EFF,
    q_mean(Support::Real),
    Q_SIGNAL,
];

pub static INFO: TemplateInfo = TemplateInfo {
    name: "linear",
    about: "Gaussian linear regression over a design, with a shrinkage prior on the coefficients",
    parameters: &[
        ("intercept", "mean response at the design mean"),
        ("sigma", "noise sd (inverse-gamma: a prior on the variance σ²)"),
        ("coefficients", "shrinkage prior: normal | student-t | laplace | horseshoe | regularised-horseshoe | r2d2 | spike-and-slab"),
    ],
    quantities: &catalogue(&QUANTITIES),
    options: &[("template", "\"linear\"")],
    starter: include_str!("../../model-templates/linear.toml"),
    build,
    brms: &regression::code::BRMS,
};

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    regression::build(ctx, &INFO, Link::Identity, &QUANTITIES)
}

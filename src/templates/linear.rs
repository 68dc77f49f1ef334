//! Linear (Gaussian) regression: y = α + (x − x̄)ᵀβ + ε, ε ~ N(0, σ²), with a
//! shrinkage prior on β chosen from beliefs about R², the signal and the mean
//! response. Machinery, formulas and references: [`super::regression`].

use super::regression::{self, Link, Q_EFF, Q_MEAN, Q_R2, Q_R2_MARGINAL, Q_SIGNAL};
use super::{Model, TemplateInfo};
use crate::error::Result;
use crate::input::Ctx;

pub static INFO: TemplateInfo = TemplateInfo {
    name: "linear",
    about: "Gaussian linear regression over a design, with a shrinkage prior on the coefficients",
    parameters: &[
        ("intercept", "mean response at the design mean"),
        ("sigma", "noise sd (inverse-gamma: a prior on the variance σ²)"),
        ("coefficients", "shrinkage prior: normal | student-t | laplace | horseshoe | regularised-horseshoe | r2d2 | spike-and-slab"),
    ],
    quantities: &[Q_R2, Q_R2_MARGINAL, Q_EFF, Q_MEAN, Q_SIGNAL],
    options: &[("template", "\"linear\"")],
    starter: include_str!("../../model-templates/linear.toml"),
    build,
};

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    regression::build(ctx, &INFO, Link::Identity)
}

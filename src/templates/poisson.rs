//! Poisson regression with log link: E[y | x] = exposure · exp(α + (x − x̄)ᵀβ),
//! with an optional fixed exposure (a log offset, `[model] exposure`), and a
//! shrinkage prior on β chosen from beliefs about R², rates and rate ratios.
//! Machinery, formulas and references: [`super::regression`].

use super::regression::{self, Link, Q_EFF, Q_MEAN, Q_R2, Q_R2_MARGINAL, Q_SIGNAL};
use super::{Model, QuantityInfo, TemplateInfo};
use crate::error::Result;
use crate::input::Ctx;

pub static INFO: TemplateInfo = TemplateInfo {
    name: "poisson",
    about: "Poisson (log-link) regression over a design, with a shrinkage prior on the coefficients",
    parameters: &[
        ("intercept", "log rate per unit exposure at the design mean"),
        ("coefficients", "shrinkage prior: normal | student-t | laplace | horseshoe | regularised-horseshoe | r2d2 | spike-and-slab"),
    ],
    quantities: &[
        Q_R2,
        Q_R2_MARGINAL,
        Q_EFF,
        Q_MEAN,
        QuantityInfo {
            name: "rate",
            about: "rate per unit exposure at a profile, exp(η)",
            needs: "profile (optional; default: design mean)",
        },
        QuantityInfo {
            name: "rate_ratio",
            about: "rate ratio for a contrast, exp(δ·β)",
            needs: "contrast = \"NAME\" or \"NAME:DELTA\"",
        },
        Q_SIGNAL,
    ],
    options: &[
        ("template", "\"poisson\""),
        ("exposure", "exposure of every design row (offset log exposure; default 1); mean_response = exposure · rate"),
    ],
    starter: include_str!("../../model-templates/poisson.toml"),
    build,
};

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    regression::build(ctx, &INFO, Link::Log)
}

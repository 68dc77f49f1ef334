//! Poisson regression with log link: E[y | x] = exposure · exp(α + (x − x̄)ᵀβ),
//! with an optional fixed exposure (a log offset, `[model] exposure`), and a
//! shrinkage prior on β chosen from beliefs about R², rates and rate ratios.
//! Machinery, formulas and references: [`super::regression`].

use super::quantity::catalogue;
use super::regression::quantity::{AT_PROFILE, FOR_CONTRAST};
use super::regression::{
    self, q_mean, Link, RegDef, RegQuantity, Q_EFF, Q_R2, Q_R2_MARGINAL, Q_R2_SHARE, Q_SIGNAL,
};
use super::{At, Model, QuantityDef, QuantityInfo, TemplateInfo};
use crate::dist::Support;
use crate::error::Result;
use crate::input::Ctx;

/// The quantity table (the catalogue lists it in this order).
static QUANTITIES: [RegDef; 8] = [
    Q_R2,
    Q_R2_MARGINAL,
    Q_R2_SHARE,
    Q_EFF,
    q_mean(Support::Positive),
    Q_RATE,
    Q_RATE_RATIO,
    Q_SIGNAL,
];

pub const Q_RATE: RegDef = QuantityDef::new(
    RegQuantity::Rate,
    QuantityInfo::new(
        "rate",
        "rate per unit exposure at a profile, exp(η)",
        AT_PROFILE,
    ),
    At::Profile,
    Support::Positive,
);

pub const Q_RATE_RATIO: RegDef = QuantityDef::new(
    RegQuantity::RateRatio,
    QuantityInfo::new(
        "rate_ratio",
        "rate ratio for a contrast, exp(δ·β)",
        FOR_CONTRAST,
    ),
    At::Contrast,
    Support::Positive,
);

pub static INFO: TemplateInfo = TemplateInfo {
    name: "poisson",
    about: "Poisson (log-link) regression over a design, with a shrinkage prior on the coefficients",
    parameters: &[
        ("intercept", "log rate per unit exposure at the design mean"),
        ("coefficients", "shrinkage prior: normal | student-t | laplace | horseshoe | regularised-horseshoe | r2d2 | spike-and-slab"),
    ],
    quantities: &catalogue(&QUANTITIES),
    options: &[
        ("template", "\"poisson\""),
        ("exposure", "exposure of every design row (offset log exposure; default 1); mean_response = exposure · rate"),
    ],
    starter: include_str!("../../model-templates/poisson.toml"),
    build,
    brms: &regression::code::BRMS,
};

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    regression::build(ctx, &INFO, Link::Log, &QUANTITIES)
}

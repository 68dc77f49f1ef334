//! Logistic regression: P(y = 1 | x) = logistic(α + (x − x̄)ᵀβ), with a shrinkage
//! prior on β chosen from beliefs about R² (Bayesian, latent), baseline risk,
//! prevalence and odds ratios. Machinery, formulas and references:
//! [`super::regression`].

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
static QUANTITIES: [RegDef; 10] = [
    Q_R2,
    Q_R2_MARGINAL,
    Q_R2_SHARE,
    QuantityDef::new(
        RegQuantity::R2Latent,
        QuantityInfo::new(
            "r2_latent",
            "McKelvey–Zavoina R²: var(η)/(var(η) + π²/3)",
            "",
        ),
        At::Design,
        Support::Unit,
    ),
    Q_EFF,
    q_mean(Support::Unit),
    Q_EVENT_PROB,
    QuantityDef::new(
        RegQuantity::Prevalence,
        QuantityInfo::new(
            "prevalence",
            "mean event probability over the design rows",
            "",
        ),
        At::Design,
        Support::Unit,
    ),
    Q_ODDS_RATIO,
    Q_SIGNAL,
];

pub const Q_EVENT_PROB: RegDef = QuantityDef::new(
    RegQuantity::EventProb,
    QuantityInfo::new(
        "event_prob",
        "event probability at a profile, logistic(η)",
        AT_PROFILE,
    ),
    At::Profile,
    Support::Unit,
);

pub const Q_ODDS_RATIO: RegDef = QuantityDef::new(
    RegQuantity::OddsRatio,
    QuantityInfo::new(
        "odds_ratio",
        "odds ratio for a contrast, exp(δ·β)",
        FOR_CONTRAST,
    ),
    At::Contrast,
    Support::Positive,
);

/// The quantity table, for the regression tests that build the model directly.
#[cfg(test)]
pub static QUANTITIES_FOR_TESTS: &[RegDef] = &QUANTITIES;

pub static INFO: TemplateInfo = TemplateInfo {
    name: "logistic",
    about: "logistic regression over a design, with a shrinkage prior on the coefficients",
    parameters: &[
        ("intercept", "log-odds of the event at the design mean"),
        ("coefficients", "shrinkage prior: normal | student-t | laplace | horseshoe | regularised-horseshoe | r2d2 | spike-and-slab"),
    ],
    quantities: &catalogue(&QUANTITIES),
    options: &[("template", "\"logistic\"")],
    starter: include_str!("../../model-templates/logistic.toml"),
    build,
    brms: &regression::code::BRMS,
};

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    regression::build(ctx, &INFO, Link::Logit, &QUANTITIES)
}

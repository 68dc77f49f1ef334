//! Logistic regression: P(y = 1 | x) = logistic(α + (x − x̄)ᵀβ), with a shrinkage
//! prior on β chosen from beliefs about R² (Bayesian, latent), baseline risk,
//! prevalence and odds ratios. Machinery, formulas and references:
//! [`super::regression`].

use super::regression::{self, Link, Q_EFF, Q_MEAN, Q_R2, Q_R2_MARGINAL, Q_SIGNAL};
use super::{Model, QuantityInfo, TemplateInfo};
use crate::error::Result;
use crate::input::Ctx;

pub static INFO: TemplateInfo = TemplateInfo {
    name: "logistic",
    about: "logistic regression over a design, with a shrinkage prior on the coefficients",
    parameters: &[
        ("intercept", "log-odds of the event at the design mean"),
        ("coefficients", "shrinkage prior: normal | student-t | laplace | horseshoe | regularised-horseshoe | r2d2 | spike-and-slab"),
    ],
    quantities: &[
        Q_R2,
        Q_R2_MARGINAL,
        QuantityInfo {
            name: "r2_latent",
            about: "McKelvey–Zavoina R²: var(η)/(var(η) + π²/3)",
            needs: "",
        },
        Q_EFF,
        Q_MEAN,
        QuantityInfo {
            name: "event_prob",
            about: "event probability at a profile, logistic(η)",
            needs: "profile (optional; default: design mean)",
        },
        QuantityInfo {
            name: "prevalence",
            about: "mean event probability over the design rows",
            needs: "",
        },
        QuantityInfo {
            name: "odds_ratio",
            about: "odds ratio for a contrast, exp(δ·β)",
            needs: "contrast = \"NAME\" or \"NAME:DELTA\"",
        },
        Q_SIGNAL,
    ],
    options: &[("template", "\"logistic\"")],
    starter: include_str!("../../model-templates/logistic.toml"),
    build,
};

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    regression::build(ctx, &INFO, Link::Logit)
}

//! Promotion-time (non-mixture) cure template (Yakovlev & Tsodikov 1996,
//! Stochastic Models of Tumor Latency and Their Biostatistical Applications;
//! Chen, Ibrahim & Sinha 1999, JASA 94): population survival
//! S(t) = exp(−θ·F(t)), with θ = exp(log_theta + x'β_theta) the mean number of
//! clonogenic cells and F = 1 − S_u the promotion-time distribution, any latency
//! of [`super::latency`] (scale λ = exp(log_scale + x'β_latency −
//! x'β_hazard/k), shape k). The cured fraction is S(∞) = exp(−θ); the prior
//! may instead be on it at the reference profile (`[prior.cure_fraction]`, a
//! family on (0, 1)), with log_theta = ln(−ln π).
//!
//! The population hazard is θ·f(t): a covariate on θ alone is a proportional-
//! hazards effect, so `hazard_ratio` between profiles that differ only in θ is
//! θ_a/θ_b at every t (no horizon needed). The uncured's survival is
//! (S − e^{−θ})/(1 − e^{−θ}); its median solves F(t) = −ln(1 + expm1(−θ)/2)/θ.
//! The population median is never reached when θ ≤ ln 2 (cure ≥ ½).
//! RMST is ∫₀ʰ exp(−θF) by 32-point Gauss–Legendre.

use super::{build as build_survival, Cure, SurvQuantity};
use crate::error::Result;
use crate::input::Ctx;
use crate::templates::quantity::catalogue;
use crate::templates::{Model, QuantityDef, TemplateInfo};

pub static INFO: TemplateInfo = TemplateInfo {
    name: "promotion-time-cure",
    about: "promotion-time (non-mixture) cure: S(t) = exp(−θF(t)), cured fraction exp(−θ)",
    parameters: &[
        (
            "log_theta",
            "log of θ at the reference profile (cured fraction exp(−θ))",
        ),
        (
            "cure_fraction",
            "instead of log_theta: the cured fraction exp(−θ) itself at the reference profile (a family on (0, 1), e.g. beta)",
        ),
        (
            "log_scale",
            "log of the scale of the promotion-time distribution F, in time_unit",
        ),
        ("shape", "shape of F (not for exponential)"),
        (
            "theta_effect_<c>",
            "effect of covariate c on log θ (log hazard ratio)",
        ),
        (
            "latency_effect_<c>",
            "effect of covariate c on log_scale (log time ratio of F)",
        ),
        (
            "hazard_effect_<c>",
            "effect of covariate c on the log hazard of F (weibull, exponential)",
        ),
    ],
    quantities: &catalogue(&QUANTITIES),
    options: &[
        ("template", "\"promotion-time-cure\""),
        (
            "latency",
            "distribution F: weibull | exponential | lognormal | loglogistic | gengamma (default weibull)",
        ),
        (
            "gengamma_q",
            "Prentice's Q of the gengamma latency, |Q| ≤ 3 (1: Weibull, → 0: log-normal)",
        ),
        (
            "time_unit",
            "unit of time for horizons and medians (label only; default \"months\")",
        ),
        (
            "covariates",
            "names of covariates used by profiles, e.g. [\"arm\"]",
        ),
    ],
    starter: include_str!("../../../model-templates/promotion-time-cure.toml"),
    build,
    brms: &super::BRMS_CURE,
};

/// The quantity table (the catalogue lists it in this order).
static QUANTITIES: [QuantityDef<SurvQuantity>; 12] = {
    use SurvQuantity::*;
    [
        CureFraction.def("cure_fraction", "fraction cured, exp(−θ)", "profile (optional)"),
        SurvivalProb.def(
            "survival_prob",
            "P(event-free at horizon) = exp(−θF(h))",
            "horizon",
        ),
        EventProb.def(
            "event_prob",
            "P(event by horizon) = 1 − survival_prob",
            "horizon",
        ),
        MedianSurvival.def(
            "median_survival",
            "population median survival; inf when θ ≤ ln 2 (cure ≥ 0.5)",
            "profile (optional)",
        ),
        MedianUncured.def(
            "median_uncured",
            "median survival of the uncured, (S − e^−θ)/(1 − e^−θ)",
            "profile (optional)",
        ),
        Rmst.def("rmst", "restricted mean survival time to horizon", "horizon"),
        CureDifference.def(
            "cure_difference",
            "cure fraction at profiles[0] minus at profiles[1]",
            "profiles = [a, b]",
        ),
        HazardRatio.def(
            "hazard_ratio",
            "population hazard ratio a vs b, H_a(h)/H_b(h) = θ_a F_a(h)/(θ_b F_b(h)); θ_a/θ_b when F is shared",
            "profiles = [a, b], horizon (optional when only θ differs)",
        ),
        super::SURVIVAL_DIFFERENCE,
        super::RMST_DIFFERENCE,
        super::RMST_RATIO,
        MedianRatio.def(
            "median_ratio",
            "median_uncured at a / at b",
            "profiles = [a, b]",
        ),
    ]
};

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    build_survival(ctx, &INFO, &QUANTITIES, Cure::PromotionTime)
}

//! Mixture-cure survival template (Berkson & Gage 1952, JASA 47; Farewell 1982,
//! Biometrics 38): a fraction π of patients is cured and never has the event;
//! the others have latency survival S_u. Population survival
//! S(t) = π + (1 − π)·S_u(t), with π = logistic(cure_logit + x'β_cure) and the
//! latency of [`super::latency`] (scale λ = exp(log_scale + x'β_latency −
//! x'β_hazard/k), shape k). The prior may instead be on the cured fraction
//! at the reference profile (`[prior.cure_fraction]`, a family on (0, 1)):
//! cure_logit = logit of it.
//!
//! Quantities: the cure fraction; survival and event probability at a horizon;
//! the population median (+∞, "never reached", when π ≥ ½); the median of the
//! uncured; the restricted mean survival time to a horizon,
//! RMST(h) = π·h + (1 − π)∫₀ʰ S_u; and between two profiles the cure
//! difference, the population and the latency (among the uncured) hazard
//! ratios, the survival and RMST differences, the RMST ratio and the ratio of
//! the uncured's medians (definitions in [`super`]). `cure = false` fixes
//! π = 0 (kept for older files; the `parametric-survival` template is the same
//! model).

use super::{build as build_survival, Cure, SurvQuantity};
use crate::error::Result;
use crate::input::Ctx;
use crate::templates::quantity::catalogue;
use crate::templates::{Model, QuantityDef, TemplateInfo};

pub static INFO: TemplateInfo = TemplateInfo {
    name: "mixture-cure",
    about: "mixture-cure survival: a cured fraction plus parametric latency for the uncured",
    parameters: &[
        (
            "cure_logit",
            "logit of the cured fraction at the reference profile",
        ),
        (
            "cure_fraction",
            "instead of cure_logit: the cured fraction itself at the reference profile (a family on (0, 1), e.g. beta)",
        ),
        (
            "log_scale",
            "log of the latency scale of the uncured, in time_unit",
        ),
        (
            "shape",
            "latency shape of the uncured (not for exponential)",
        ),
        ("cure_effect_<c>", "effect of covariate c on the cure logit"),
        (
            "latency_effect_<c>",
            "effect of covariate c on log_scale (log time ratio, AFT)",
        ),
        (
            "hazard_effect_<c>",
            "effect of covariate c on the latency log hazard (log hazard ratio; weibull, exponential)",
        ),
    ],
    quantities: &catalogue(&QUANTITIES),
    options: &[
        ("template", "\"mixture-cure\""),
        (
            "latency",
            "weibull | exponential | lognormal | loglogistic | gengamma (default weibull)",
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
        (
            "cure",
            "true (default) or false to fix the cured fraction at 0",
        ),
    ],
    starter: include_str!("../../../model-templates/mixture-cure.toml"),
    build,
    brms: &super::BRMS_CURE,
};

/// The quantity table (the catalogue lists it in this order).
static QUANTITIES: [QuantityDef<SurvQuantity>; 13] =
    {
        use SurvQuantity::*;
        [
        CureFraction.def("cure_fraction", "fraction cured, π", "profile (optional)"),
        SurvivalProb.def(
            "survival_prob",
            "P(event-free at horizon) = π + (1 − π)S_u(h)",
            "horizon",
        ),
        EventProb.def(
            "event_prob",
            "P(event by horizon) = 1 − survival_prob",
            "horizon",
        ),
        MedianSurvival.def(
            "median_survival",
            "population median survival; inf when π ≥ 0.5",
            "profile (optional)",
        ),
        MedianUncured.def(
            "median_uncured",
            "median latency of the uncured",
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
            "population hazard ratio a vs b, as H_a(h)/H_b(h), H = −ln S (varies with h)",
            "profiles = [a, b], horizon",
        ),
        LatencyHazardRatio.def(
            "latency_hazard_ratio",
            "hazard ratio among the uncured, H_u,a(h)/H_u,b(h); constant for weibull/exponential",
            "profiles = [a, b], horizon (optional for weibull/exponential)",
        ),
        super::SURVIVAL_DIFFERENCE,
        super::RMST_DIFFERENCE,
        super::RMST_RATIO,
        MedianRatio.def(
            "median_ratio",
            "median_uncured at a / at b (time ratio among the uncured)",
            "profiles = [a, b]",
        ),
    ]
    };

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    build_survival(ctx, &INFO, &QUANTITIES, Cure::Mixture)
}

//! Parametric survival template, without a cured fraction: S(t) = S_u(t) with
//! any latency of [`super::latency`] (Weibull, exponential, log-normal,
//! log-logistic; scale λ = exp(log_scale + x'β_latency − x'β_hazard/k), shape
//! k). `latency_effect_<c>` is an accelerated-failure-time effect (log time
//! ratio), `hazard_effect_<c>` a proportional-hazards effect (log hazard ratio,
//! Weibull and exponential; Collett, Modelling Survival Data in Medical
//! Research, 3rd ed., §5.6).
//!
//! Between two profiles: `hazard_ratio` (constant in t for Weibull and
//! exponential, then e^{β_hazard} − or e^{−kβ_latency} − per unit; otherwise the
//! ratio of cumulative hazards at a horizon), survival and RMST differences,
//! the RMST ratio and the median ratio.

use super::{build as build_survival, Cure, SurvQuantity};
use crate::error::Result;
use crate::input::Ctx;
use crate::templates::quantity::catalogue;
use crate::templates::{Model, QuantityDef, TemplateInfo};

pub static INFO: TemplateInfo = TemplateInfo {
    name: "parametric-survival",
    about: "parametric survival without a cured fraction (weibull, exponential, lognormal, loglogistic, gengamma)",
    parameters: &[
        ("log_scale", "log of the time scale, in time_unit"),
        ("shape", "shape (not for exponential)"),
        (
            "latency_effect_<c>",
            "effect of covariate c on log_scale (log time ratio, AFT)",
        ),
        (
            "hazard_effect_<c>",
            "effect of covariate c on the log hazard (log hazard ratio, PH; weibull, exponential)",
        ),
    ],
    quantities: &catalogue(&QUANTITIES),
    options: &[
        ("template", "\"parametric-survival\""),
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
    ],
    starter: include_str!("../../../model-templates/parametric-survival.toml"),
    build,
    brms: &super::BRMS,
};

/// The quantity table (the catalogue lists it in this order).
static QUANTITIES: [QuantityDef<SurvQuantity>; 9] = {
    use SurvQuantity::*;
    [
        SurvivalProb.def(
            "survival_prob",
            "P(event-free at horizon) = S(h)",
            "horizon",
        ),
        EventProb.def("event_prob", "P(event by horizon) = 1 − S(h)", "horizon"),
        MedianSurvival.def("median_survival", "median survival", "profile (optional)"),
        Rmst.def(
            "rmst",
            "restricted mean survival time to horizon",
            "horizon",
        ),
        HazardRatio.def(
            "hazard_ratio",
            "hazard ratio a vs b; for lognormal/loglogistic H_a(h)/H_b(h), H = −ln S",
            "profiles = [a, b], horizon (optional for weibull/exponential)",
        ),
        super::SURVIVAL_DIFFERENCE,
        super::RMST_DIFFERENCE,
        super::RMST_RATIO,
        MedianRatio.def("median_ratio", "median at a / at b", "profiles = [a, b]"),
    ]
};

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    build_survival(ctx, &INFO, &QUANTITIES, Cure::None)
}

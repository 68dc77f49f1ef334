//! Survival templates: shared machinery for the mixture cure
//! ([`mixture_cure`]), the promotion-time cure ([`promotion_time`]) and
//! parametric survival without a cure fraction ([`parametric`]). Each template
//! file holds its registry entry and quantity table; this module holds the
//! latency distributions ([`latency`]), the reading of `[model]` and the priors,
//! and one simulator for all three. The piecewise-exponential template
//! ([`piecewise`]) is a model of its own that shares the request validation
//! ([`request_in`]) and the two-profile quantities ([`contrast`]).
//!
//! Population survival at covariates x, with latency S_u (scale
//! λ = exp(log_scale + x'β_latency − x'β_hazard/k), shape k):
//! * mixture cure (Berkson & Gage 1952, JASA 47; Farewell 1982, Biometrics 38):
//!   S(t) = π + (1 − π)S_u(t), π = logistic(cure_logit + x'β_cure);
//! * promotion-time cure (Yakovlev & Tsodikov 1996; Chen, Ibrahim & Sinha 1999,
//!   JASA 94): S(t) = exp(−θ·F(t)), F = 1 − S_u, θ = exp(log_theta + x'β_theta),
//!   cure fraction exp(−θ);
//! * parametric survival: S(t) = S_u(t).
//!
//! The cure prior may instead be given on the cured fraction π at the
//! reference profile itself (`[prior.cure_fraction]`, any family on (0, 1) by
//! the support rule, e.g. beta or logit-normal): the mixture cure then uses
//! logit π, the promotion-time cure θ = −ln π, and cure covariate effects stay
//! on the logit and log θ scales. Where no cure effect moves it (the reference
//! profile) the drawn π is the model's cured fraction as drawn.
//!
//! Covariate effects on the time scale: `latency_effect_<c>` is an
//! accelerated-failure-time effect (log time ratio: ln λ moves by +β), for every
//! latency; `hazard_effect_<c>` is a proportional-hazards effect (log hazard
//! ratio: ln λ moves by −β/k, so the hazard is multiplied by e^β at every t),
//! for Weibull and exponential latencies only, the families closed under
//! proportional hazards. For a Weibull an AFT effect β is the PH effect −kβ.
//!
//! Treatment effects compare two profiles a, b (`profiles = [a, b]`):
//! * `hazard_ratio`: the population hazard ratio, stated as the ratio of
//!   cumulative hazards H_a(h)/H_b(h), H = −ln S, at a horizon h. When the ratio
//!   is the same at every t (parametric Weibull/exponential; promotion-time cure
//!   whose profiles differ only in θ: θ_a/θ_b) it equals the ratio of hazards and
//!   the horizon may be left out. A mixture cure's population hazard ratio varies
//!   with t even for a PH latency (it tends to 1 as the uncured die out), so it
//!   always takes a horizon.
//! * `latency_hazard_ratio` (mixture cure): the same among the uncured,
//!   −ln S_u,a(h) / −ln S_u,b(h); constant (no horizon needed) for a
//!   Weibull/exponential latency.
//! * `survival_difference`, `rmst_difference`, `rmst_ratio` at a horizon;
//!   `median_ratio` (population medians for parametric survival; the medians of
//!   the uncured for the cure templates, whose population median may be never
//!   reached); `cure_difference`.
//!
//! RMST(h) = ∫₀ʰ S: closed form for the mixture cure with a Weibull latency
//! (π·h + (1 − π)λΓ(1 + 1/k)P(1/k, (h/λ)^k)), 32-point Gauss–Legendre otherwise.

mod build;
mod code;
pub mod latency;
pub mod mixture_cure;
pub mod parametric;
pub mod piecewise;
pub mod promotion_time;
mod request;

pub(crate) use build::build;
pub(crate) use request::{contrast, request_in, Frame};

pub use code::{BRMS, BRMS_CURE};
pub use latency::Latency;
use latency::{gauss, LATENCIES};

use super::quantity::lookup;
use super::{
    At, BaseDraws, Detail, Hyper, Model, PriorSet, PriorStatement, QuantityDef, Request,
    TemplateInfo,
};
use crate::error::{choice_hint, Result};
use crate::input::raw::RawBelief;
use crate::input::{key, Ctx, Seg};
use crate::numerics::logistic;
use std::cell::RefCell;

/// How the cured fraction enters.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Cure {
    /// S = π + (1 − π)S_u.
    Mixture,
    /// S = exp(−θF).
    PromotionTime,
    /// S = S_u.
    None,
}

/// The quantities of the survival templates (each template's table holds the
/// ones it offers).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SurvQuantity {
    CureFraction,
    SurvivalProb,
    EventProb,
    MedianSurvival,
    MedianUncured,
    Rmst,
    CureDifference,
    HazardRatio,
    LatencyHazardRatio,
    SurvivalDifference,
    RmstDifference,
    RmstRatio,
    MedianRatio,
}

impl SurvQuantity {
    /// Whether values are in `time_unit`.
    fn in_time_unit(self) -> bool {
        matches!(
            self,
            Self::MedianSurvival | Self::MedianUncured | Self::Rmst | Self::RmstDifference
        )
    }

    /// Whether the quantity is about the cured fraction.
    fn is_cure(self) -> bool {
        matches!(self, Self::CureFraction | Self::CureDifference)
    }

    /// The one-profile quantity a two-profile comparison is built from.
    fn per_profile(self) -> Option<SurvQuantity> {
        Some(match self {
            Self::SurvivalDifference => Self::SurvivalProb,
            Self::RmstDifference | Self::RmstRatio => Self::Rmst,
            Self::CureDifference => Self::CureFraction,
            Self::MedianRatio => Self::MedianSurvival,
            _ => return None,
        })
    }

    fn is_hazard_ratio(self) -> bool {
        matches!(self, Self::HazardRatio | Self::LatencyHazardRatio)
    }
}

/// The two-arm table entries every survival template states alike.
pub(crate) const SURVIVAL_DIFFERENCE: QuantityDef<SurvQuantity> = SurvQuantity::SurvivalDifference
    .def(
        "survival_difference",
        "survival_prob at a minus at b",
        "profiles = [a, b], horizon",
    );
pub(crate) const RMST_DIFFERENCE: QuantityDef<SurvQuantity> = SurvQuantity::RmstDifference.def(
    "rmst_difference",
    "rmst at a minus at b",
    "profiles = [a, b], horizon",
);
pub(crate) const RMST_RATIO: QuantityDef<SurvQuantity> = SurvQuantity::RmstRatio.def(
    "rmst_ratio",
    "rmst at a / at b",
    "profiles = [a, b], horizon",
);

impl SurvQuantity {
    /// The table entry of quantity `self`: where it is evaluated, whether it
    /// takes a horizon, its support (shared by the three templates' tables).
    pub(crate) const fn def(
        self,
        name: &'static str,
        about: &'static str,
        needs: &'static str,
    ) -> QuantityDef<SurvQuantity> {
        use crate::dist::Support::{Positive, Real, Unit};
        use SurvQuantity::*;
        let info = super::QuantityInfo::new(name, about, needs);
        let (at, support) = match self {
            CureFraction | SurvivalProb | EventProb => (At::Profile, Unit),
            MedianSurvival | MedianUncured | Rmst => (At::Profile, Positive),
            CureDifference | SurvivalDifference | RmstDifference => (At::TwoProfiles, Real),
            HazardRatio | LatencyHazardRatio | RmstRatio | MedianRatio => {
                (At::TwoProfiles, Positive)
            }
        };
        let d = QuantityDef::new(self, info, at, support);
        match self {
            SurvivalProb | EventProb | Rmst | HazardRatio | LatencyHazardRatio
            | SurvivalDifference | RmstDifference | RmstRatio => d.at_horizon(),
            MedianSurvival => d.may_be_infinite(),
            _ => d,
        }
    }
}

/// An effect on the latency scale.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Effect {
    /// `latency_effect_<c>`: ln λ + β.
    Aft,
    /// `hazard_effect_<c>`: ln λ − β/k.
    Ph,
}

/// What a request resolved: the quantity and, for a hazard ratio without a
/// horizon, that it is constant in t.
#[derive(Debug, Clone, Copy)]
struct Asked {
    q: SurvQuantity,
    constant: bool,
}

/// A survival model of one of the three templates.
pub struct Survival {
    info: &'static TemplateInfo,
    table: &'static [QuantityDef<SurvQuantity>],
    pub cure_kind: Cure,
    pub latency: Latency,
    pub time_unit: String,
    pub covariates: Vec<String>,
    priors: PriorSet,
    /// cure_logit (mixture) or log_theta (promotion time), or with
    /// `cure_on_fraction` the cured fraction π at the reference profile.
    cure: Option<usize>,
    /// Whether the cure prior is on π itself (`[prior.cure_fraction]`): the
    /// model then uses logit π (mixture) or θ = −ln π (promotion time).
    cure_on_fraction: bool,
    log_scale: usize,
    shape: Option<usize>,
    cure_effects: Vec<Option<usize>>,
    latency_effects: Vec<Option<(usize, Effect)>>,
    gl: (Vec<f64>, Vec<f64>),
}

type ProfileCache = Vec<(Vec<f64>, Vec<f64>, Vec<f64>)>;

thread_local! {
    /// Parameter draws and per-profile (covariates, c, ln λ) of the current
    /// evaluation (c = π for the mixture cure, θ for the promotion time).
    static SCRATCH: RefCell<(Vec<Vec<f64>>, ProfileCache)> = const { RefCell::new((Vec::new(), Vec::new())) };
}

impl Survival {
    /// c (π or θ; 0 without cure), ln λ and k of draw i at covariates x.
    #[inline]
    fn at(&self, p: &[Vec<f64>], i: usize, x: &[f64]) -> (f64, f64, f64) {
        let k = self.shape.map_or(1.0, |s| p[s][i]);
        let c = match self.cure {
            Some(c) if self.cure_on_fraction => {
                let pi = p[c][i];
                let moved = self
                    .cure_effects
                    .iter()
                    .zip(x)
                    .any(|(e, xj)| e.is_some() && *xj != 0.0);
                if !moved {
                    // At the reference profile (and wherever no cure effect
                    // applies) the drawn fraction is used as drawn: θ = −ln π,
                    // or π itself.
                    match self.cure_kind {
                        Cure::PromotionTime => -pi.ln(),
                        _ => pi,
                    }
                } else {
                    let mut eta = match self.cure_kind {
                        Cure::PromotionTime => (-pi.ln()).ln(),
                        _ => crate::numerics::logit(pi),
                    };
                    for (j, e) in self.cure_effects.iter().enumerate() {
                        if let Some(e) = e {
                            eta += x[j] * p[*e][i];
                        }
                    }
                    match self.cure_kind {
                        Cure::PromotionTime => eta.exp(),
                        _ => logistic(eta),
                    }
                }
            }
            Some(c) => {
                let mut eta = p[c][i];
                for (j, e) in self.cure_effects.iter().enumerate() {
                    if let Some(e) = e {
                        eta += x[j] * p[*e][i];
                    }
                }
                match self.cure_kind {
                    Cure::PromotionTime => eta.exp(),
                    _ => logistic(eta),
                }
            }
            None => 0.0,
        };
        let mut ls = p[self.log_scale][i];
        for (j, e) in self.latency_effects.iter().enumerate() {
            match e {
                Some((e, Effect::Aft)) => ls += x[j] * p[*e][i],
                Some((e, Effect::Ph)) => ls -= x[j] * p[*e][i] / k,
                None => {}
            }
        }
        (c, ls, k)
    }

    /// Population survival at ln t.
    #[inline]
    fn surv_pop(&self, c: f64, ls: f64, k: f64, lt: f64) -> f64 {
        match self.cure_kind {
            Cure::PromotionTime => (-c * self.latency.cdf_log(lt, ls, k)).exp(),
            _ => c + (1.0 - c) * self.latency.surv_log(lt, ls, k),
        }
    }

    /// ln of the population cumulative hazard −ln S(t) at ln t.
    #[inline]
    fn ln_cum_hazard_pop(&self, c: f64, ls: f64, k: f64, lt: f64) -> f64 {
        let lat = self.latency;
        match self.cure_kind {
            Cure::None => lat.ln_cum_hazard(lt, ls, k),
            Cure::PromotionTime => c.ln() + lat.ln_cdf(lt, ls, k),
            Cure::Mixture => {
                // H = −ln(1 − (1 − π)F_u); ≈ (1 − π)F_u when that is small.
                let a = (1.0 - c) * lat.cdf_log(lt, ls, k);
                if a < 1e-8 {
                    (-c).ln_1p() + lat.ln_cdf(lt, ls, k)
                } else {
                    (-(-a).ln_1p()).ln()
                }
            }
        }
    }

    /// Quantity `q` of one draw at one profile; `lh` = ln h.
    #[inline]
    fn value(&self, q: SurvQuantity, c: f64, ls: f64, k: f64, h: f64, lh: f64) -> f64 {
        use SurvQuantity::*;
        let lat = self.latency;
        let promo = self.cure_kind == Cure::PromotionTime;
        match q {
            CureFraction => {
                if promo {
                    (-c).exp()
                } else {
                    c
                }
            }
            SurvivalProb => self.surv_pop(c, ls, k, lh),
            EventProb => {
                if promo {
                    -(-c * lat.cdf_log(lh, ls, k)).exp_m1()
                } else {
                    (1.0 - c) * (1.0 - lat.surv_log(lh, ls, k))
                }
            }
            MedianSurvival => {
                if promo {
                    // exp(−θF) = ½ ⇔ F = ln 2/θ, reached only when θ > ln 2.
                    let f = std::f64::consts::LN_2 / c;
                    if f >= 1.0 {
                        f64::INFINITY
                    } else {
                        lat.surv_inv(1.0 - f, ls, k)
                    }
                } else if c >= 0.5 {
                    f64::INFINITY
                } else {
                    lat.surv_inv((0.5 - c) / (1.0 - c), ls, k)
                }
            }
            MedianUncured => {
                if promo {
                    // S_uncured = (S − e^{−θ})/(1 − e^{−θ}) = ½ ⇔ S = (1 + e^{−θ})/2
                    // ⇔ F = −ln(1 + expm1(−θ)/2)/θ.
                    let f = -(0.5 * (-c).exp_m1()).ln_1p() / c;
                    lat.surv_inv(1.0 - f, ls, k)
                } else {
                    lat.median(ls, k)
                }
            }
            Rmst => {
                if promo {
                    gauss(h, &self.gl, |t| {
                        if t <= 0.0 {
                            1.0
                        } else {
                            (-c * lat.cdf_log(t.ln(), ls, k)).exp()
                        }
                    })
                    .clamp(0.0, h)
                } else {
                    c * h + (1.0 - c) * lat.integral(h, ls, k, &self.gl)
                }
            }
            _ => f64::NAN,
        }
    }

    /// ln of a hazard ratio's numerator or denominator at one profile (`lh` =
    /// ln h; `constant`: no horizon, the ratio does not depend on t).
    #[inline]
    fn ln_hazard(&self, q: SurvQuantity, c: f64, ls: f64, k: f64, lh: f64, constant: bool) -> f64 {
        let latency_only = q == SurvQuantity::LatencyHazardRatio || self.cure_kind == Cure::None;
        if constant {
            if latency_only {
                // PH latency: ln H_u(t) = k(ln t − ln λ); the ratio is the same at t = 1.
                -k * ls
            } else {
                // Promotion time with the same F at both profiles: θ_a/θ_b.
                c.ln()
            }
        } else if latency_only {
            self.latency.ln_cum_hazard(lh, ls, k)
        } else {
            self.ln_cum_hazard_pop(c, ls, k, lh)
        }
    }

    /// Whether a hazard ratio between covariate vectors a and b is the same at
    /// every t (then it needs no horizon).
    fn constant_ratio(&self, q: SurvQuantity, a: &[f64], b: &[f64]) -> bool {
        let differ = |effects: &mut dyn Iterator<Item = bool>| {
            effects
                .zip(a.iter().zip(b))
                .any(|(has, (x, y))| has && x != y)
        };
        let latency_differs = differ(&mut self.latency_effects.iter().map(Option::is_some));
        let cure_differs = differ(&mut self.cure_effects.iter().map(Option::is_some));
        let latency_ph = self.latency.is_ph() || !latency_differs;
        match (q, self.cure_kind) {
            (SurvQuantity::LatencyHazardRatio, _) | (_, Cure::None) => latency_ph,
            (_, Cure::PromotionTime) => !latency_differs,
            (_, Cure::Mixture) => !latency_differs && !cure_differs,
        }
    }
}

impl Model for Survival {
    fn template(&self) -> &'static str {
        self.info.name
    }

    /// Per draw and set: the prior columns (8 B each), one simulation's
    /// parameter draws (the same again), the per-profile cure probabilities and
    /// log scales of the thread's cache (16 B a profile, at most one per
    /// belief plus the reference; counted as 16 profiles), outputs and sort
    /// buffers (8 words); for every set a fit holds at once
    /// ([`crate::templates::fit_peak_bytes`]).
    fn working_bytes(&self, n: usize) -> (u64, String) {
        let k = self.priors.priors.len() as u64;
        let per_draw = 8 * (2 * k + 8) + 16 * 16;
        (
            crate::templates::fit_peak_bytes(n, per_draw, 0),
            format!("{n} draws × {k} priors"),
        )
    }

    fn hypers(&self) -> &[Hyper] {
        &self.priors.hypers
    }

    fn request(&self, ctx: &Ctx, path: &[Seg], quantity: &str, raw: &RawBelief) -> Result<Request> {
        let frame = Frame {
            info: self.info,
            table: self.table,
            covariates: &self.covariates,
            time_unit: &self.time_unit,
            cure_kind: self.cure_kind,
        };
        request_in(&frame, ctx, path, quantity, raw, &|q, a, b| {
            self.constant_ratio(q, a, b)
        })
    }

    fn draw_base(&self, n: usize, plan: &crate::rng::Plan) -> BaseDraws {
        BaseDraws {
            n,
            cols: self.priors.draw_base(n, plan),
            extra: None,
        }
    }

    fn simulate(
        &self,
        h: &[f64],
        base: &BaseDraws,
        reqs: &[&Request],
        out: &mut [Vec<f64>],
    ) -> Result<()> {
        SCRATCH.with(|s| {
            let mut s = s.borrow_mut();
            let (p, cache) = &mut *s;
            p.resize(self.priors.priors.len(), Vec::new());
            self.priors.fill(h, &base.cols, p)?;
            // c and ln λ once per distinct profile, shared by every request there.
            // Entries [0, used) belong to this evaluation; later ones keep their
            // buffers for reuse.
            let mut used = 0usize;
            let mut profile_of = |x: &Vec<f64>, cache: &mut ProfileCache| -> usize {
                if let Some(j) = cache[..used].iter().position(|c| &c.0 == x) {
                    return j;
                }
                if used == cache.len() {
                    cache.push((Vec::new(), Vec::new(), Vec::new()));
                }
                let (cx, cs, lss) = &mut cache[used];
                cx.clone_from(x);
                cs.clear();
                lss.clear();
                for i in 0..base.n {
                    let (c, ls, _) = self.at(p, i, x);
                    cs.push(c);
                    lss.push(ls);
                }
                used += 1;
                used - 1
            };
            let ones;
            let ks: &[f64] = match self.shape {
                Some(s) => &p[s],
                None => {
                    ones = vec![1.0; base.n];
                    &ones
                }
            };
            for (r, o) in reqs.iter().zip(out.iter_mut()) {
                let Asked { q, constant } = *r.detail.get::<Asked>()?;
                o.resize(base.n, 0.0);
                let hz = r.horizon.unwrap_or(1.0);
                let lh = hz.ln();
                let j = profile_of(&r.profiles[0], cache);
                if r.profiles.len() == 2 {
                    let j2 = profile_of(&r.profiles[1], cache);
                    let (ca, la) = (&cache[j].1, &cache[j].2);
                    let (cb, lb) = (&cache[j2].1, &cache[j2].2);
                    for (i, v) in o.iter_mut().enumerate() {
                        let k = ks[i];
                        let (c, l) = ([ca[i], cb[i]], [la[i], lb[i]]);
                        *v = contrast(
                            q,
                            |pq, p| {
                                if pq == SurvQuantity::MedianSurvival {
                                    // Population medians for parametric survival;
                                    // the uncured's for the cure templates.
                                    if self.cure_kind == Cure::None {
                                        self.latency.median(l[p], k)
                                    } else {
                                        self.value(
                                            SurvQuantity::MedianUncured,
                                            c[p],
                                            l[p],
                                            k,
                                            hz,
                                            lh,
                                        )
                                    }
                                } else {
                                    self.value(pq, c[p], l[p], k, hz, lh)
                                }
                            },
                            |p| self.ln_hazard(q, c[p], l[p], k, lh, constant),
                        );
                    }
                } else {
                    let (cs, lss) = (&cache[j].1, &cache[j].2);
                    // One loop per quantity, so the choice is not made per draw.
                    macro_rules! each {
                        ($q:expr) => {
                            for (i, v) in o.iter_mut().enumerate() {
                                *v = self.value($q, cs[i], lss[i], ks[i], hz, lh);
                            }
                        };
                    }
                    use SurvQuantity::*;
                    match q {
                        CureFraction => each!(CureFraction),
                        SurvivalProb => each!(SurvivalProb),
                        EventProb => each!(EventProb),
                        MedianSurvival => each!(MedianSurvival),
                        MedianUncured => each!(MedianUncured),
                        Rmst => each!(Rmst),
                        other => each!(other),
                    }
                }
            }
            Ok(())
        })
    }

    fn priors(&self, h: &[f64]) -> Vec<PriorStatement> {
        let unit = self.time_unit.clone();
        self.priors.statements(h, |p| match p {
            "cure_logit" => "logit of the cured fraction".to_string(),
            "log_theta" => "log promotion-time rate θ (cured fraction exp(−θ))".to_string(),
            "cure_fraction" => match self.cure_kind {
                Cure::PromotionTime => {
                    "cured fraction at the reference profile (theta = -log of it)".to_string()
                }
                _ => "cured fraction at the reference profile (used as its logit)".to_string(),
            },
            "log_scale" => format!("log latency scale ({unit})"),
            "shape" => "latency shape".to_string(),
            other => match other.strip_prefix("hazard_effect_") {
                Some(c) => format!("log hazard ratio per unit of {c} (proportional hazards)"),
                None => other.replace('_', " "),
            },
        })
    }

    fn spread(&self, h: &[f64]) -> f64 {
        self.priors.spread(h)
    }

    fn likelihood(&self) -> Option<super::Code> {
        Some(self.code())
    }
}

#[cfg(test)]
mod tests;

//! Mixture-cure survival model (Berkson & Gage 1952, JASA 47; Farewell 1982,
//! Biometrics 38): a fraction π of patients is cured and never has the event;
//! the others have latency survival S_u. Population survival
//! S(t) = π + (1 − π)·S_u(t), with π = logistic(cure_logit + x'β_cure).
//!
//! Latency of the uncured, with scale λ = exp(log_scale + x'β_latency) (an
//! accelerated-failure-time effect) and shape k:
//! * weibull:      S_u(t) = exp(−(t/λ)^k)
//! * exponential:  S_u(t) = exp(−t/λ)            (no shape parameter)
//! * lognormal:    S_u(t) = 1 − Φ(k·(ln t − ln λ))  (sdlog = 1/k)
//! * loglogistic:  S_u(t) = 1/(1 + (t/λ)^k)
//!
//! In every case λ is the scale of time and larger k means less dispersion on the
//! log-time scale. `cure = false` fixes π = 0: an ordinary parametric survival model.
//!
//! Derived quantities: the cure fraction; survival and event probability at a
//! horizon; the population median (+∞, "never reached", when π ≥ ½); the median
//! of the uncured; the restricted mean survival time to a horizon,
//! RMST(h) = π·h + (1 − π)∫₀ʰ S_u (closed form for Weibull via the regularised
//! incomplete gamma, λ·Γ(1 + 1/k)·P(1/k, (h/λ)^k); 32-point Gauss–Legendre
//! otherwise); and the difference in cure fraction between two profiles.

use super::quantity::{catalogue, lookup};
use super::{
    At, BaseDraws, BrmsLayout, Detail, Hyper, Model, PriorSet, PriorStatement, QuantityDef,
    QuantityInfo, Request, TemplateInfo,
};
use crate::dist::Support;
use crate::error::{choice_hint, Result};
use crate::input::raw::RawBelief;
use crate::input::{key, Ctx, Seg};
use crate::numerics::{gamma_p, ln_gamma, logistic, norm_cdf, norm_quantile};
use std::cell::RefCell;

pub static INFO: TemplateInfo = TemplateInfo {
    name: "mixture-cure",
    about: "mixture-cure survival: a cured fraction plus parametric latency for the uncured",
    parameters: &[
        (
            "cure_logit",
            "logit of the cured fraction at the reference profile",
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
            "effect of covariate c on log_scale (time ratio)",
        ),
    ],
    quantities: &catalogue(&QUANTITIES),
    options: &[
        ("template", "\"mixture-cure\""),
        (
            "latency",
            "weibull | exponential | lognormal | loglogistic (default weibull)",
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
    starter: include_str!("../../model-templates/mixture-cure.toml"),
    build,
    brms: &BrmsLayout::NONLINEAR,
};

/// The quantities of the template.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CureQuantity {
    CureFraction,
    SurvivalProb,
    EventProb,
    MedianSurvival,
    MedianUncured,
    Rmst,
    CureDifference,
}

impl CureQuantity {
    /// Whether values are in `time_unit`.
    fn in_time_unit(self) -> bool {
        matches!(
            self,
            Self::MedianSurvival | Self::MedianUncured | Self::Rmst
        )
    }

    /// Whether the quantity is π itself (fixed at 0 when `cure = false`).
    fn is_cure(self) -> bool {
        matches!(self, Self::CureFraction | Self::CureDifference)
    }
}

/// The quantity table (the catalogue lists it in this order).
static QUANTITIES: [QuantityDef<CureQuantity>; 7] = {
    use CureQuantity::*;
    use Support::{Positive, Real, Unit};
    [
        QuantityDef::new(
            CureFraction,
            QuantityInfo::new("cure_fraction", "fraction cured, π", "profile (optional)"),
            At::Profile,
            Unit,
        ),
        QuantityDef::new(
            SurvivalProb,
            QuantityInfo::new(
                "survival_prob",
                "P(event-free at horizon) = π + (1 − π)S_u(h)",
                "horizon",
            ),
            At::Profile,
            Unit,
        )
        .at_horizon(),
        QuantityDef::new(
            EventProb,
            QuantityInfo::new(
                "event_prob",
                "P(event by horizon) = 1 − survival_prob",
                "horizon",
            ),
            At::Profile,
            Unit,
        )
        .at_horizon(),
        QuantityDef::new(
            MedianSurvival,
            QuantityInfo::new(
                "median_survival",
                "population median survival; inf when π ≥ 0.5",
                "profile (optional)",
            ),
            At::Profile,
            Positive,
        )
        .may_be_infinite(),
        QuantityDef::new(
            MedianUncured,
            QuantityInfo::new(
                "median_uncured",
                "median latency of the uncured",
                "profile (optional)",
            ),
            At::Profile,
            Positive,
        ),
        QuantityDef::new(
            Rmst,
            QuantityInfo::new(
                "rmst",
                "restricted mean survival time to horizon",
                "horizon",
            ),
            At::Profile,
            Positive,
        )
        .at_horizon(),
        QuantityDef::new(
            CureDifference,
            QuantityInfo::new(
                "cure_difference",
                "cure fraction at profiles[0] minus at profiles[1]",
                "profiles = [a, b]",
            ),
            At::TwoProfiles,
            Real,
        ),
    ]
};

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Latency {
    Weibull,
    Exponential,
    LogNormal,
    LogLogistic,
}

const LATENCIES: [&str; 4] = ["weibull", "exponential", "lognormal", "loglogistic"];

impl Latency {
    /// S_u(t) for log-scale ls = ln λ and shape k. Everything is computed from
    /// z = k·(ln t − ln λ): one exp or erfc per call, no `powf`.
    #[inline]
    pub fn surv(&self, t: f64, ls: f64, k: f64) -> f64 {
        if t <= 0.0 {
            return 1.0;
        }
        self.surv_log(t.ln(), ls, k)
    }

    /// S_u at ln t (hoists the logarithm out of loops over draws).
    #[inline]
    pub fn surv_log(&self, lt: f64, ls: f64, k: f64) -> f64 {
        let z = k * (lt - ls);
        match self {
            Latency::Weibull | Latency::Exponential => (-z.exp()).exp(),
            Latency::LogNormal => norm_cdf(-z),
            Latency::LogLogistic => 1.0 / (1.0 + z.exp()),
        }
    }

    /// ln of the time at which S_u falls to s ∈ (0, 1): ln λ + w(s)/k with
    /// w = ln(−ln s) (Weibull), Φ⁻¹(1 − s) (log-normal), ln((1 − s)/s) (log-logistic).
    #[inline]
    pub fn log_surv_inv(&self, s: f64, ls: f64, k: f64) -> f64 {
        let w = match self {
            Latency::Weibull | Latency::Exponential => (-s.ln()).ln(),
            Latency::LogNormal => norm_quantile(1.0 - s),
            Latency::LogLogistic => ((1.0 - s) / s).ln(),
        };
        ls + w / k
    }

    /// The time at which S_u falls to s.
    #[inline]
    pub fn surv_inv(&self, s: f64, ls: f64, k: f64) -> f64 {
        self.log_surv_inv(s, ls, k).exp()
    }

    /// ∫₀ʰ S_u(t) dt.
    ///
    /// Weibull: λΓ(1 + 1/k)P(1/k, x) with x = (h/λ)^k (exponential: k = 1). When
    /// x < 1e-10 the leading terms of the series, h(1 − x/(k + 1)), are used
    /// instead: the closed form is then 0·∞ for huge λ (ln λ > 709) or a vanishing
    /// regularised gamma. The result is kept in [0, h] (0 ≤ S_u ≤ 1).
    pub fn integral(&self, h: f64, ls: f64, k: f64, gl: &(Vec<f64>, Vec<f64>)) -> f64 {
        let lambda = ls.exp();
        let v = match self {
            Latency::Exponential | Latency::Weibull => {
                let k = if *self == Latency::Exponential {
                    1.0
                } else {
                    k
                };
                let x = (k * (h.ln() - ls)).exp();
                if x < 1e-10 {
                    h * (1.0 - x / (k + 1.0))
                } else if *self == Latency::Exponential {
                    lambda * -(-h / lambda).exp_m1()
                } else {
                    let a = 1.0 / k;
                    lambda * ln_gamma(1.0 + a).exp() * gamma_p(a, x)
                }
            }
            _ => {
                let (x, w) = gl;
                let mut s = 0.0;
                for (xi, wi) in x.iter().zip(w) {
                    s += wi * self.surv(0.5 * h * (xi + 1.0), ls, k);
                }
                0.5 * h * s
            }
        };
        if v.is_nan() {
            // Should the closed form still be undefined (a degenerate shape draw,
            // k = 0 or ∞), integrate S_u by Gauss–Legendre instead.
            let (x, w) = gl;
            0.5 * h
                * x.iter()
                    .zip(w)
                    .map(|(xi, wi)| wi * self.surv(0.5 * h * (xi + 1.0), ls, k))
                    .sum::<f64>()
        } else {
            v.clamp(0.0, h)
        }
    }
}

/// ln(−ln ½) and the other latencies' w(½) = 0, for the median of the uncured.
const LN_LN2: f64 = -0.366_512_920_581_664_3;

pub struct MixtureCure {
    pub latency: Latency,
    pub time_unit: String,
    pub covariates: Vec<String>,
    priors: PriorSet,
    cure: Option<usize>,
    log_scale: usize,
    shape: Option<usize>,
    cure_effects: Vec<Option<usize>>,
    latency_effects: Vec<Option<usize>>,
    gl: (Vec<f64>, Vec<f64>),
}

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    let m = ctx.model();
    let mp = |k: &str| [key("model"), key(k)];
    let keys: Vec<&str> = INFO.options.iter().map(|o| o.0).collect();
    ctx.check_keys(&[key("model")], m, &keys)?;
    let latency = match m.get("latency") {
        None => Latency::Weibull,
        Some(v) => match ctx.string(&mp("latency"), v)? {
            "weibull" => Latency::Weibull,
            "exponential" => Latency::Exponential,
            "lognormal" => Latency::LogNormal,
            "loglogistic" => Latency::LogLogistic,
            other => {
                return Err(ctx
                    .err(&mp("latency"), format!("unknown latency \"{other}\""))
                    .with_hint(choice_hint(other, &LATENCIES)))
            }
        },
    };
    let time_unit = match m.get("time_unit") {
        Some(v) => ctx.string(&mp("time_unit"), v)?.to_string(),
        None => "months".to_string(),
    };
    let with_cure = match m.get("cure") {
        None => true,
        Some(toml::Value::Boolean(b)) => *b,
        Some(v) => return Err(ctx.err(&mp("cure"), format!("expected true or false, found {v}"))),
    };
    let covariates: Vec<String> = match m.get("covariates") {
        None => Vec::new(),
        Some(toml::Value::Array(a)) => a
            .iter()
            .enumerate()
            .map(|(i, v)| {
                let mut p = mp("covariates").to_vec();
                p.push(Seg::Index(i));
                ctx.string(&p, v).map(str::to_string)
            })
            .collect::<Result<_>>()?,
        Some(v) => {
            return Err(ctx.err(
                &mp("covariates"),
                format!("expected a list of names, found {v}"),
            ))
        }
    };
    let mut priors = PriorSet::default();
    let real = crate::dist::names_where(|f| f.real_valued());
    let cure = if with_cure {
        Some(priors.add(
            ctx,
            "cure_logit",
            &real,
            "family = \"normal\"\n  mean = { fit = [-4.0, 4.0] }\n  sd = { fit = [0.05, 2.5] }",
        )?)
    } else {
        if ctx.has_prior("cure_logit") {
            // Mark it used so the message below is the precise one.
            let _ = ctx.prior_table("cure_logit", "");
            return Err(ctx
                .err(
                    &[key("prior"), key("cure_logit")],
                    "[prior.cure_logit] given but [model] cure = false",
                )
                .with_hint("remove the table, or set cure = true"));
        }
        None
    };
    let log_scale = priors.add(
        ctx,
        "log_scale",
        &real,
        "family = \"normal\"\n  mean = { fit = [0.0, 5.0] }\n  sd = { fit = [0.05, 2.0] }",
    )?;
    let shape = if latency == Latency::Exponential {
        if ctx.has_prior("shape") {
            let _ = ctx.prior_table("shape", "");
            return Err(ctx
                .err(
                    &[key("prior"), key("shape")],
                    "exponential latency has no shape parameter",
                )
                .with_hint("remove [prior.shape], or choose latency = \"weibull\""));
        }
        None
    } else {
        Some(priors.add(
            ctx,
            "shape",
            &crate::dist::names_where(|f| f.suits(crate::dist::Role::LatencyShape)),
            "family = \"lognormal\"\n  meanlog = { fit = [-1.0, 1.0] }\n  sdlog = 0.25",
        )?)
    };
    let mut cure_effects = Vec::new();
    let mut latency_effects = Vec::new();
    for c in &covariates {
        let ce = format!("cure_effect_{c}");
        let le = format!("latency_effect_{c}");
        if !ctx.has_prior(&ce) && !ctx.has_prior(&le) {
            return Err(ctx
                .err(&mp("covariates"), format!("covariate `{c}` has no effect prior"))
                .with_hint(format!("add [prior.{ce}] (effect on the cure logit) and/or [prior.{le}] (effect on log_scale)")));
        }
        cure_effects.push(if ctx.has_prior(&ce) && with_cure {
            Some(priors.add(ctx, &ce, &real, "")?)
        } else {
            None
        });
        latency_effects.push(if ctx.has_prior(&le) {
            Some(priors.add(ctx, &le, &real, "")?)
        } else {
            None
        });
    }
    Ok(Box::new(MixtureCure {
        latency,
        time_unit,
        covariates,
        priors,
        cure,
        log_scale,
        shape,
        cure_effects,
        latency_effects,
        gl: crate::numerics::gauss_legendre(32),
    }))
}

type ProfileCache = Vec<(Vec<f64>, Vec<f64>, Vec<f64>)>;

thread_local! {
    /// Parameter draws and per-profile (covariates, π, ln λ) of the current evaluation.
    static SCRATCH: RefCell<(Vec<Vec<f64>>, ProfileCache)> = const { RefCell::new((Vec::new(), Vec::new())) };
}

impl MixtureCure {
    /// π, ln λ and k of draw i at covariates x, from parameter draws `p`.
    #[inline]
    fn at(&self, p: &[Vec<f64>], i: usize, x: &[f64]) -> (f64, f64, f64) {
        let pi = match self.cure {
            Some(c) => {
                let mut eta = p[c][i];
                for (j, e) in self.cure_effects.iter().enumerate() {
                    if let Some(e) = e {
                        eta += x[j] * p[*e][i];
                    }
                }
                logistic(eta)
            }
            None => 0.0,
        };
        let mut ls = p[self.log_scale][i];
        for (j, e) in self.latency_effects.iter().enumerate() {
            if let Some(e) = e {
                ls += x[j] * p[*e][i];
            }
        }
        let k = self.shape.map_or(1.0, |s| p[s][i]);
        (pi, ls, k)
    }

    /// Quantity `q` of one draw (not the two-profile cure difference); `lh` = ln h.
    #[allow(clippy::too_many_arguments)]
    #[inline]
    fn value(&self, q: CureQuantity, pi: f64, ls: f64, k: f64, h: f64, lh: f64) -> f64 {
        let lat = self.latency;
        match q {
            CureQuantity::CureFraction => pi,
            CureQuantity::SurvivalProb => pi + (1.0 - pi) * lat.surv_log(lh, ls, k),
            CureQuantity::EventProb => (1.0 - pi) * (1.0 - lat.surv_log(lh, ls, k)),
            CureQuantity::MedianSurvival => {
                if pi >= 0.5 {
                    f64::INFINITY
                } else {
                    lat.surv_inv((0.5 - pi) / (1.0 - pi), ls, k)
                }
            }
            CureQuantity::MedianUncured => match lat {
                Latency::Weibull | Latency::Exponential => (ls + LN_LN2 / k).exp(),
                _ => ls.exp(),
            },
            CureQuantity::Rmst => pi * h + (1.0 - pi) * lat.integral(h, ls, k, &self.gl),
            CureQuantity::CureDifference => f64::NAN,
        }
    }
}

impl Model for MixtureCure {
    fn template(&self) -> &'static str {
        INFO.name
    }

    fn hypers(&self) -> &[Hyper] {
        &self.priors.hypers
    }

    fn request(&self, ctx: &Ctx, path: &[Seg], quantity: &str, raw: &RawBelief) -> Result<Request> {
        let sub = |k: &str| {
            let mut p = path.to_vec();
            p.push(key(k));
            p
        };
        let def = lookup(&QUANTITIES, quantity)
            .ok_or_else(|| ctx.err(&sub("quantity"), format!("unknown quantity \"{quantity}\"")))?;
        let q = def.kind;
        if self.cure.is_none() && q.is_cure() {
            return Err(ctx.err(
                &sub("quantity"),
                format!("{quantity} is fixed at 0 when [model] cure = false"),
            ));
        }
        let horizon = match (&raw.horizon, def.horizon) {
            (Some(v), true) => {
                let h = ctx.num(&sub("horizon"), v)?;
                if h <= 0.0 {
                    return Err(ctx.err(
                        &sub("horizon"),
                        format!("horizon {h} must be > 0 ({})", self.time_unit),
                    ));
                }
                Some(h)
            }
            (None, true) => {
                return Err(ctx
                    .err(path, format!("{quantity} needs `horizon`"))
                    .with_hint(format!("e.g. horizon = 36  # {}", self.time_unit)))
            }
            (Some(_), false) => {
                return Err(ctx.err(&sub("horizon"), format!("{quantity} takes no horizon")))
            }
            (None, false) => None,
        };
        if raw.contrast.is_some() {
            return Err(ctx.err(
                &sub("contrast"),
                "mixture-cure quantities take no `contrast`; use `profiles` for cure_difference",
            ));
        }
        if raw.group.is_some() {
            return Err(ctx.err(
                &sub("group"),
                "mixture-cure quantities take no `group` (only r2_share of the regression templates does)",
            ));
        }
        let (profiles, names) = if def.at == At::TwoProfiles {
            let ps = raw
                .profiles
                .as_ref()
                .filter(|p| p.len() == 2)
                .ok_or_else(|| {
                    ctx.err(
                        path,
                        "cure_difference needs `profiles = [\"a\", \"b\"]` (two profile names)",
                    )
                })?;
            if raw.profile.is_some() {
                return Err(ctx.err(
                    &sub("profile"),
                    "cure_difference takes `profiles`, not `profile`",
                ));
            }
            (
                vec![
                    ctx.profile(&sub("profiles"), &ps[0], &self.covariates)?,
                    ctx.profile(&sub("profiles"), &ps[1], &self.covariates)?,
                ],
                ps.clone(),
            )
        } else {
            if raw.profiles.is_some() {
                return Err(ctx.err(
                    &sub("profiles"),
                    format!("{quantity} takes one `profile`, not `profiles`"),
                ));
            }
            let name = raw
                .profile
                .clone()
                .unwrap_or_else(|| "reference".to_string());
            (
                vec![ctx.profile(&sub("profile"), &name, &self.covariates)?],
                vec![name],
            )
        };
        let unit = q.in_time_unit().then(|| self.time_unit.clone());
        let mut label = quantity.to_string();
        if let Some(h) = horizon {
            label.push_str(&format!(" at {h} {}", self.time_unit));
        }
        if names != ["reference"] {
            label.push_str(&format!(" ({})", names.join(" vs ")));
        }
        Ok(Request {
            quantity: quantity.to_string(),
            detail: Detail::new(q),
            horizon,
            profiles,
            profile_names: names,
            support: def.support,
            allows_inf: def.allows_inf,
            label,
            unit,
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
            // π and ln λ once per distinct profile, shared by every request there.
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
                let (cx, pis, lss) = &mut cache[used];
                cx.clone_from(x);
                pis.clear();
                lss.clear();
                for i in 0..base.n {
                    let (pi, ls, _) = self.at(p, i, x);
                    pis.push(pi);
                    lss.push(ls);
                }
                used += 1;
                used - 1
            };
            for (r, o) in reqs.iter().zip(out.iter_mut()) {
                let q = *r.detail.get::<CureQuantity>()?;
                o.resize(base.n, 0.0);
                let j = profile_of(&r.profiles[0], cache);
                if q == CureQuantity::CureDifference {
                    let j2 = profile_of(&r.profiles[1], cache);
                    let (a, b) = (&cache[j].1, &cache[j2].1);
                    for (i, v) in o.iter_mut().enumerate() {
                        *v = a[i] - b[i];
                    }
                } else {
                    let hz = r.horizon.unwrap_or(1.0);
                    let lh = hz.ln();
                    let (pis, lss) = (&cache[j].1, &cache[j].2);
                    // One loop per quantity and shape case, so neither choice is
                    // made per draw (exponential latency has shape 1).
                    macro_rules! each {
                        ($q:expr) => {
                            match self.shape {
                                Some(s) => {
                                    let ks = &p[s];
                                    for (i, v) in o.iter_mut().enumerate() {
                                        *v = self.value($q, pis[i], lss[i], ks[i], hz, lh);
                                    }
                                }
                                None => {
                                    for (i, v) in o.iter_mut().enumerate() {
                                        *v = self.value($q, pis[i], lss[i], 1.0, hz, lh);
                                    }
                                }
                            }
                        };
                    }
                    use CureQuantity::*;
                    match q {
                        CureFraction => each!(CureFraction),
                        SurvivalProb => each!(SurvivalProb),
                        EventProb => each!(EventProb),
                        MedianSurvival => each!(MedianSurvival),
                        MedianUncured => each!(MedianUncured),
                        Rmst => each!(Rmst),
                        CureDifference => each!(CureDifference),
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
            "log_scale" => format!("log latency scale ({unit})"),
            "shape" => "latency shape".to_string(),
            other => other.replace('_', " "),
        })
    }

    fn spread(&self, h: &[f64]) -> f64 {
        self.priors.spread(h)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rmst_integral_is_finite_for_tiny_horizons_and_huge_scales() {
        // Found by tests/numerical_robustness.rs: Weibull with k ≈ 600, ln λ ≈ 16 and
        // h = 1e-6 gave NaN (x = (h/λ)^k underflows to 0); exponential with
        // ln λ > 709 gave ∞·0. S_u ≈ 1 on [0, h] there, so the integral is h.
        let gl = crate::numerics::gauss_legendre(32);
        let v = Latency::Weibull.integral(1e-6, 16.278815618849784, 600.0, &gl);
        assert!((v - 1e-6).abs() <= 1e-21, "{v}");
        let v = Latency::Exponential.integral(36.0, 800.0, 1.0, &gl);
        assert_eq!(v, 36.0);
        for lat in [Latency::Weibull, Latency::LogNormal, Latency::LogLogistic] {
            for (h, ls, k) in [(1e6, -5.0, 50.0), (1e-6, 14.0, 0.05), (1e6, 14.0, 1e-300)] {
                let v = lat.integral(h, ls, k, &gl);
                assert!(
                    v.is_finite() && (0.0..=h).contains(&v),
                    "{lat:?} {h} {ls} {k}: {v}"
                );
            }
        }
        // Both sides of the series switch at x = 1e-10 (λ = 1, k = 2, h = √x) agree with
        // Γ(1.5)·P(0.5, x) from scipy 1.17 (gamma, gammainc).
        for (x, want) in [
            (5e-11, 7.071067811747631e-06),
            (2e-10, 1.4142135622788148e-05),
        ] {
            let v = Latency::Weibull.integral(f64::sqrt(x), 0.0, 2.0, &gl);
            assert!((v - want).abs() < 1e-14 * want, "{x}: {v} vs {want}");
        }
    }

    #[test]
    fn latency_medians_and_integrals() {
        // Weibull median λ(ln 2)^(1/k): k = 1.5, λ = 2 → 1.56644 (closed form;
        // Klein & Moeschberger, Survival Analysis, §2.5).
        assert!((Latency::Weibull.surv_inv(0.5, 2f64.ln(), 1.5) - 1.56644).abs() < 5e-6);
        // Log-logistic and log-normal medians equal the scale.
        assert!((Latency::LogLogistic.surv_inv(0.5, 7f64.ln(), 2.3) - 7.0).abs() < 1e-12);
        assert!((Latency::LogNormal.surv_inv(0.5, 7f64.ln(), 2.3) - 7.0).abs() < 1e-12);
        assert!(
            (Latency::Weibull.surv_inv(0.5, 2f64.ln(), 1.5) - (2f64.ln() + LN_LN2 / 1.5).exp())
                .abs()
                < 1e-12
        );
        // ∫₀ʰ S_u: closed forms against composite quadrature.
        let gl = crate::numerics::gauss_legendre(32);
        for lat in [
            Latency::Weibull,
            Latency::Exponential,
            Latency::LogNormal,
            Latency::LogLogistic,
        ] {
            let (h, lam) = (30.0, 12.0);
            let k = if lat == Latency::Exponential {
                1.0
            } else {
                1.4
            };
            let q = crate::numerics::integrate(|t| lat.surv(t, lam, k), 0.0, h, 200, 8);
            assert!(
                (lat.integral(h, lam, k, &gl) - q).abs() < 1e-6 * q,
                "{lat:?}"
            );
        }
    }

    #[test]
    fn exponential_with_gamma_rate_is_lomax() {
        // Rate ~ Gamma(a, b) makes P(T > t) = (b/(b + t))^a (Lomax; e.g. Klein &
        // Moeschberger, Survival Analysis, §2.5): a = 2, b = 3, t = 1 → 0.5625.
        use crate::dist::Continuous;
        let g = crate::dist::gamma::Gamma::new(2.0, 3.0).unwrap();
        let u = crate::rng::uniforms(8, 0, 200_000);
        let s: Vec<f64> = u
            .iter()
            .map(|u| Latency::Exponential.surv(1.0, -g.quantile(*u).ln(), 1.0))
            .collect();
        let n = s.len() as f64;
        let m = s.iter().sum::<f64>() / n;
        let sd = (s.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
        assert!((m - 0.5625).abs() < 4.0 * sd / n.sqrt(), "{m}");
    }
}

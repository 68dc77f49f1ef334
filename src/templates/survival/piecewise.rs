//! Piecewise-exponential survival template (`piecewise-hazard`): constant
//! hazards h_1 … h_J on intervals [c_j, c_{j+1}) given by `[model] cuts`
//! (c_1 = 0 < c_2 < … < c_J, the last interval open-ended), in events per
//! `time_unit`. With Δ_j(t) = max(0, min(t, c_{j+1}) − c_j) the time spent in
//! interval j before t and x'β the log hazard ratio of a profile,
//!
//!   H(t) = e^{x'β}·Σ_j h_j·Δ_j(t),   S(t) = exp(−H(t))
//!
//! (Friedman 1982, Ann. Statist. 10; Ibrahim, Chen & Sinha, Bayesian Survival
//! Analysis, 2001, §3.1, section number from memory, for the piecewise
//! exponential model and its correlated priors across intervals.)
//!
//! Prior: a Gaussian random walk on the log hazards, ln h_1 = `log_hazard_1`,
//! ln h_{j+1} = ln h_j + ε_j, ε_j = τ·z_j with z_j ~ N(0, 1) independent and
//! τ = `hazard_walk_sd` a scalar prior on (0, ∞) (e.g. half-normal(scale));
//! `hazard_effect_<c>` is a log hazard ratio per unit of covariate c, shared by
//! every interval (proportional hazards). τ carries the correlation: two
//! intervals k steps apart have log hazards whose difference has variance k·τ².
//!
//! Quantities: `survival_prob`, `event_prob`, `rmst` (closed form:
//! Σ_j S(c_j)·(1 − e^{−r_jΔ_j})/r_j over the intervals before the horizon,
//! r_j = e^{x'β}h_j), `median_survival` (where H = ln 2, inside the interval
//! that crosses it). The last interval's hazard is positive, so S → 0 and the
//! median is always reached; +∞ (the never-reached atom of the other survival
//! templates) appears only when the hazards underflow. Between two profiles, by
//! the shared [`super::contrast`]: `hazard_ratio` = e^{(x_a − x_b)'β}, the same
//! at every t (a horizon, when given, makes it the ratio of cumulative hazards
//! H_a(h)/H_b(h), which is the same number), `survival_difference`,
//! `rmst_difference`, `rmst_ratio`, `median_ratio` (population medians).

use super::{
    contrast, request_in, Asked, BaseDraws, Cure, Frame, Hyper, Model, PriorSet, PriorStatement,
    QuantityDef, Request, SurvQuantity, TemplateInfo,
};
use crate::error::Result;
use crate::input::raw::RawBelief;
use crate::input::{key, Ctx, Seg};
use crate::templates::quantity::catalogue;
use std::cell::RefCell;

/// Most cut points (intervals) `[model] cuts` may hold: each interval adds a
/// base column and a step of the walk; beyond this the prior says little per
/// interval and the Sobol columns run into high dimensions (common practice:
/// piecewise exponential analyses use a handful to a few dozen intervals).
pub const MAX_CUTS: usize = 50;

pub static INFO: TemplateInfo = TemplateInfo {
    name: "piecewise-hazard",
    about: "piecewise-constant hazards on given intervals with a random walk on the log hazards (no cured fraction)",
    parameters: &[
        (
            "log_hazard_1",
            "log hazard of the first interval [0, cuts[2]), events per time_unit",
        ),
        (
            "hazard_walk_sd",
            "sd τ of the random walk: ln h[j+1] = ln h[j] + ε, ε ~ normal(0, τ)",
        ),
        (
            "hazard_effect_<c>",
            "effect of covariate c on the log hazard (log hazard ratio, the same in every interval)",
        ),
    ],
    quantities: &catalogue(&QUANTITIES),
    options: &[
        ("template", "\"piecewise-hazard\""),
        (
            "cuts",
            "interval starts, from 0, increasing, e.g. [0, 6, 12, 24] (last interval open-ended; 2 to 50 values)",
        ),
        (
            "time_unit",
            "unit of time for cuts, horizons and medians (label only; default \"months\")",
        ),
        (
            "covariates",
            "names of covariates used by profiles, e.g. [\"arm\"]",
        ),
    ],
    starter: include_str!("../../../model-templates/piecewise-hazard.toml"),
    build,
    brms: &super::BRMS,
};

/// The quantity table (the catalogue lists it in this order).
static QUANTITIES: [QuantityDef<SurvQuantity>; 9] = {
    use SurvQuantity::*;
    [
        SurvivalProb.def(
            "survival_prob",
            "P(event-free at horizon) = exp(−Σ h_j Δ_j(h))",
            "horizon",
        ),
        EventProb.def("event_prob", "P(event by horizon) = 1 − S(h)", "horizon"),
        MedianSurvival.def(
            "median_survival",
            "median survival (H(t) = ln 2)",
            "profile (optional)",
        ),
        Rmst.def(
            "rmst",
            "restricted mean survival time to horizon",
            "horizon",
        ),
        HazardRatio.def(
            "hazard_ratio",
            "hazard ratio a vs b, exp((x_a − x_b)'β), the same in every interval",
            "profiles = [a, b], horizon (optional)",
        ),
        super::SURVIVAL_DIFFERENCE,
        super::RMST_DIFFERENCE,
        super::RMST_RATIO,
        MedianRatio.def("median_ratio", "median at a / at b", "profiles = [a, b]"),
    ]
};

/// A piecewise-exponential model.
pub struct Piecewise {
    pub time_unit: String,
    pub covariates: Vec<String>,
    /// Interval starts c_1 = 0 < … < c_J.
    pub cuts: Vec<f64>,
    priors: PriorSet,
    log_hazard_1: usize,
    walk_sd: usize,
    /// The `hazard_effect_<c>` prior of each covariate.
    effects: Vec<usize>,
}

/// One draw's survival curve at one profile: baseline hazards `h` (one per
/// interval) times the hazard ratio `m` = e^{x'β}.
#[derive(Clone, Copy)]
pub struct Curve<'a> {
    pub cuts: &'a [f64],
    pub h: &'a [f64],
    pub m: f64,
}

impl Curve<'_> {
    /// End of interval j (+∞ for the last).
    #[inline]
    fn end(&self, j: usize) -> f64 {
        self.cuts.get(j + 1).copied().unwrap_or(f64::INFINITY)
    }

    /// H(t) = m·Σ_j h_j·Δ_j(t).
    #[inline]
    pub fn cum_hazard(&self, t: f64) -> f64 {
        let mut s = 0.0;
        for (j, h) in self.h.iter().enumerate() {
            let c = self.cuts[j];
            if t <= c {
                break;
            }
            s += h * (t.min(self.end(j)) - c);
        }
        self.m * s
    }

    /// S(t) = exp(−H(t)).
    #[inline]
    pub fn surv(&self, t: f64) -> f64 {
        (-self.cum_hazard(t)).exp()
    }

    /// The t where H(t) = ln 2, in the interval that crosses it.
    pub fn median(&self) -> f64 {
        let target = std::f64::consts::LN_2;
        let mut acc = 0.0;
        let last = self.h.len() - 1;
        for (j, h) in self.h.iter().enumerate() {
            let r = self.m * h;
            if j == last {
                // Open-ended: +∞ only when r underflows to 0.
                return self.cuts[j] + (target - acc) / r;
            }
            let len = self.end(j) - self.cuts[j];
            if acc + r * len >= target {
                return self.cuts[j] + (target - acc) / r;
            }
            acc += r * len;
        }
        f64::INFINITY
    }

    /// RMST(τ) = ∫₀^τ S, Σ_j S(c_j)·Δ_j·(1 − e^{−x})/x with x = r_j·Δ_j.
    pub fn rmst(&self, tau: f64) -> f64 {
        let mut acc = 0.0f64; // H at c_j
        let mut area = 0.0;
        for (j, h) in self.h.iter().enumerate() {
            let c = self.cuts[j];
            if tau <= c {
                break;
            }
            let d = tau.min(self.end(j)) - c;
            let x = self.m * h * d;
            let f = if x > 1e-10 {
                -(-x).exp_m1() / x
            } else {
                1.0 - 0.5 * x
            };
            area += (-acc).exp() * d * f;
            acc += x;
        }
        area
    }
}

/// Per distinct profile of an evaluation: (covariates, x'β of each draw).
type EtaCache = Vec<(Vec<f64>, Vec<f64>)>;

thread_local! {
    /// Parameter draws, baseline hazards of the current evaluation (draw-major,
    /// n × J) and the log hazard ratio of each draw at the requests' profiles.
    static SCRATCH: RefCell<(Vec<Vec<f64>>, Vec<f64>, EtaCache)> =
        const { RefCell::new((Vec::new(), Vec::new(), Vec::new())) };
}

impl Piecewise {
    /// Number of intervals J.
    pub fn intervals(&self) -> usize {
        self.cuts.len()
    }

    /// Fill `hz` (n × J, draw-major) with the baseline hazards of parameter
    /// draws `p` and walk columns `z` (J − 1 standard normals).
    fn hazards(&self, p: &[Vec<f64>], z: &[Vec<f64>], hz: &mut Vec<f64>) {
        let jn = self.intervals();
        let n = p[self.log_hazard_1].len();
        hz.clear();
        hz.reserve(n * jn);
        for i in 0..n {
            let mut lh = p[self.log_hazard_1][i];
            let tau = p[self.walk_sd][i];
            hz.push(lh.exp());
            for zj in z {
                lh += tau * zj[i];
                hz.push(lh.exp());
            }
        }
    }

    /// One-profile quantity `q` of a curve; `hz` = the horizon.
    #[inline]
    fn value(q: SurvQuantity, c: &Curve, hz: f64) -> f64 {
        use SurvQuantity::*;
        match q {
            SurvivalProb => c.surv(hz),
            EventProb => -(-c.cum_hazard(hz)).exp_m1(),
            MedianSurvival => c.median(),
            Rmst => c.rmst(hz),
            _ => f64::NAN,
        }
    }
}

impl Model for Piecewise {
    fn template(&self) -> &'static str {
        INFO.name
    }

    fn hypers(&self) -> &[Hyper] {
        &self.priors.hypers
    }

    fn request(&self, ctx: &Ctx, path: &[Seg], quantity: &str, raw: &RawBelief) -> Result<Request> {
        let frame = Frame {
            info: &INFO,
            table: &QUANTITIES,
            covariates: &self.covariates,
            time_unit: &self.time_unit,
            cure_kind: Cure::None,
        };
        // Proportional hazards in every interval: every hazard ratio is constant.
        request_in(&frame, ctx, path, quantity, raw, &|_, _, _| true)
    }

    fn draw_base(&self, n: usize, plan: &crate::rng::Plan) -> BaseDraws {
        let mut cols = self.priors.draw_base(n, plan);
        let first = cols.len() as u64;
        for j in 0..self.intervals() - 1 {
            cols.push(plan.normals(first + j as u64, n));
        }
        BaseDraws {
            n,
            cols,
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
            let (p, hz, etas) = &mut *s;
            let np = self.priors.priors.len();
            p.resize(np, Vec::new());
            self.priors.fill(h, &base.cols[..np], p)?;
            self.hazards(p, &base.cols[np..], hz);
            let jn = self.intervals();
            let n = base.n;
            // x'β per draw, once per distinct profile.
            let mut used = 0usize;
            let mut eta_of = |x: &Vec<f64>, etas: &mut EtaCache| -> usize {
                if let Some(j) = etas[..used].iter().position(|e| &e.0 == x) {
                    return j;
                }
                if used == etas.len() {
                    etas.push((Vec::new(), Vec::new()));
                }
                let (ex, ev) = &mut etas[used];
                ex.clone_from(x);
                ev.clear();
                ev.resize(n, 0.0);
                for (c, e) in self.effects.iter().enumerate() {
                    if x[c] != 0.0 {
                        for (v, b) in ev.iter_mut().zip(&p[*e]) {
                            *v += x[c] * b;
                        }
                    }
                }
                used += 1;
                used - 1
            };
            for (r, o) in reqs.iter().zip(out.iter_mut()) {
                let Asked { q, constant } = *r.detail.get::<Asked>()?;
                o.resize(n, 0.0);
                let t = r.horizon.unwrap_or(1.0);
                let a = eta_of(&r.profiles[0], etas);
                let curve = |i: usize, eta: f64| Curve {
                    cuts: &self.cuts,
                    h: &hz[i * jn..(i + 1) * jn],
                    m: eta.exp(),
                };
                if r.profiles.len() == 2 {
                    let b = eta_of(&r.profiles[1], etas);
                    let (ea, eb) = (&etas[a].1, &etas[b].1);
                    for (i, v) in o.iter_mut().enumerate() {
                        let eta = [ea[i], eb[i]];
                        *v = contrast(
                            q,
                            |pq, k| Self::value(pq, &curve(i, eta[k]), t),
                            |k| {
                                if constant {
                                    eta[k]
                                } else {
                                    // ln H(h) = x'β + ln Σ h_j Δ_j(h).
                                    eta[k] + curve(i, 0.0).cum_hazard(t).ln()
                                }
                            },
                        );
                    }
                } else {
                    let ea = &etas[a].1;
                    for (i, v) in o.iter_mut().enumerate() {
                        *v = Self::value(q, &curve(i, ea[i]), t);
                    }
                }
            }
            Ok(())
        })
    }

    fn priors(&self, h: &[f64]) -> Vec<PriorStatement> {
        let unit = self.time_unit.clone();
        let mut v = self.priors.statements(h, |p| match p {
            "log_hazard_1" => format!(
                "log hazard of the first interval [0, {}) {unit} (events per unit of time)",
                crate::numerics::format::code(self.cuts[1])
            ),
            "hazard_walk_sd" => "sd of the random walk on the log hazards".to_string(),
            other => match other.strip_prefix("hazard_effect_") {
                Some(c) => format!("log hazard ratio per unit of {c} (every interval)"),
                None => other.replace('_', " "),
            },
        });
        v.push(self.walk_statement());
        v
    }

    fn spread(&self, h: &[f64]) -> f64 {
        self.priors.spread(h)
    }

    fn likelihood(&self) -> Option<crate::templates::Code> {
        Some(self.code())
    }

    /// Per draw and set: the prior columns and one simulation's parameter
    /// draws (8 B each, twice), the walk columns and the draw-major hazards
    /// (2·J values), outputs and sort buffers (8 words), and the per-profile
    /// cache (16 B a profile, counted as 16 profiles); for every set a fit holds
    /// at once ([`crate::templates::fit_peak_bytes`]).
    fn working_bytes(&self, n: usize) -> (u64, String) {
        let k = self.priors.priors.len() as u64;
        let j = self.intervals() as u64;
        let per_draw = 8 * (2 * k + 2 * j + 8) + 16 * 16;
        (
            crate::templates::fit_peak_bytes(n, per_draw, 0),
            format!("{n} draws × {j} intervals × {k} priors"),
        )
    }
}

/// Read `[model] cuts`: a list of 2 to [`MAX_CUTS`] finite times, from 0,
/// strictly increasing.
fn read_cuts(ctx: &Ctx) -> Result<Vec<f64>> {
    let m = ctx.model();
    let path = [key("model"), key("cuts")];
    let example = "e.g. cuts = [0, 6, 12, 24]  # interval starts; the last interval is open-ended";
    let v = m.get("cuts").ok_or_else(|| {
        ctx.err(&[key("model")], "piecewise-hazard needs [model] cuts")
            .with_hint(example)
    })?;
    let toml::Value::Array(a) = v else {
        return Err(ctx
            .err(&path, format!("cuts = {v}: expected a list of times"))
            .with_hint(example));
    };
    if a.is_empty() {
        return Err(ctx
            .err(&path, "cuts = [] is empty: give the interval starts")
            .with_hint(example));
    }
    if a.len() > MAX_CUTS {
        return Err(ctx
            .err(
                &path,
                format!("cuts has {} values; at most {MAX_CUTS} intervals", a.len()),
            )
            .with_hint("merge intervals: each adds a hazard and a step of the walk"));
    }
    let mut cuts = Vec::with_capacity(a.len());
    for (i, x) in a.iter().enumerate() {
        // Positions are 1-based, as in the key path the error prints.
        let (k, prev_k) = (i + 1, i);
        let mut p = path.to_vec();
        p.push(Seg::Index(i));
        let c = match x {
            toml::Value::Float(f) => *f,
            toml::Value::Integer(n) => *n as f64,
            _ => return Err(ctx.err(&p, format!("cuts[{k}] = {x}: expected a number"))),
        };
        if !c.is_finite() {
            return Err(ctx
                .err(&p, format!("cuts[{k}] = {x} is not finite"))
                .with_hint("the last interval is open-ended already: do not close it with inf"));
        }
        if c < 0.0 {
            return Err(ctx.err(&p, format!("cuts[{k}] = {x} is negative: times start at 0")));
        }
        if i == 0 && c != 0.0 {
            return Err(ctx
                .err(
                    &p,
                    format!("cuts[1] = {x}: the first interval must start at 0"),
                )
                .with_hint(format!("e.g. cuts = [0, {x}, …]")));
        }
        if let Some(&prev) = cuts.last() {
            if c == prev {
                return Err(ctx.err(
                    &p,
                    format!("cuts[{k}] = {x} repeats cuts[{prev_k}]: an interval would be empty"),
                ));
            }
            if c < prev {
                return Err(ctx
                    .err(
                        &p,
                        format!("cuts[{k}] = {x} is below cuts[{prev_k}] = {prev}"),
                    )
                    .with_hint("list the interval starts in increasing order"));
            }
        }
        cuts.push(c);
    }
    if cuts.len() == 1 {
        return Err(ctx
            .err(&path, "cuts = [0] makes one interval: a constant hazard")
            .with_hint(
                "give at least two interval starts, or use template = \"parametric-survival\" \
                 with latency = \"exponential\"",
            ));
    }
    Ok(cuts)
}

fn build(ctx: &Ctx) -> Result<Box<dyn Model>> {
    let m = ctx.model();
    let mp = |k: &str| [key("model"), key(k)];
    let keys: Vec<&str> = INFO.options.iter().map(|o| o.0).collect();
    ctx.check_keys(&[key("model")], m, &keys)?;
    let cuts = read_cuts(ctx)?;
    let time_unit = match m.get("time_unit") {
        Some(v) => ctx.string(&mp("time_unit"), v)?.to_string(),
        None => "months".to_string(),
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
    let log_hazard_1 = priors.add(
        ctx,
        "log_hazard_1",
        &real,
        "family = \"normal\"\n  mean = { fit = [-6.0, 1.0] }\n  sd = { fit = [0.05, 2.0] }",
    )?;
    let walk_sd = priors.add(
        ctx,
        "hazard_walk_sd",
        &crate::templates::priors::families_on(crate::dist::Support::Positive),
        "family = \"half-normal\"\n  scale = { fit = [0.02, 1.5] }",
    )?;
    let mut effects = Vec::new();
    for c in &covariates {
        let he = format!("hazard_effect_{c}");
        if !ctx.has_prior(&he) {
            return Err(ctx
                .err(
                    &mp("covariates"),
                    format!("covariate `{c}` has no effect prior"),
                )
                .with_hint(format!(
                    "add [prior.{he}] (log hazard ratio per unit of {c}, the same in every interval)"
                )));
        }
        effects.push(priors.add(ctx, &he, &real, "")?);
    }
    Ok(Box::new(Piecewise {
        time_unit,
        covariates,
        cuts,
        priors,
        log_hazard_1,
        walk_sd,
        effects,
    }))
}

#[path = "piecewise_code.rs"]
mod code;

#[cfg(test)]
#[path = "piecewise_tests.rs"]
mod tests;

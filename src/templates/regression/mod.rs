//! Shared machinery of the regression templates (`linear`, `logistic`, `poisson`):
//! the linear predictor η = α + (x − x̄)ᵀβ over a design ([`crate::design`]), with
//! an intercept prior `[prior.intercept]`, a noise prior `[prior.sigma]` (linear
//! only; `inverse-gamma` there is a prior on σ², the other families on σ) and a
//! shrinkage prior on the coefficients `[prior.coefficients]` ([`coef`]).
//! Covariates enter centred at their design means, so the intercept is the
//! linear predictor at the average covariate profile.
//!
//! Derived quantities, per prior draw:
//! * `r2`: Bayesian R² over the design (Gelman, Goodrich, Gabry & Vehtari 2019,
//!   The American Statistician 73): V_μ/(V_μ + V_res), with V_μ the variance of the
//!   mean response over the design rows and V_res the mean residual variance:
//!   σ² (linear), mean p(1 − p) (logistic), mean μ (Poisson).
//! * `r2_marginal`: V/(V + ρ) with V = Σ_j s_j² ω_j², the signal variance averaged
//!   over the covariates and the normal part of the coefficient prior given its
//!   scales, and ρ the reference residual variance: σ² (linear), the pseudo-variance
//!   1/(p̄(1 − p̄)) at p̄ = logistic(α) (logistic) and 1/μ̄ at μ̄ = exposure·e^α
//!   (Poisson) (Piironen & Vehtari 2017, EJS 11, §3.5). Under R2D2 it is exactly Beta(a, b).
//! * `r2_latent` (logistic): var(η)/(var(η) + π²/3), McKelvey & Zavoina (1975);
//!   Agresti, Categorical Data Analysis (3rd ed.) §6.3.7.
//! * `effective_nonzero`: m_eff = Σ_j (1 − κ_j), κ_j = 1/(1 + nρ⁻¹s_j²ω_j²)
//!   (Piironen & Vehtari 2017, EJS 11, eq. 3.1–3.4, with ω_j = τλ_j).
//! * `mean_response` at a profile: η (linear), logistic(η), exposure·e^η (Poisson);
//!   `event_prob` (logistic) and `rate` (Poisson, per unit exposure, e^η) likewise.
//! * `prevalence` (logistic): the mean of logistic(η) over the design rows.
//! * `odds_ratio` / `rate_ratio` for a contrast `"NAME"` (covariate NAME one unit
//!   higher) or `"NAME:DELTA"` (DELTA units higher), in the units of the design as
//!   given (before any standardising): exp(δ·β_NAME), the same at every profile.
//! * `signal_sd`: the sd of the linear predictor over the design, √var_rows(η).
//!
//! Profiles: `[profile.NAME]` tables of design-column values in the design's own
//! units; a covariate not named takes its design mean. `"reference"` is the design
//! mean itself (η = α).

pub mod code;
pub mod coef;
pub mod table;

use super::{
    BaseDraws, Hyper, HyperValue, Model, PriorSet, PriorStatement, QuantityInfo, Request,
    TemplateInfo,
};
use crate::design::Design;
use crate::dist::Support;
use crate::error::{choice_hint, Error, Result};
use crate::input::raw::RawBelief;
use crate::input::{key, Ctx, Seg};
use crate::numerics::logistic;
use crate::rng;
use coef::{CoefPrior, Eff, Kind, Products};
use std::sync::{Arc, Mutex};

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Link {
    Identity,
    Logit,
    Log,
}

pub const R2: usize = 0;
pub const R2_MARGINAL: usize = 1;
pub const R2_LATENT: usize = 2;
pub const EFF: usize = 3;
pub const MEAN: usize = 4;
pub const EVENT: usize = 5;
pub const RATE: usize = 6;
pub const PREVALENCE: usize = 7;
pub const ODDS_RATIO: usize = 8;
pub const RATE_RATIO: usize = 9;
pub const SIGNAL_SD: usize = 10;

fn code_of(name: &str) -> Option<usize> {
    Some(match name {
        "r2" => R2,
        "r2_marginal" => R2_MARGINAL,
        "r2_latent" => R2_LATENT,
        "effective_nonzero" => EFF,
        "mean_response" => MEAN,
        "event_prob" => EVENT,
        "rate" => RATE,
        "prevalence" => PREVALENCE,
        "odds_ratio" => ODDS_RATIO,
        "rate_ratio" => RATE_RATIO,
        "signal_sd" => SIGNAL_SD,
        _ => return None,
    })
}

/// Catalogue entries, shared by the three templates' quantity lists.
pub const Q_R2: QuantityInfo = QuantityInfo {
    name: "r2",
    about: "Bayesian R² over the design: var(mean response)/(that + mean residual variance)",
    needs: "",
};
pub const Q_R2_MARGINAL: QuantityInfo = QuantityInfo {
    name: "r2_marginal",
    about: "R² with the signal variance averaged over covariates and coefficient normals (R2D2: Beta(a, b))",
    needs: "",
};
pub const Q_EFF: QuantityInfo = QuantityInfo {
    name: "effective_nonzero",
    about: "effective number of non-zero coefficients, Σ(1 − κ_j)",
    needs: "",
};
pub const Q_MEAN: QuantityInfo = QuantityInfo {
    name: "mean_response",
    about: "mean response at a profile",
    needs: "profile (optional; default: design mean)",
};
pub const Q_SIGNAL: QuantityInfo = QuantityInfo {
    name: "signal_sd",
    about: "sd of the linear predictor over the design",
    needs: "",
};

/// A sparse linear form: (column, coefficient) pairs.
type Form = Vec<(usize, f64)>;
/// A request's profiles (the lookup key) and its linear form.
type Keyed = (Vec<Vec<f64>>, Form, String);

/// What the beliefs ask for beyond the always-computed products.
#[derive(Debug, Clone, Default)]
struct Needs {
    rows: bool,
    q: bool,
    eff: bool,
    /// (profiles key, sparse linear form a: η − α = aᵀβ).
    forms: Vec<(Vec<Vec<f64>>, Form)>,
}

pub struct Regression {
    pub info: &'static TemplateInfo,
    pub link: Link,
    pub design: Design,
    pub exposure: f64,
    priors: PriorSet,
    intercept: usize,
    sigma: Option<(usize, bool)>,
    pub coef: CoefPrior,
    needs: Mutex<Needs>,
    /// The last regularised-horseshoe table, keyed by the draw plan: a later set of
    /// base draws with the same streams and no more draws uses its first rows
    /// (draw i depends only on its own streams), so the coarse and refit bases of a
    /// fit share the full base's set-up.
    tables: Mutex<Option<(rng::Plan, Arc<table::Table>)>>,
}

/// λ-free work cached per set of base draws.
struct RegBase {
    /// Cached kinds: products with unit global multiplier.
    cached: Option<Products>,
    /// Recomputed kinds: normals and local variates, draws × p.
    z: Vec<f64>,
    loc: Vec<f64>,
    forms: Vec<Vec<Vec<f64>>>,
    sparse: Vec<Vec<(usize, f64)>>,
    rows: bool,
    q: bool,
    eff: bool,
    /// Regularised horseshoe: tabulated design products ([`table`]).
    table: Option<Arc<table::Table>>,
    /// With the table: κ_i = √(IG(ν/2, ν/2) quantile of draw i's slab uniform), so
    /// that c_i = s·κ_i without a quantile per evaluation.
    kappa: Vec<f64>,
}

/// The bounds of a hyperparameter (a fixed value is its own bounds).
fn bounds(h: &Hyper) -> (f64, f64) {
    match h.value {
        HyperValue::Fixed(x) => (x, x),
        HyperValue::Free { lo, hi, .. } => (lo, hi),
    }
}

/// Build a regression template from the belief file.
pub fn build(ctx: &Ctx, info: &'static TemplateInfo, link: Link) -> Result<Box<dyn Model>> {
    let m = ctx.model();
    let keys: Vec<&str> = info.options.iter().map(|o| o.0).collect();
    ctx.check_keys(&[key("model")], m, &keys)?;
    let exposure = match m.get("exposure") {
        Some(v) => ctx.positive(&[key("model"), key("exposure")], v)?,
        None => 1.0,
    };
    let design = crate::design::from_ctx(ctx)?;
    let mut priors = PriorSet::default();
    let intercept = priors.add(
        ctx,
        "intercept",
        &crate::dist::names_where(|f| f.real_valued()),
        "family = \"normal\"\n  mean = 0.0\n  sd = { fit = [0.1, 5.0] }",
    )?;
    let sigma = if link == Link::Identity {
        let s = priors.add(
            ctx,
            "sigma",
            &crate::dist::names_where(|f| f.suits(crate::dist::Role::NoiseSd)),
            "family = \"half-normal\"\n  scale = 1.0",
        )?;
        Some((s, priors.priors[s].family.name == "inverse-gamma"))
    } else {
        if ctx.has_prior("sigma") {
            let _ = ctx.prior_table("sigma", "");
            return Err(ctx
                .err(
                    &[key("prior"), key("sigma")],
                    format!("template {} has no noise scale", info.name),
                )
                .with_hint("remove [prior.sigma]: the outcome's variance follows from its mean"));
        }
        None
    };
    let coef = coef::parse(ctx, &mut priors.hypers)?;
    Ok(Box::new(Regression {
        info,
        link,
        design,
        exposure,
        priors,
        intercept,
        sigma,
        coef,
        needs: Mutex::new(Needs::default()),
        tables: Mutex::new(None),
    }))
}

fn sub(path: &[Seg], k: &str) -> Vec<Seg> {
    let mut p = path.to_vec();
    p.push(key(k));
    p
}

impl Regression {
    /// The regularised-horseshoe table ([`table`]) for these base draws, when the
    /// beliefs need the design quadratic form but not the rows, slab_df is fixed
    /// and the global or slab scale is free.
    fn tabulate(
        &self,
        h0: &[f64],
        cols: &[Vec<f64>],
        z: &[f64],
        loc: &[f64],
        plan: &rng::Plan,
    ) -> Option<Arc<table::Table>> {
        let c = &self.coef;
        let hy = &self.priors.hypers;
        let n = cols[cols.len() - 3].len();
        if let Ok(g) = self.tables.lock() {
            if let Some((p, t)) = g.as_ref() {
                if p == plan && t.draws >= n {
                    return Some(t.clone());
                }
            }
        }
        if c.kind != Kind::RegHorseshoe || hy[c.idx[2]].is_free() {
            return None;
        }
        let ((tlo, thi), (slo, shi)) = (bounds(&hy[c.idx[0]]), bounds(&hy[c.idx[1]]));
        let (ulo, uhi) = ((tlo / shi).ln(), (thi / slo).ln());
        if !(ulo.is_finite() && uhi.is_finite() && uhi > ulo) {
            return None;
        }
        let k = cols.len() - 3;
        let (gu, cu) = (&cols[k], &cols[k + 1]);
        let mut unit = h0.to_vec();
        unit[c.idx[0]] = 1.0;
        unit[c.idx[1]] = 1.0;
        let kappa = c.slabs(&unit, cu).ok()?;
        let a: Vec<f64> = gu
            .iter()
            .zip(&kappa)
            .map(|(g, k)| c.global(&unit, *g, 0.0, 0.0) / k)
            .collect();
        if a.iter().any(|x| !(x.is_finite() && *x > 0.0)) {
            return None;
        }
        let t = Arc::new(table::Table::build(&self.design, &a, z, loc, ulo, uhi)?);
        if let Ok(mut g) = self.tables.lock() {
            *g = Some((*plan, t.clone()));
        }
        Some(t)
    }

    fn unit(&self, j: usize) -> f64 {
        if self.design.standardised {
            1.0 / self.design.raw_sds[j]
        } else {
            1.0
        }
    }

    /// A named profile: raw covariate values (design means where not given) and
    /// its sparse linear form.
    fn profile(&self, ctx: &Ctx, path: &[Seg], name: &str) -> Result<(Vec<f64>, Form)> {
        let mut x = self.design.raw_means.clone();
        if name == "reference" {
            return Ok((x, Vec::new()));
        }
        let Some(t) = ctx.raw.profile.get(name) else {
            let mut names: Vec<&str> = ctx.raw.profile.keys().map(String::as_str).collect();
            names.push("reference");
            return Err(ctx
                .err(path, format!("unknown profile \"{name}\""))
                .with_hint(choice_hint(name, &names)));
        };
        let mut form = Vec::new();
        for (k, v) in t {
            let pp = [key("profile"), key(name), key(k)];
            let j = self.design.column(k).ok_or_else(|| {
                let names: Vec<&str> = self.design.names.iter().map(String::as_str).collect();
                let hint = if names.len() <= 30 {
                    choice_hint(k, &names)
                } else {
                    match crate::error::nearest(k, names.iter().copied()) {
                        Some(n) => format!("did you mean `{n}`?"),
                        None => format!(
                            "the design has columns {} … {}",
                            names[0],
                            names[names.len() - 1]
                        ),
                    }
                };
                ctx.err(
                    &pp,
                    format!("profile \"{name}\" names `{k}`, which is not a column of the design"),
                )
                .with_hint(hint)
            })?;
            let val = ctx.num(&pp, v)?;
            x[j] = val;
            form.push((j, (val - self.design.raw_means[j]) * self.unit(j)));
        }
        form.sort_by_key(|f| f.0);
        Ok((x, form))
    }

    /// Parse `contrast = "NAME"` or `"NAME:DELTA"`.
    fn contrast(&self, ctx: &Ctx, path: &[Seg], c: &str) -> Result<Keyed> {
        let (name, delta) = match c.split_once(':') {
            Some((n, d)) => {
                let d: f64 = d
                    .trim()
                    .parse()
                    .ok()
                    .filter(|d: &f64| d.is_finite() && *d != 0.0)
                    .ok_or_else(|| {
                        ctx.err(
                            path,
                            format!("contrast \"{c}\": `{d}` is not a non-zero number"),
                        )
                        .with_hint(
                            "write \"NAME\" (one unit higher) or \"NAME:DELTA\", e.g. \"age:10\"",
                        )
                    })?;
                (n.trim(), d)
            }
            None => (c.trim(), 1.0),
        };
        let j = self.design.column(name).ok_or_else(|| {
            let names: Vec<&str> = self.design.names.iter().map(String::as_str).collect();
            ctx.err(
                path,
                format!("contrast \"{c}\": `{name}` is not a column of the design"),
            )
            .with_hint(match crate::error::nearest(name, names.iter().copied()) {
                Some(n) => format!("did you mean `{n}`?"),
                None => "write \"NAME\" or \"NAME:DELTA\" with NAME a design column".to_string(),
            })
        })?;
        let base = self.design.raw_means.clone();
        let mut hi = base.clone();
        hi[j] += delta;
        let label = if delta == 1.0 {
            format!("{name} +1")
        } else {
            format!("{name} {delta:+}")
        };
        Ok((vec![hi, base], vec![(j, delta * self.unit(j))], label))
    }

    fn ref_var(&self, alpha: f64, sigma2: f64) -> f64 {
        match self.link {
            Link::Identity => sigma2,
            Link::Logit => 1.0 / (logistic(alpha) * logistic(-alpha)),
            Link::Log => (-alpha).exp() / self.exposure,
        }
    }

    fn mean_of(&self, eta: f64) -> f64 {
        match self.link {
            Link::Identity => eta,
            Link::Logit => logistic(eta),
            Link::Log => self.exposure * eta.exp(),
        }
    }

    /// Bayesian R² of one draw from its design-row linear predictors.
    fn r2_rows(&self, eta: impl Iterator<Item = f64>, sigma2: f64, nr: usize) -> f64 {
        let (mut s, mut ss, mut res) = (0.0, 0.0, 0.0);
        for e in eta {
            let m = self.mean_of(e);
            s += m;
            ss += m * m;
            res += match self.link {
                Link::Identity => sigma2,
                Link::Logit => logistic(e) * logistic(-e),
                Link::Log => m,
            };
        }
        let n = nr as f64;
        let mean = s / n;
        let var = (ss / n - mean * mean).max(0.0);
        let res = res / n;
        ratio(var, res)
    }
}

/// v/(v + r), 1 when v is infinite, 0 when both vanish.
#[inline]
fn ratio(v: f64, r: f64) -> f64 {
    if v.is_infinite() || (v > 0.0 && r == 0.0) {
        1.0
    } else if v > 0.0 {
        v / (v + r)
    } else {
        0.0
    }
}

impl Model for Regression {
    fn template(&self) -> &'static str {
        self.info.name
    }

    fn hypers(&self) -> &[Hyper] {
        &self.priors.hypers
    }

    fn request(&self, ctx: &Ctx, path: &[Seg], quantity: &str, raw: &RawBelief) -> Result<Request> {
        let code = code_of(quantity).ok_or_else(|| {
            ctx.err(
                &sub(path, "quantity"),
                format!("unknown quantity \"{quantity}\""),
            )
        })?;
        if raw.horizon.is_some() {
            return Err(ctx.err(
                &sub(path, "horizon"),
                format!("{quantity} takes no horizon"),
            ));
        }
        if raw.profiles.is_some() {
            return Err(ctx
                .err(
                    &sub(path, "profiles"),
                    format!("{quantity} takes no `profiles`"),
                )
                .with_hint("use `profile = \"NAME\"`, or `contrast` for odds_ratio / rate_ratio"));
        }
        let at_profile = matches!(code, MEAN | EVENT | RATE);
        let ratio_q = matches!(code, ODDS_RATIO | RATE_RATIO);
        if raw.profile.is_some() && !at_profile {
            return Err(ctx.err(
                &sub(path, "profile"),
                format!("{quantity} is a design-level quantity and takes no `profile`"),
            ));
        }
        if raw.contrast.is_some() && !ratio_q {
            return Err(ctx.err(
                &sub(path, "contrast"),
                format!("{quantity} takes no `contrast` (only odds_ratio and rate_ratio do)"),
            ));
        }
        let mut needs = self
            .needs
            .lock()
            .map_err(|_| Error::Numeric("lock poisoned".into()))?;
        let mut label = quantity.to_string();
        let (profiles, names) = if at_profile {
            let name = raw
                .profile
                .clone()
                .unwrap_or_else(|| "reference".to_string());
            let (x, form) = self.profile(ctx, &sub(path, "profile"), &name)?;
            let key = vec![x];
            if !needs.forms.iter().any(|f| f.0 == key) {
                needs.forms.push((key.clone(), form));
            }
            if name != "reference" {
                label.push_str(&format!(" ({name})"));
            }
            (key, vec![name])
        } else if ratio_q {
            let c = raw.contrast.as_deref().ok_or_else(|| {
                ctx.err(path, format!("{quantity} needs `contrast`"))
                    .with_hint(
                        "contrast = \"NAME\" (covariate NAME one unit higher) or \"NAME:DELTA\"",
                    )
            })?;
            let (key, form, l) = self.contrast(ctx, &sub(path, "contrast"), c)?;
            if !needs.forms.iter().any(|f| f.0 == key) {
                needs.forms.push((key.clone(), form));
            }
            label.push_str(&format!(" ({l})"));
            (key, vec![l, "design mean".to_string()])
        } else {
            (Vec::new(), Vec::new())
        };
        if code == EFF {
            needs.eff = true;
        }
        if matches!(code, PREVALENCE) || (code == R2 && self.link != Link::Identity) {
            needs.rows = true;
        }
        if matches!(code, R2 | R2_LATENT | SIGNAL_SD) {
            needs.q = true;
        }
        let support = match code {
            R2 | R2_MARGINAL | R2_LATENT | EVENT | PREVALENCE => Support::Unit,
            MEAN => match self.link {
                Link::Identity => Support::Real,
                Link::Logit => Support::Unit,
                Link::Log => Support::Positive,
            },
            _ => Support::Positive,
        };
        Ok(Request {
            quantity: quantity.to_string(),
            code,
            horizon: None,
            profiles,
            profile_names: names,
            support,
            allows_inf: false,
            label,
            unit: None,
        })
    }

    fn draw_base(&self, n: usize, plan: &rng::Plan) -> BaseDraws {
        let (seed, block) = (plan.seed, plan.block);
        let mut cols = self.priors.draw_base(n, plan);
        cols.push(plan.uniforms(coef::GLOBAL_STREAM, n));
        cols.push(plan.uniforms(coef::SLAB_STREAM, n));
        cols.push(plan.uniforms(coef::R2_STREAM, n));
        let needs = self.needs.lock().map(|g| g.clone()).unwrap_or_default();
        let sparse: Vec<Vec<(usize, f64)>> = needs.forms.iter().map(|f| f.1.clone()).collect();
        let p = self.design.cols();
        let h0: Vec<f64> = self
            .priors
            .hypers
            .iter()
            .map(Hyper::default_value)
            .collect();
        let d = &self.design;
        let c = &self.coef;
        let mut ex = RegBase {
            cached: None,
            z: Vec::new(),
            loc: Vec::new(),
            forms: needs.forms.iter().map(|f| f.0.clone()).collect(),
            sparse,
            rows: needs.rows,
            q: needs.q,
            eff: needs.eff,
            table: None,
            kappa: Vec::new(),
        };
        if c.cached {
            let fill = |i: usize, w: &mut [f64], z: &mut [f64]| {
                c.base_draw(d, seed, block, i, z, w);
                for x in w.iter_mut() {
                    *x = c.cached_w(&h0, *x);
                }
            };
            let eff = if needs.eff { Eff::Store } else { Eff::None };
            ex.cached = Some(coef::products(
                d, n, &ex.sparse, needs.rows, needs.q, eff, true, &fill,
            ));
        } else {
            use rayon::prelude::*;
            ex.z = vec![0.0; n * p];
            ex.loc = vec![0.0; n * p];
            ex.z.par_chunks_mut(p)
                .zip(ex.loc.par_chunks_mut(p))
                .enumerate()
                .for_each(|(i, (z, l))| c.base_draw(d, seed, block, i, z, l));
            // Bases on the fresh streams only judge the fitted point, and the
            // replicates of the Monte Carlo error take a gradient there (a few
            // evaluations each): the exact products are cheaper than a table.
            if needs.q && !needs.rows && plan.block == rng::FIT_STREAMS {
                ex.table = self.tabulate(&h0, &cols, &ex.z, &ex.loc, plan);
                if ex.table.is_some() {
                    let mut unit = h0.clone();
                    unit[c.idx[1]] = 1.0;
                    ex.kappa = c.slabs(&unit, &cols[cols.len() - 2]).unwrap_or_default();
                }
            }
        }
        BaseDraws {
            n,
            cols,
            extra: Some(Box::new(ex)),
        }
    }

    fn simulate(
        &self,
        h: &[f64],
        base: &BaseDraws,
        reqs: &[&Request],
        out: &mut [Vec<f64>],
    ) -> Result<()> {
        let ex = base
            .extra
            .as_ref()
            .and_then(|e| e.downcast_ref::<RegBase>())
            .ok_or_else(|| {
                Error::Numeric("base draws were not made by a regression template".into())
            })?;
        let n = base.n;
        let k = self.priors.priors.len();
        let mut par = vec![Vec::new(); k];
        self.priors.fill(h, &base.cols[..k], &mut par)?;
        let (gu, cu, ru) = (&base.cols[k], &base.cols[k + 1], &base.cols[k + 2]);
        let alpha = &par[self.intercept];
        let sigma2: Vec<f64> = match self.sigma {
            Some((s, true)) => par[s].clone(),
            Some((s, false)) => par[s].iter().map(|x| x * x).collect(),
            None => Vec::new(),
        };
        let s2 = |i: usize| sigma2.get(i).copied().unwrap_or(0.0);
        let rho: Vec<f64> = (0..n).map(|i| self.ref_var(alpha[i], s2(i))).collect();
        let c = &self.coef;
        let wr2 = c.r2d2_w(h, ru)?;
        let d = &self.design;
        let nr = d.rows();
        let p = d.cols();
        let fresh;
        let (g, prod): (Vec<f64>, &Products) = if c.cached {
            let g = (0..n)
                .map(|i| c.global(h, gu[i], wr2.get(i).copied().unwrap_or(0.0), rho[i]))
                .collect();
            let prod = ex
                .cached
                .as_ref()
                .ok_or_else(|| Error::Numeric("cached design products missing".into()))?;
            (g, prod)
        } else {
            let tau: Vec<f64> = (0..n).map(|i| c.global(h, gu[i], 0.0, rho[i])).collect();
            let slabs = if ex.kappa.len() == n {
                let s = h[c.idx[1]];
                ex.kappa.iter().map(|k| s * k).collect()
            } else {
                c.slabs(h, cu)?
            };
            let irho: Vec<f64> = rho.iter().map(|r| 1.0 / r).collect();
            let kind = c.kind;
            let fill = |i: usize, w: &mut [f64], z: &mut [f64]| {
                z.copy_from_slice(&ex.z[i * p..(i + 1) * p]);
                let loc = &ex.loc[i * p..(i + 1) * p];
                match kind {
                    Kind::RegHorseshoe => {
                        let (t, cs) = (tau[i], slabs[i]);
                        for (w, l) in w.iter_mut().zip(loc) {
                            // ω = c·τλ/√(c² + τ²λ²); the sqrt form is safe below 1e150.
                            let tl = t * l;
                            *w = if tl < 1e150 {
                                cs * tl / (cs * cs + tl * tl).sqrt()
                            } else {
                                cs
                            };
                        }
                    }
                    _ => {
                        let (pi, s) = (h[c.idx[0]], h[c.idx[1]]);
                        for (w, l) in w.iter_mut().zip(loc) {
                            *w = if *l < pi { s } else { 0.0 };
                        }
                    }
                }
            };
            let eff = if ex.eff {
                Eff::Direct(&irho)
            } else {
                Eff::None
            };
            let parallel = rayon::current_thread_index().is_none();
            let u = (h[c.idx[0]] / h[c.idx[1]]).ln();
            match ex.table.as_ref().filter(|t| t.covers(u)) {
                Some(t) => {
                    // β = τ·f(τ0/s): the quadratic forms from the table, the cheap
                    // O(p) parts (linear forms, effective_nonzero) exactly.
                    let (q, v) = t.eval(u, n);
                    let mut pr = if ex.eff {
                        coef::products(d, n, &[], false, false, eff, parallel, &fill)
                    } else {
                        Products::default()
                    };
                    pr.q = q;
                    pr.v = v;
                    let mut w = vec![0.0; p];
                    let mut z = vec![0.0; p];
                    pr.forms = vec![vec![0.0; n]; ex.sparse.len()];
                    if !ex.sparse.is_empty() {
                        for i in 0..n {
                            fill(i, &mut w, &mut z);
                            for (f, o) in ex.sparse.iter().zip(pr.forms.iter_mut()) {
                                o[i] =
                                    f.iter().map(|(j, a)| a * w[*j] * z[*j]).sum::<f64>() / tau[i];
                            }
                        }
                    }
                    fresh = pr;
                    (tau.clone(), &fresh)
                }
                None => {
                    fresh = coef::products(d, n, &ex.sparse, ex.rows, ex.q, eff, parallel, &fill);
                    (vec![1.0; n], &fresh)
                }
            }
        };
        for (r, o) in reqs.iter().zip(out.iter_mut()) {
            o.resize(n, 0.0);
            let form = || -> Result<&Vec<f64>> {
                ex.forms
                    .iter()
                    .position(|f| *f == r.profiles)
                    .map(|k| &prod.forms[k])
                    .ok_or_else(|| {
                        Error::Numeric(format!(
                            "{}: profile not prepared in the base draws",
                            r.label
                        ))
                    })
            };
            let rows = || -> Result<&Vec<f64>> {
                if ex.rows && prod.rows.len() == n * nr {
                    Ok(&prod.rows)
                } else {
                    Err(Error::Numeric(format!(
                        "{}: design rows not prepared in the base draws",
                        r.label
                    )))
                }
            };
            match r.code {
                R2 if self.link == Link::Identity => {
                    for (i, v) in o.iter_mut().enumerate() {
                        *v = ratio(g[i] * g[i] * prod.q[i], s2(i));
                    }
                }
                R2 => {
                    let rw = rows()?;
                    for (i, v) in o.iter_mut().enumerate() {
                        let m = &rw[i * nr..(i + 1) * nr];
                        *v = self.r2_rows(m.iter().map(|x| alpha[i] + g[i] * x), s2(i), nr);
                    }
                }
                R2_MARGINAL => {
                    for (i, v) in o.iter_mut().enumerate() {
                        *v = ratio(g[i] * g[i] * prod.v[i], rho[i]);
                    }
                }
                R2_LATENT => {
                    let r3 = std::f64::consts::PI.powi(2) / 3.0;
                    for (i, v) in o.iter_mut().enumerate() {
                        *v = ratio(g[i] * g[i] * prod.q[i], r3);
                    }
                }
                EFF => {
                    if c.cached {
                        if prod.eff_store.len() != n * p {
                            return Err(Error::Numeric(
                                "effective_nonzero not prepared in the base draws".into(),
                            ));
                        }
                        for (i, v) in o.iter_mut().enumerate() {
                            let t = g[i] * g[i] / rho[i];
                            *v = prod.eff_store[i * p..(i + 1) * p]
                                .iter()
                                .map(|e| coef::shrink_term(*e as f64 * t))
                                .sum();
                        }
                    } else {
                        o.copy_from_slice(&prod.eff);
                    }
                }
                MEAN | EVENT | RATE => {
                    let f = form()?;
                    for (i, v) in o.iter_mut().enumerate() {
                        let eta = alpha[i] + g[i] * f[i];
                        *v = match r.code {
                            EVENT => logistic(eta),
                            RATE => eta.exp(),
                            _ => self.mean_of(eta),
                        };
                    }
                }
                ODDS_RATIO | RATE_RATIO => {
                    let f = form()?;
                    for (i, v) in o.iter_mut().enumerate() {
                        *v = (g[i] * f[i]).exp();
                    }
                }
                PREVALENCE => {
                    let rw = rows()?;
                    for (i, v) in o.iter_mut().enumerate() {
                        let m = &rw[i * nr..(i + 1) * nr];
                        *v = m.iter().map(|x| logistic(alpha[i] + g[i] * x)).sum::<f64>()
                            / nr as f64;
                    }
                }
                SIGNAL_SD => {
                    for (i, v) in o.iter_mut().enumerate() {
                        *v = g[i].abs() * prod.q[i].sqrt();
                    }
                }
                _ => return Err(Error::Numeric(format!("unknown quantity code {}", r.code))),
            }
        }
        Ok(())
    }

    fn priors(&self, h: &[f64]) -> Vec<PriorStatement> {
        let sig_var = matches!(self.sigma, Some((_, true)));
        let mut v = self.priors.statements(h, |p| match p {
            "intercept" => "linear predictor at the design mean".to_string(),
            "sigma" if sig_var => "noise variance σ² (inverse-gamma on the variance)".to_string(),
            "sigma" => "noise sd σ".to_string(),
            other => other.to_string(),
        });
        if sig_var {
            for st in v.iter_mut().filter(|s| s.parameter == "sigma") {
                let get = |n: &str| {
                    st.params
                        .iter()
                        .find(|p| p.0 == n)
                        .map_or(f64::NAN, |p| p.1)
                };
                st.code = Some(code::sigma_variance(get("shape"), get("scale")));
            }
        }
        let c = &self.coef;
        let mut about = format!(
            "each of the {} coefficients (per unit of the {} design)",
            self.design.cols(),
            if self.design.standardised {
                "standardised"
            } else {
                "centred"
            }
        );
        if matches!(c.kind, Kind::Horseshoe | Kind::RegHorseshoe) {
            about.push_str(if c.global_fixed {
                "; global scale fixed"
            } else {
                "; global scale ~ half-Cauchy(0, global_scale)"
            });
        }
        v.push(PriorStatement {
            parameter: "coefficients".to_string(),
            // Not a scalar family of crate::dist: a structured prior on the vector.
            family: format!("coefficients/{}", c.kind.name()),
            params: c
                .names
                .iter()
                .zip(&c.idx)
                .map(|(n, i)| (n.to_string(), h[*i]))
                .collect(),
            about,
            code: Some(code::coefficients(
                c,
                h,
                &self.design,
                self.link,
                self.exposure,
            )),
        });
        v
    }

    /// Bytes of the base draws ([`Model::draw_base`], above) for n draws, twice
    /// (the fit and the fresh-draw judgement hold one set each), plus one
    /// simulation's per-draw vectors. Per draw: the prior columns and three coefficient
    /// streams (8 B each); cached kinds: q, v and one value per registered profile
    /// form (8 B each), n s_j² w_j² for effective_nonzero (p × 4 B, f32) and X_cβ
    /// for row-level quantities (rows × 8 B); recomputed kinds: the normals and
    /// local variates (2p × 8 B), X_cβ being recomputed per evaluation.
    fn working_bytes(&self, n: usize) -> (u64, String) {
        let what = format!(
            "{n} draws × {} design columns ({} rows)",
            self.design.cols(),
            self.design.rows()
        );
        let needs = self.needs.lock().map(|g| g.clone()).unwrap_or_default();
        let (n, p, r) = (
            n as u64,
            self.design.cols() as u64,
            self.design.rows() as u64,
        );
        let k = self.priors.priors.len() as u64;
        let forms = needs.forms.len() as u64;
        let mut per_draw = 8 * (k + 3);
        if self.coef.cached {
            per_draw += 8 * (2 + forms);
            if needs.eff {
                per_draw += 4 * p;
            }
        } else {
            per_draw += 16 * p;
        }
        if needs.rows {
            per_draw += 8 * r;
        }
        // One simulation: parameter columns, ρ, global scales, outputs and sort buffers.
        let sim = 8 * (k + 8 + 3 * forms.max(1));
        (n.saturating_mul(2 * per_draw + sim), what)
    }

    fn spread(&self, h: &[f64]) -> f64 {
        let k = self.priors.priors.len() as f64;
        let c = &self.coef;
        let x = |j: usize| h[c.idx[j]];
        let sd = match c.kind {
            Kind::Normal | Kind::StudentT => x(c.idx.len() - 1),
            Kind::Laplace => std::f64::consts::SQRT_2 * x(0),
            Kind::Horseshoe | Kind::RegHorseshoe => x(0),
            Kind::R2d2 => {
                let (a, b) = (x(0), x(1));
                (a * b / ((a + b).powi(2) * (a + b + 1.0))).sqrt()
            }
            Kind::SpikeSlab => x(1) * x(0).sqrt(),
        };
        let cs = if sd > 0.0 && sd.is_finite() {
            sd.ln()
        } else {
            0.0
        };
        (self.priors.spread(h) * k + cs) / (k + 1.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::discrepancy::{discrepancy, noise_floor, Kind as DKind};
    use crate::dist::{Continuous, Mixed};
    use crate::spec::{parse, Overrides, Spec};
    use crate::target::Target;
    use std::sync::Arc;

    /// W² upper 0.1 % point 1.168 (Stephens 1974, JASA 69, Table 1A) over the null
    /// mean 1/6: a CvM distance above 7.0 × the noise floor rejects P = T at 0.1 %.
    const CVM_999_OVER_MEAN: f64 = 1.168 * 6.0;

    fn spec(text: &str) -> Spec {
        parse(text, None, &Overrides::default()).unwrap()
    }

    fn draws(s: &Spec, h: &[f64], n: usize) -> Vec<Vec<f64>> {
        let base = s
            .model
            .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
        let reqs: Vec<&Request> = s.beliefs.iter().map(|b| &b.request).collect();
        let mut out = vec![Vec::new(); reqs.len()];
        s.model.simulate(h, &base, &reqs, &mut out).unwrap();
        out
    }

    fn h0(s: &Spec) -> Vec<f64> {
        s.hypers().iter().map(Hyper::default_value).collect()
    }

    fn cvm_vs(d: Arc<dyn Continuous>, mut x: Vec<f64>) -> (f64, f64) {
        let t = Target::new(Mixed::continuous(d));
        x.sort_by(f64::total_cmp);
        (
            discrepancy(DKind::CramerVonMises, &t, &x),
            noise_floor(DKind::CramerVonMises, &t, x.len()),
        )
    }

    fn mean_sd(x: &[f64]) -> (f64, f64) {
        let n = x.len() as f64;
        let m = x.iter().sum::<f64>() / n;
        (
            m,
            (x.iter().map(|v| (v - m).powi(2)).sum::<f64>() / (n - 1.0)).sqrt(),
        )
    }

    const R2D2: &str = r#"
[model]
template = "linear"
[design]
columns = 60
rows = 80
correlation = "ar1"
rho = 0.5
seed = 3
[prior.intercept]
family = "normal"
mean = 0.0
sd = 1.0
[prior.sigma]
family = "half-normal"
scale = 2.0
[prior.coefficients]
family = "r2d2"
a = 2.0
b = 5.0
concentration = 0.5
[[belief]]
quantity = "r2_marginal"
distribution = { family = "beta", alpha = 2, beta = 5 }
"#;

    #[test]
    fn r2d2_marginal_r2_is_exactly_beta() {
        // Zhang, Naughton, Bondell & Reich (2022, JASA 117, §2): R² ~ Beta(a, b) by
        // construction. On an unstandardised, correlated design our r2_marginal is
        // that R² draw by draw, so its CvM distance to Beta(2, 5) is pure Monte Carlo
        // noise, and each draw equals the Beta quantile of its uniform.
        let s = spec(R2D2);
        let n = 20_000;
        let x = draws(&s, &h0(&s), n).remove(0);
        let base = s
            .model
            .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
        let u = &base.cols[2 + 2];
        let b = crate::dist::beta::Beta::new(2.0, 5.0).unwrap();
        for i in (0..n).step_by(997) {
            assert!((x[i] - b.quantile(u[i])).abs() < 1e-9, "draw {i}");
        }
        let (d, floor) = cvm_vs(Arc::new(b), x);
        assert!(d < CVM_999_OVER_MEAN * floor, "CvM {d} vs floor {floor}");
    }

    #[test]
    fn horseshoe_fixed_global_gives_p0_effective_nonzero() {
        // Piironen & Vehtari (2017, EJS 11, eq. 3.12): with τ fixed at
        // τ0 = p0/(D − p0)·σ/√n, E[m_eff] = p0. Here D = 100, p0 = 5, n = 200,
        // standardised design (s_j = 1) and σ² ~ Inv-Gamma(10001, 10000) (σ ≈ 1,
        // sd(σ) ≈ 0.005). For fixed σ the identity is exact: E[κ] = 1/(1 + √a) for
        // λ ~ C⁺(0, 1), a = nσ⁻²τ² (checked by quadrature with scipy 1.17:
        // 0.3420513 at a = 3.7), so E[m_eff] = D√a/(1 + √a) = p0. The spread of σ
        // adds a bias ≈ ½ f''(1) var(σ) ≈ 1e-4 (f(σ) = Dk/(σ + k), k = p0/(D − p0));
        // tolerance 4 Monte Carlo SE + 0.001.
        let tau0 = 5.0 / 95.0 / 200f64.sqrt();
        let text = format!(
            r#"
[model]
template = "linear"
[design]
columns = 100
rows = 200
seed = 5
standardise = true
[prior.intercept]
family = "normal"
mean = 0.0
sd = 1.0
[prior.sigma]
family = "inverse-gamma"
shape = 10001.0
scale = 10000.0
[prior.coefficients]
family = "horseshoe"
global = "fixed"
global_scale = {tau0}
[[belief]]
quantity = "effective_nonzero"
quantiles = {{ "0.1" = 2, "0.5" = 5, "0.9" = 9 }}
"#
        );
        let s = spec(&text);
        let n = 20_000;
        let x = draws(&s, &h0(&s), n).remove(0);
        let (m, sd) = mean_sd(&x);
        let se = sd / (n as f64).sqrt();
        assert!(
            (m - 5.0).abs() < 4.0 * se + 1e-3,
            "mean m_eff {m} (SE {se})"
        );
        // With a half-Cauchy global scale C⁺(0, τ0) instead, the mean is not p0:
        // 10.1147 by quadrature (scipy 1.17) for σ = 1 — about twice p0.
        let text = text.replace("global = \"fixed\"", "global = \"half-cauchy\"");
        let s = spec(&text);
        let x = draws(&s, &h0(&s), n).remove(0);
        let (m, sd) = mean_sd(&x);
        let se = sd / (n as f64).sqrt();
        assert!(
            (m - 10.1147).abs() < 4.0 * se + 5e-3,
            "half-Cauchy mean m_eff {m} (SE {se})"
        );
    }

    fn hadamard_csv(dir: &std::path::Path) -> std::path::PathBuf {
        // Columns 2..9 of the 16 × 16 Sylvester–Hadamard matrix: orthogonal ±1
        // columns with mean 0 and variance 1, so S = XᵀX/n = I exactly.
        let mut h = vec![vec![1.0f64]];
        while h.len() < 16 {
            let m = h.len();
            let mut g = vec![vec![0.0; 2 * m]; 2 * m];
            for i in 0..m {
                for j in 0..m {
                    g[i][j] = h[i][j];
                    g[i][j + m] = h[i][j];
                    g[i + m][j] = h[i][j];
                    g[i + m][j + m] = -h[i][j];
                }
            }
            h = g;
        }
        let mut s = (1..=8)
            .map(|j| format!("h{j}"))
            .collect::<Vec<_>>()
            .join(",");
        s.push('\n');
        for row in &h {
            let r: Vec<String> = row[1..9].iter().map(|v| format!("{v}")).collect();
            s.push_str(&r.join(","));
            s.push('\n');
        }
        let p = dir.join("hadamard.csv");
        std::fs::write(&p, s).unwrap();
        p
    }

    #[test]
    fn ridge_signal_variance_is_scaled_chi_square() {
        // Derivation: β ~ N(0, s²I) and var_rows(Xβ) = βᵀSβ with S = X_cᵀX_c/n. For
        // S = I (orthogonal standardised columns) βᵀSβ = s²·Σ z_j² ~ s²χ²_p exactly
        // (in general s²·Σ_k μ_k χ²_1 over the eigenvalues μ_k of S, mean s²·tr S).
        // Here p = 8, s = 0.7: signal_sd²/s² ~ χ²_8 = Gamma(shape 4, rate 1/2).
        let dir = tempfile::tempdir().unwrap();
        let csv = hadamard_csv(dir.path());
        let text = format!(
            r#"
[model]
template = "linear"
[design]
file = "{}"
[prior.intercept]
family = "normal"
mean = 0.0
sd = 1.0
[prior.sigma]
family = "half-normal"
scale = 1.0
[prior.coefficients]
family = "normal"
scale = 0.7
[[belief]]
quantity = "signal_sd"
quantiles = {{ "0.1" = 1, "0.5" = 2, "0.9" = 3 }}
"#,
            csv.display()
        );
        let s = spec(&text);
        let x: Vec<f64> = draws(&s, &h0(&s), 20_000)
            .remove(0)
            .iter()
            .map(|v| v * v / 0.49)
            .collect();
        let chi2 = crate::dist::gamma::Gamma::new(4.0, 0.5).unwrap();
        let (d, floor) = cvm_vs(Arc::new(chi2), x);
        assert!(d < CVM_999_OVER_MEAN * floor, "CvM {d} vs floor {floor}");

        // Independent synthetic standardised design, p = 50, n = 200: E[βᵀSβ] =
        // s²·tr S = s²p exactly; sd(βᵀSβ) = s²√(2 tr S²), tolerance 4 SE.
        let text = R2D2
            .replace(
                "family = \"r2d2\"\na = 2.0\nb = 5.0\nconcentration = 0.5",
                "family = \"normal\"\nscale = 0.7",
            )
            .replace("correlation = \"ar1\"\nrho = 0.5\n", "standardise = true\n")
            .replace("columns = 60\nrows = 80", "columns = 50\nrows = 200")
            .replace("quantity = \"r2_marginal\"", "quantity = \"signal_sd\"")
            .replace(
                "family = \"beta\", alpha = 2, beta = 5",
                "family = \"lognormal\", meanlog = 1, sdlog = 1",
            );
        let s = spec(&text);
        let n = 20_000;
        let x: Vec<f64> = draws(&s, &h0(&s), n)
            .remove(0)
            .iter()
            .map(|v| v * v)
            .collect();
        let (m, sd) = mean_sd(&x);
        assert!(
            (m - 0.49 * 50.0).abs() < 4.0 * sd / (n as f64).sqrt(),
            "mean {m}"
        );
    }

    const LOGISTIC: &str = r#"
[model]
template = "logistic"
[design]
columns = 40
rows = 120
correlation = "exchangeable"
rho = 0.3
seed = 8
[profile.older]
x1 = 1.5
x7 = -0.4
[prior.intercept]
family = "normal"
mean = -1.5
sd = 0.8
[prior.coefficients]
family = "laplace"
scale = 0.3
[[belief]]
quantity = "event_prob"
profile = "older"
quantiles = { "0.1" = 0.05, "0.5" = 0.2, "0.9" = 0.4 }
[[belief]]
quantity = "event_prob"
quantiles = { "0.1" = 0.05, "0.5" = 0.2, "0.9" = 0.4 }
[[belief]]
quantity = "odds_ratio"
contrast = "x7:2"
quantiles = { "0.1" = 0.5, "0.5" = 1, "0.9" = 2 }
"#;

    #[test]
    fn logistic_event_prob_is_logistic_of_linear_predictor() {
        // Draw by draw: event_prob(profile) = logistic(α + (x − x̄)ᵀβ), with β rebuilt
        // here from the base variates independently of the cached products.
        let s = spec(LOGISTIC);
        let h = h0(&s);
        let n = 300;
        let x = draws(&s, &h, n);
        let base = s
            .model
            .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
        let z0: Vec<f64> = base.cols[0].clone();
        let alpha: Vec<f64> = z0.iter().map(|z| -1.5 + 0.8 * z).collect();
        let d = crate::design::synthetic_rows(
            120,
            40,
            crate::design::Correlation::Exchangeable(0.3),
            8,
        );
        let mean = |j: usize| (0..120).map(|r| d[r * 40 + j]).sum::<f64>() / 120.0;
        let (m1, m7) = (mean(0), mean(6));
        let cp = CoefPrior {
            kind: Kind::Laplace,
            global_fixed: false,
            idx: vec![2],
            names: vec!["scale"],
            shape: 0.0,
            cached: true,
        };
        let des = crate::design::Design::from_rows(
            "t".into(),
            (1..=40).map(|j| format!("x{j}")).collect(),
            120,
            &d,
            false,
        )
        .unwrap();
        let (mut z, mut w) = (vec![0.0; 40], vec![0.0; 40]);
        for i in 0..n {
            cp.base_draw(&des, s.seed, 0, i, &mut z, &mut w);
            let beta = |j: usize| 0.3 * w[j] * z[j];
            let eta = alpha[i] + (1.5 - m1) * beta(0) + (-0.4 - m7) * beta(6);
            assert!((x[0][i] - logistic(eta)).abs() < 1e-12, "draw {i}");
            assert!((x[1][i] - logistic(alpha[i])).abs() < 1e-15);
            assert!((x[2][i] - (2.0 * beta(6)).exp()).abs() < 1e-12 * x[2][i]);
        }
    }

    #[test]
    fn intercept_only_event_prob_is_logit_normal() {
        // At the reference profile (the design mean) η = α ~ N(−1.5, 0.8), so the
        // event probability is LogitNormal(−1.5, 0.8): mean 0.2091412, variance
        // 0.0155056 (quadrature, scipy 1.17; crate::dist::logit_normal agrees).
        let s = spec(LOGISTIC);
        let n = 40_000;
        let x = draws(&s, &h0(&s), n).remove(1);
        let ln = crate::dist::logit_normal::LogitNormal::new(-1.5, 0.8).unwrap();
        let (mu, var) = (ln.mean().unwrap(), ln.variance().unwrap());
        assert!((mu - 0.2091412).abs() < 1e-6 && (var - 0.0155056).abs() < 1e-6);
        let (m, sd) = mean_sd(&x);
        let se = sd / (n as f64).sqrt();
        assert!((m - mu).abs() < 4.0 * se, "mean {m} vs {mu}");
        // sd of the sample variance ≈ √((μ4 − σ⁴)/n) ≤ √(E[(p − μ)⁴]/n); use the draws' own.
        let m4 = x.iter().map(|v| (v - m).powi(4)).sum::<f64>() / n as f64;
        let se_v = ((m4 - sd.powi(4)) / n as f64).sqrt();
        assert!(
            (sd * sd - var).abs() < 4.0 * se_v,
            "var {} vs {var}",
            sd * sd
        );
        let (d, floor) = cvm_vs(Arc::new(ln), x);
        assert!(d < CVM_999_OVER_MEAN * floor, "CvM {d} vs floor {floor}");
    }

    #[test]
    fn scale_only_cache_matches_recomputation_and_threads() {
        // The cached path (ω = g·w) and the recomputed path agree: a spike-and-slab
        // prior with inclusion fixed is cached, with inclusion free it is recomputed.
        let text = R2D2
            .replace(
                "family = \"r2d2\"\na = 2.0\nb = 5.0\nconcentration = 0.5",
                "family = \"spike-and-slab\"\ninclusion = 0.3\nslab_scale = 0.5",
            )
            .replace("quantity = \"r2_marginal\"", "quantity = \"r2\"");
        let cached = spec(&text);
        let free = spec(&text.replace("inclusion = 0.3", "inclusion = { fit = [0.01, 0.9] }"));
        let mut h = h0(&free);
        let k = free
            .hypers()
            .iter()
            .position(|x| x.name == "coefficients.inclusion")
            .unwrap();
        h[k] = 0.3;
        let a = draws(&cached, &h0(&cached), 1000).remove(0);
        let b = draws(&free, &h, 1000).remove(0);
        for (x, y) in a.iter().zip(&b) {
            assert!((x - y).abs() < 1e-12);
        }
        // Same numbers on one thread as on the default pool.
        let one = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap();
        let c = one.install(|| draws(&free, &h, 1000).remove(0));
        assert_eq!(b, c);
    }

    #[test]
    fn table_matches_exact() {
        // The tabulated regularised-horseshoe products (table.rs) against the exact
        // recomputation at random (global_scale, slab_scale) within the bounds, on
        // the benchmark design (p = 1,000, n = 200, bounds spanning 5.7 decades of
        // τ0/s). Relative error < 1e-6 on every draw: far below the Monte Carlo
        // error of any CDF estimated from 4,000 draws (≈ 1/√4000 ≈ 1.6e-2).
        let text = r#"
[model]
template = "linear"
[design]
columns = 1000
rows = 200
correlation = "ar1"
rho = 0.3
standardise = true
[simulation]
draws = 400
seed = 3
[prior.intercept]
family = "normal"
mean = 0.0
sd = 1.0
[prior.sigma]
family = "half-normal"
scale = 1.0
[prior.coefficients]
family = "regularised-horseshoe"
global_scale = { fit = [0.00001, 0.1] }
slab_scale = { fit = [0.1, 5.0] }
slab_df = 4
[[belief]]
quantity = "r2"
distribution = { family = "beta", alpha = 3, beta = 9 }
[[belief]]
quantity = "r2_marginal"
distribution = { family = "beta", alpha = 3, beta = 9 }
[[belief]]
quantity = "signal_sd"
distribution = { family = "half-normal", scale = 1.0 }
[[belief]]
quantity = "effective_nonzero"
distribution = { family = "half-normal", scale = 10.0 }
"#;
        let s = spec(text);
        let n = 400;
        let base = s
            .model
            .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
        let ex = base
            .extra
            .as_ref()
            .unwrap()
            .downcast_ref::<RegBase>()
            .unwrap();
        assert!(ex.table.is_some(), "the table is built");
        let mut exact = s
            .model
            .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
        exact
            .extra
            .as_mut()
            .unwrap()
            .downcast_mut::<RegBase>()
            .unwrap()
            .table = None;
        let reqs: Vec<&Request> = s.beliefs.iter().map(|b| &b.request).collect();
        let kt = s
            .hypers()
            .iter()
            .position(|x| x.name == "coefficients.global_scale")
            .unwrap();
        let ks = s
            .hypers()
            .iter()
            .position(|x| x.name == "coefficients.slab_scale")
            .unwrap();
        let mut r = rng::stream(11, 0);
        let mut worst = 0.0f64;
        for trial in 0..12 {
            let mut h = h0(&s);
            // Log-uniform within the bounds; the first two at the interval's ends.
            let (ut, us) = match trial {
                0 => (0.0, 1.0),
                1 => (1.0, 0.0),
                _ => (rng::open01(&mut r), rng::open01(&mut r)),
            };
            h[kt] = (1e-5f64.ln() + ut * (0.1f64 / 1e-5).ln()).exp();
            h[ks] = (0.1f64.ln() + us * 50f64.ln()).exp();
            let mut a = vec![Vec::new(); reqs.len()];
            let mut b = vec![Vec::new(); reqs.len()];
            s.model.simulate(&h, &base, &reqs, &mut a).unwrap();
            s.model.simulate(&h, &exact, &reqs, &mut b).unwrap();
            for (x, y) in a.iter().zip(&b) {
                for (x, y) in x.iter().zip(y) {
                    let e = (x - y).abs() / y.abs().max(1e-300);
                    worst = worst.max(if *y == 0.0 && *x == 0.0 { 0.0 } else { e });
                }
            }
        }
        eprintln!("table vs exact: worst relative error {worst:.3e}");
        assert!(worst < 1e-6, "worst relative error {worst}");
        // Same numbers on one thread as on the default pool.
        let h = h0(&s);
        let mut a = vec![Vec::new(); reqs.len()];
        s.model.simulate(&h, &base, &reqs, &mut a).unwrap();
        let one = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap();
        let b = one.install(|| draws(&s, &h, n));
        assert_eq!(a, b);
    }
}

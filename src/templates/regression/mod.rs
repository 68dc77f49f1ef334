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
//!
//! The module's parts: [`link`] (response scale), [`quantity`] (the quantities
//! and the definitions the templates share), [`profile`] (profiles and
//! contrasts), [`request`] (validation and what the beliefs need), [`base`] (base
//! draws and their cached products), [`simulate`] (one evaluation), [`coef`] (the
//! coefficient priors), [`table`] (tabulated regularised-horseshoe products) and
//! [`code`] (export code).

mod base;
pub mod code;
pub mod coef;
pub mod groups;
pub mod indep;
mod indep_code;
mod link;
pub mod multilevel;
pub mod own;
mod products;
mod profile;
pub mod quantity;
mod reach;
mod request;
mod simulate;
pub mod table;
#[cfg(test)]
mod tests;
#[cfg(test)]
mod tests_groups;
#[cfg(test)]
mod tests_indep;
#[cfg(test)]
mod tests_multilevel;
#[cfg(test)]
mod tests_slopes;

use super::{
    BaseDraws, Hyper, Model, PriorSet, PriorStatement, QuantityDef, Request, TemplateInfo,
};
use crate::design::Design;
use crate::error::Result;
use crate::input::raw::RawBelief;
use crate::input::{key, Ctx, Seg};
use crate::rng;
use coef::{CoefPrior, Kind};
pub use link::Link;
pub use quantity::{q_mean, RegDef, RegQuantity, Q_EFF, Q_R2, Q_R2_MARGINAL, Q_R2_SHARE, Q_SIGNAL};
use request::Needs;

pub struct Regression {
    pub info: &'static TemplateInfo,
    pub link: Link,
    pub design: Design,
    pub exposure: f64,
    priors: PriorSet,
    intercept: usize,
    sigma: Option<(usize, bool)>,
    pub coef: CoefPrior,
    /// Covariates with priors of their own ([`own`]).
    pub own: Vec<own::Own>,
    /// Design covariance of the own columns, k × k.
    own_cov: Vec<f64>,
    /// The prior index of the random-intercept sd (multilevel templates).
    cluster: Option<usize>,
    /// Random slopes ([`multilevel::Slope`]; multilevel templates only).
    pub slopes: Vec<multilevel::Slope>,
    /// The template's quantity table.
    quantities: &'static [QuantityDef<RegQuantity>],
    /// What the beliefs need ([`Model::prepare`]); nothing before it.
    needs: Needs,
    tables: base::TableCache,
}

/// Build a regression template from the belief file: `info` and `quantities` are
/// the template's registry entry and quantity table.
pub fn build(
    ctx: &Ctx,
    info: &'static TemplateInfo,
    link: Link,
    quantities: &'static [RegDef],
) -> Result<Box<dyn Model>> {
    build_with(ctx, info, link, quantities, false)
}

/// Build a regression template, with a random intercept per cluster when
/// `multilevel` ([`multilevel`]).
pub fn build_with(
    ctx: &Ctx,
    info: &'static TemplateInfo,
    link: Link,
    quantities: &'static [RegDef],
    multilevel: bool,
) -> Result<Box<dyn Model>> {
    let model = make(ctx, info, link, quantities, multilevel)?;
    // Every [profile.NAME] table, used by a belief or not, names design columns
    // only: a misspelt column in an unused profile is refused, not ignored.
    for name in ctx.raw.profile.keys() {
        model.profile(ctx, &[key("profile"), key(name)], name)?;
    }
    Ok(Box::new(model))
}

/// The model [`build_with`] boxes.
pub(super) fn make(
    ctx: &Ctx,
    info: &'static TemplateInfo,
    link: Link,
    quantities: &'static [RegDef],
    multilevel: bool,
) -> Result<Regression> {
    let m = ctx.model();
    let keys: Vec<&str> = info.options.iter().map(|o| o.0).collect();
    ctx.check_keys(&[key("model")], m, &keys)?;
    let exposure = match m.get("exposure") {
        Some(v) => ctx.positive(&[key("model"), key("exposure")], v)?,
        None => 1.0,
    };
    let design = crate::design::from_ctx(ctx)?;
    multilevel::check_clusters(ctx, info, &design, multilevel)?;
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
            &super::priors::families_on(crate::dist::Support::Positive),
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
    let cluster = if multilevel {
        Some(priors.add(
            ctx,
            "cluster_sd",
            &super::priors::families_on(crate::dist::Support::Positive),
            "family = \"half-normal\"\n  scale = { fit = [0.05, 3.0] }",
        )?)
    } else {
        None
    };
    let own = own::parse(ctx, &design, &mut priors)?;
    // After the covariate-specific priors: their base streams do not move.
    let slopes = multilevel::parse_slopes(ctx, info, &design, multilevel, &mut priors)?;
    let own_cols: Vec<usize> = own.iter().map(|o| o.col).collect();
    let mut coef = coef::parse(ctx, &design, &mut priors.hypers, &own_cols)?;
    if coef.groups.is_some() && coef.indep.is_none() && !own.is_empty() {
        return Err(ctx
            .err(
                &[key("prior"), key("coefficients"), key("groups")],
                "groups of covariates cannot be combined with covariate-specific priors",
            )
            .with_hint("put those covariates in a group of their own, or drop `groups`"));
    }
    if !own.is_empty() {
        coef.skip = (0..design.cols())
            .map(|j| own.iter().any(|o| o.col == j))
            .collect();
    }
    let own_cov = own::own_cov(&design, &own);
    Ok(Regression {
        info,
        link,
        design,
        exposure,
        priors,
        intercept,
        sigma,
        coef,
        own,
        own_cov,
        cluster,
        slopes,
        quantities,
        needs: Needs::default(),
        tables: base::TableCache::default(),
    })
}

impl Model for Regression {
    fn template(&self) -> &'static str {
        self.info.name
    }

    fn hypers(&self) -> &[Hyper] {
        &self.priors.hypers
    }

    fn request(&self, ctx: &Ctx, path: &[Seg], quantity: &str, raw: &RawBelief) -> Result<Request> {
        self.resolve(ctx, path, quantity, raw)
    }

    fn prepare(&mut self, requests: &[&Request]) -> Result<()> {
        self.needs = Needs::of(requests, self)?;
        Ok(())
    }

    fn warnings(&self, beliefs: &[(&Request, &crate::target::Target)]) -> Vec<String> {
        self.reach(beliefs)
    }

    fn draw_base(&self, n: usize, plan: &rng::Plan) -> BaseDraws {
        self.draw(n, plan)
    }

    fn simulate(
        &self,
        h: &[f64],
        base: &BaseDraws,
        reqs: &[&Request],
        out: &mut [Vec<f64>],
    ) -> Result<()> {
        let ev = self.evaluation(h, base)?;
        for (r, o) in reqs.iter().zip(out.iter_mut()) {
            ev.fill(r, o)?;
        }
        Ok(())
    }

    fn priors(&self, h: &[f64]) -> Vec<PriorStatement> {
        let sig_var = matches!(self.sigma, Some((_, true)));
        let mut v = self.priors.statements(h, |p| match p {
            "intercept" if self.cluster.is_some() => {
                "linear predictor at the design mean in a typical cluster (u = 0)".to_string()
            }
            "intercept" => "linear predictor at the design mean".to_string(),
            "cluster_sd" => "sd σ_u of the clusters' random intercepts u_j ~ N(0, σ_u²) (linear-predictor scale)".to_string(),
            other if other.starts_with("slope_sd_") => format!(
                "sd σ_v of the clusters' random slopes of `{}` (v_j ~ N(0, σ_v²), per unit as given in the design file, independent of u_j)",
                &other[9..]
            ),
            other if other.starts_with("b_") => format!(
                "coefficient of `{}` per unit as given in the design file (not standardised)",
                &other[2..]
            ),
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
        if let Some(st) = indep_code::statement(self, h) {
            // The random intercepts first: Stan wants every declaration of a
            // block before its statements, and the groups end with the
            // assignments that assemble `beta`.
            if let Some(cl) = &self.design.clusters {
                v.push(code::cluster_effects(cl));
                if !self.slopes.is_empty() {
                    v.push(code::cluster_slopes(cl, &self.slopes, &self.design, &v));
                }
            }
            v.push(st);
            return v;
        }
        let mut about = format!(
            "each of the {} coefficients (per unit of the {} design){}",
            self.design.cols() - self.own.len(),
            self.design.stored_as(),
            if self.own.is_empty() {
                String::new()
            } else {
                format!(
                    "; {} covariate(s) with priors of their own are not in this vector",
                    self.own.len()
                )
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
        if let Some(cl) = &self.design.clusters {
            v.push(code::cluster_effects(cl));
            if !self.slopes.is_empty() {
                v.push(code::cluster_slopes(cl, &self.slopes, &self.design, &v));
            }
        }
        v
    }

    fn working_bytes(&self, n: usize) -> (u64, String) {
        self.bytes_for(n)
    }

    fn spread(&self, h: &[f64]) -> f64 {
        let k = self.priors.priors.len() as f64;
        // One term per coefficient prior: the shared one, or each group's.
        let coef: Vec<&CoefPrior> = match &self.coef.indep {
            Some(ind) => ind.priors.iter().collect(),
            None => vec![&self.coef],
        };
        let s = coef
            .iter()
            .fold(self.priors.spread(h) * k, |s, c| s + ln_coef_sd(c, h));
        s / (k + coef.len() as f64)
    }
}

/// ln of a scale summary of one coefficient family at `h` (0 where it is not
/// positive and finite), for [`Model::spread`].
fn ln_coef_sd(c: &CoefPrior, h: &[f64]) -> f64 {
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
    if sd > 0.0 && sd.is_finite() {
        sd.ln()
    } else {
        0.0
    }
}

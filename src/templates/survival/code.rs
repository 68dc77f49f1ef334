//! The likelihood of a survival template as export code, in our exact
//! parameterisation, for `export --with-likelihood` (Stan and PyMC), and how
//! brms states the survival templates' priors ([`BRMS`], [`BRMS_CURE`]).
//!
//! Data (documented names): `N` patients, `time` (follow-up, > 0, in the
//! template's time unit), `event` (1 = event, 0 = right-censored), and one
//! vector per covariate, named as the covariate and coded as in the belief
//! file's profiles (the reference profile is all zeros).
//!
//! With z = k·(ln t − ln λ) and ln λ = log_scale + Σ β_latency·x − Σ β_hazard·x/k
//! (k = 1 for an exponential latency), the latency's log survival and log
//! density are
//! * Weibull:      ln S_u = −e^z,            ln f_u = ln k − ln t + z − e^z
//! * log-normal:   ln S_u = ln Φ(−z),        ln f_u = ln φ(z) + ln k − ln t
//! * log-logistic: ln S_u = −ln(1 + e^z),    ln f_u = ln k − ln t + z − 2 ln(1 + e^z)
//! * generalised gamma (Prentice's Q, a = Q⁻², u = a·e^{Qz}; Prentice 1974,
//!   Biometrika 61): ln S_u = ln Q(a, u) for Q > 0, ln P(a, u) for Q < 0
//!   (regularised incomplete gammas), ln f_u = ln|Q| + ln k − ln t + a ln u − u − ln Γ(a);
//!   for |Q| < 0.01 the log-normal lines (as the fit computes it)
//!
//! and the contribution of one patient (δ = event) is
//! * mixture cure, π = logistic(η):  δ·(ln(1 − π) + ln f_u) + (1 − δ)·ln(π + (1 − π)S_u)
//! * promotion-time cure, θ = e^η:   −θ·F_u + δ·(ln θ + ln f_u),  F_u = 1 − S_u
//! * parametric survival:            δ·ln f_u + (1 − δ)·ln S_u
//!
//! (Klein & Moeschberger, Survival Analysis, 2nd ed., §3.5, section number from memory: right-censored
//! likelihood ∏ f^δ S^{1−δ}; Chen, Ibrahim & Sinha 1999, JASA 94, §2
//! for the promotion-time cure.) The language sections are `about` (comment
//! lines stating the parameterisation), `functions`, `data`, `model` for Stan
//! and `about`, `args`, `model` for PyMC; `locals` lists the local names the
//! code uses (the exporters check that no parameter or covariate takes one).

use super::latency::GG_Q_EPS;
use super::{Cure, Effect, Latency, Survival};
use crate::numerics::format::code as code_num;
use crate::templates::Code;
use std::collections::BTreeMap;

impl Survival {
    /// ln λ per patient in the language's syntax (`x(c)` writes covariate c).
    fn log_scale_expr(
        &self,
        x: impl Fn(&str) -> String,
        k: &str,
        prior: &dyn Fn(usize) -> String,
    ) -> String {
        let mut s = "log_scale".to_string();
        for (c, e) in self.covariates.iter().zip(&self.latency_effects) {
            match e {
                Some((i, Effect::Aft)) => s.push_str(&format!(" + {} * {}", prior(*i), x(c))),
                Some((i, Effect::Ph)) if k == "1.0" => {
                    s.push_str(&format!(" - {} * {}", prior(*i), x(c)))
                }
                Some((i, Effect::Ph)) => s.push_str(&format!(" - {} * {} / {k}", prior(*i), x(c))),
                None => {}
            }
        }
        s
    }

    /// η (cure logit or ln θ) per patient; `pymc` picks the PyMC syntax for a
    /// prior on the cured fraction π (η = logit π, or ln θ = ln(−ln π)).
    fn cure_expr(
        &self,
        x: impl Fn(&str) -> String,
        prior: &dyn Fn(usize) -> String,
        pymc: bool,
    ) -> Option<String> {
        let c = self.cure?;
        let p = prior(c);
        let mut s = match (self.cure_on_fraction, self.cure_kind, pymc) {
            (false, _, _) => p,
            (true, Cure::PromotionTime, false) => format!("log(-log({p}))"),
            (true, Cure::PromotionTime, true) => format!("pt.log(-pt.log({p}))"),
            (true, _, false) => format!("logit({p})"),
            (true, _, true) => format!("pt.log({p}) - pt.log1p(-{p})"),
        };
        for (cv, e) in self.covariates.iter().zip(&self.cure_effects) {
            if let Some(i) = e {
                s.push_str(&format!(" + {} * {}", prior(*i), x(cv)));
            }
        }
        Some(s)
    }

    /// The comment lines every export states.
    fn about_lines(&self) -> Vec<String> {
        let unit = &self.time_unit;
        let gg;
        let lat = match self.latency {
            Latency::GenGamma(q) if q.abs() < GG_Q_EPS => {
                gg = format!(
                    "generalised gamma latency with Q = {} < {GG_Q_EPS} in absolute value, computed as its log-normal limit: S_u(t) = 1 - Phi(shape * (log t - log lambda)) (sdlog = 1/shape)",
                    code_num(q)
                );
                gg.as_str()
            }
            Latency::GenGamma(q) => {
                gg = format!(
                    "generalised gamma latency (Prentice 1974), Q = {}, sigma = 1/shape, mu = log lambda: a = 1/Q^2, u = a exp(Q shape (log t - log lambda)), S_u(t) = {}",
                    code_num(q),
                    if q > 0.0 { "gamma_q(a, u)" } else { "gamma_p(a, u)" }
                );
                gg.as_str()
            }
            Latency::Weibull => "Weibull latency: S_u(t) = exp(-(t/lambda)^shape)",
            Latency::Exponential => "exponential latency: S_u(t) = exp(-t/lambda)",
            Latency::LogNormal => {
                "log-normal latency: S_u(t) = 1 - Phi(shape * (log t - log lambda)) (sdlog = 1/shape)"
            }
            Latency::LogLogistic => "log-logistic latency: S_u(t) = 1 / (1 + (t/lambda)^shape)",
        };
        let model = match self.cure_kind {
            Cure::Mixture => "Mixture cure: S(t) = pi + (1 - pi) S_u(t), pi = inv_logit(eta)",
            Cure::PromotionTime => {
                "Promotion-time cure: S(t) = exp(-theta F(t)), F = 1 - S_u, theta = exp(eta), cured fraction exp(-theta)"
            }
            Cure::None => "Parametric survival: S(t) = S_u(t)",
        };
        let mut v = vec![
            format!("Likelihood in priorsmith's parameterisation ({} template).", self.info.name),
            model.to_string(),
            format!(
                "{lat}, lambda = exp(log_scale + latency effects - hazard effects{}), in {unit}.",
                if self.shape.is_some() { " / shape" } else { "" }
            ),
            "Stan's and brms's built-in survival families are parameterised otherwise: keep these expressions.".into(),
            data_about(unit, &self.covariates),
        ];
        let name = |i: usize| self.priors.priors[i].param.clone();
        if let Some(eta) = self.cure_expr(|c| c.to_string(), &name, false) {
            v.insert(2, format!("eta = {eta}"));
        }
        v
    }

    /// The Stan and PyMC likelihood sections.
    pub(super) fn code(&self) -> Code {
        let name = |i: usize| self.priors.priors[i].param.clone();
        let k = if self.shape.is_some() { "shape" } else { "1.0" };
        let mut code = Code::new();
        // Stan.
        let mut stan: BTreeMap<String, Vec<String>> = BTreeMap::new();
        stan.insert("about".into(), self.about_lines());
        let (surv, dens) = match self.latency {
            Latency::GenGamma(q) if q.abs() >= GG_Q_EPS => {
                let head = format!(
                    "real Q = {};\n    real a = inv_square(Q);\n    real lu = log(a) + Q * shape * (log(t) - ls);",
                    code_num(q)
                );
                (
                    format!(
                        "{head}\n    return log({}(a, exp(lu)));",
                        if q > 0.0 { "gamma_q" } else { "gamma_p" }
                    ),
                    format!(
                        "{head}\n    return log(abs(Q)) + log(shape) - log(t) + a * lu - exp(lu) - lgamma(a);"
                    ),
                )
            }
            Latency::Weibull | Latency::Exponential => (
                "return -exp(shape * (log(t) - ls));".to_string(),
                "real z = shape * (log(t) - ls);\n    return log(shape) - log(t) + z - exp(z);".to_string(),
            ),
            Latency::LogNormal | Latency::GenGamma(_) => (
                "return std_normal_lccdf(shape * (log(t) - ls));".to_string(),
                "return std_normal_lpdf(shape * (log(t) - ls)) + log(shape) - log(t);".to_string(),
            ),
            Latency::LogLogistic => (
                "return -log1p_exp(shape * (log(t) - ls));".to_string(),
                "real z = shape * (log(t) - ls);\n    return log(shape) - log(t) + z - 2 * log1p_exp(z);"
                    .to_string(),
            ),
        };
        let mut funcs = vec![
            "// ln S_u(t) and ln f_u(t) of the latency, ls = ln lambda.".to_string(),
            "real latency_log_surv(real t, real ls, real shape) {".into(),
            String::new(),
            "}".into(),
            "real latency_log_dens(real t, real ls, real shape) {".into(),
        ];
        // A multi-line ln S_u body replaces the one-line placeholder.
        funcs.splice(2..3, surv.lines().map(|l| format!("  {}", l.trim_start())));
        funcs.extend(dens.lines().map(|l| format!("  {}", l.trim_start())));
        funcs.push("}".into());
        stan.insert("functions".into(), funcs);
        stan.insert("data".into(), stan_data(&self.time_unit, &self.covariates));
        let x = |c: &str| format!("{c}[n]");
        let mut model = vec![
            "// likelihood: right-censored survival".to_string(),
            "for (n in 1:N) {".into(),
            format!("  real ls = {};", self.log_scale_expr(x, k, &name)),
        ];
        match self.cure_kind {
            Cure::Mixture => {
                model.push(format!(
                    "  real eta = {};",
                    self.cure_expr(x, &name, false).unwrap_or_default()
                ));
                model.push("  if (event[n] == 1) {".into());
                model.push(format!(
                    "    target += log1m_inv_logit(eta) + latency_log_dens(time[n], ls, {k});"
                ));
                model.push("  } else {".into());
                model.push(format!(
                    "    target += log_sum_exp(log_inv_logit(eta), log1m_inv_logit(eta) + latency_log_surv(time[n], ls, {k}));"
                ));
                model.push("  }".into());
            }
            Cure::PromotionTime => {
                model.push(format!(
                    "  real eta = {};",
                    self.cure_expr(x, &name, false).unwrap_or_default()
                ));
                model.push("  // ln S = -theta F = theta * expm1(ln S_u)".into());
                model.push(format!(
                    "  target += exp(eta) * expm1(latency_log_surv(time[n], ls, {k}));"
                ));
                model.push("  if (event[n] == 1) {".into());
                model.push(format!(
                    "    target += eta + latency_log_dens(time[n], ls, {k});"
                ));
                model.push("  }".into());
            }
            Cure::None => {
                model.push("  if (event[n] == 1) {".into());
                model.push(format!("    target += latency_log_dens(time[n], ls, {k});"));
                model.push("  } else {".into());
                model.push(format!("    target += latency_log_surv(time[n], ls, {k});"));
                model.push("  }".into());
            }
        }
        model.push("}".into());
        stan.insert("model".into(), model);
        stan.insert(
            "locals".into(),
            ["n", "ls", "eta"].map(String::from).to_vec(),
        );
        code.insert("stan".into(), stan);

        // PyMC.
        let mut py: BTreeMap<String, Vec<String>> = BTreeMap::new();
        py.insert("about".into(), self.about_lines());
        py.insert("args".into(), pymc_args(&self.covariates));
        let x = |c: &str| c.to_string();
        let mut m = vec![
            "# likelihood: right-censored survival".to_string(),
            format!("ls = {}", self.log_scale_expr(x, k, &name)),
            format!("z = {k} * (pt.log(time) - ls)"),
        ];
        match self.latency {
            Latency::GenGamma(q) if q.abs() >= GG_Q_EPS => {
                m.push(format!("gg_q = {}", code_num(q)));
                m.push("gg_a = 1.0 / gg_q**2".into());
                m.push("log_u = pt.log(gg_a) + gg_q * z".into());
                m.push(format!(
                    "log_surv = pt.log(pt.{}(gg_a, pt.exp(log_u)))",
                    if q > 0.0 { "gammaincc" } else { "gammainc" }
                ));
                m.push(format!(
                    "log_dens = pt.log(abs(gg_q)) + pt.log({k}) - pt.log(time) + gg_a * log_u - pt.exp(log_u) - pt.gammaln(gg_a)"
                ));
            }
            Latency::Weibull | Latency::Exponential => {
                m.push("log_surv = -pt.exp(z)".into());
                m.push(format!(
                    "log_dens = pt.log({k}) - pt.log(time) + z - pt.exp(z)"
                ));
            }
            Latency::LogNormal | Latency::GenGamma(_) => {
                m.push("log_surv = pm.logcdf(pm.Normal.dist(0.0, 1.0), -z)".into());
                m.push(format!(
                    "log_dens = pm.logp(pm.Normal.dist(0.0, 1.0), z) + pt.log({k}) - pt.log(time)"
                ));
            }
            Latency::LogLogistic => {
                m.push("log_surv = -pt.log1pexp(z)".into());
                m.push(format!(
                    "log_dens = pt.log({k}) - pt.log(time) + z - 2.0 * pt.log1pexp(z)"
                ));
            }
        }
        match self.cure_kind {
            Cure::Mixture => {
                m.push(format!(
                    "eta = {}",
                    self.cure_expr(x, &name, true).unwrap_or_default()
                ));
                m.push("log_cure, log_uncured = -pt.log1pexp(-eta), -pt.log1pexp(eta)".into());
                m.push("loglik = pt.switch(pt.eq(event, 1), log_uncured + log_dens, pt.logaddexp(log_cure, log_uncured + log_surv))".into());
            }
            Cure::PromotionTime => {
                m.push(format!(
                    "eta = {}",
                    self.cure_expr(x, &name, true).unwrap_or_default()
                ));
                m.push(
                    "loglik = pt.exp(eta) * pt.expm1(log_surv) + event * (eta + log_dens)".into(),
                );
            }
            Cure::None => {
                m.push("loglik = pt.switch(pt.eq(event, 1), log_dens, log_surv)".into());
            }
        }
        m.push("pm.Potential(\"loglik\", pt.sum(loglik))".into());
        py.insert("model".into(), m);
        py.insert(
            "locals".into(),
            [
                "ls",
                "z",
                "log_surv",
                "log_dens",
                "eta",
                "log_cure",
                "log_uncured",
                "loglik",
                "gg_q",
                "gg_a",
                "log_u",
                "make_model",
            ]
            .map(String::from)
            .to_vec(),
        );
        code.insert("pymc".into(), py);
        code
    }
}

/// How brms states the survival templates' priors: every parameter a
/// non-linear parameter, `shape` written `nlShape` (brms keeps `shape` for its
/// own families; `export::brms`).
pub static BRMS: crate::templates::BrmsLayout = crate::templates::BrmsLayout {
    usage: &[
        "Each parameter is a non-linear parameter (class \"b\") of an intercept-only formula, e.g.",
        "bf(time | cens(1 - event) ~ <the likelihood in these parameters>, logScale ~ 1,",
        "   nlShape ~ 1, nl = TRUE) with your own custom_family, since brms parameterises its",
        "families otherwise (`export --to stan --with-likelihood` writes the complete model).",
        "Parameters named like a brms distributional parameter get the prefix nl (shape → nlShape).",
        "Pass `prior = priors` to brm().",
    ],
    classes: &[],
    coef_prefix: None,
    code_prefix: None,
};

/// [`BRMS`] for the two cure templates, pointing to the custom families that
/// state their likelihood with a Weibull latency (`docs/brms/cure-families.R`,
/// checked by `scripts/check-survival-exports.sh`).
pub static BRMS_CURE: crate::templates::BrmsLayout = crate::templates::BrmsLayout {
    usage: &[
        "Each parameter is a non-linear parameter (class \"b\") of an intercept-only formula.",
        "brms has no cure family: docs/brms/cure-families.R in priorsmith's repository gives",
        "custom families for a Weibull latency, used as bf(time | vint(event) ~ cureLogit,",
        "   nlf(lscale ~ logScale), nlf(kshape ~ nlShape), cureLogit ~ 1, logScale ~ 1,",
        "   nlShape ~ 1, nl = TRUE) (logTheta for the promotion-time cure). For other latencies",
        "write your own, or use `export --to stan --with-likelihood` for the complete model.",
        "A prior on cure_fraction (the cured fraction, bounded by lb = 0, ub = 1) enters that",
        "formula as ~ logit(cureFraction) (mixture) or ~ log(-log(cureFraction)) (promotion",
        "time) with cureFraction ~ 1: cure_formula_mixture_fraction, cure_formula_promotion_fraction.",
        "Parameters named like a brms distributional parameter get the prefix nl (shape → nlShape).",
        "Pass `prior = priors` to brm().",
    ],
    classes: &[],
    coef_prefix: None,
    code_prefix: None,
};

/// The data line of a survival likelihood's description: the documented data
/// names, shared by every survival template's export.
pub(super) fn data_about(unit: &str, covariates: &[String]) -> String {
    format!(
        "Data: N patients, time = follow-up in {unit} (> 0), event = 1 (event) or 0 (right-censored){}.",
        if covariates.is_empty() {
            String::new()
        } else {
            format!(
                ", {} coded as in the belief file's profiles (reference profile = 0)",
                covariates.join(", ")
            )
        }
    )
}

/// The Stan `data` block of a survival likelihood (the documented names).
pub(super) fn stan_data(time_unit: &str, covariates: &[String]) -> Vec<String> {
    let mut data = vec![
        "int<lower=0> N;  // patients".to_string(),
        format!("vector<lower=0>[N] time;  // follow-up, in {time_unit}"),
        "array[N] int<lower=0, upper=1> event;  // 1 = event, 0 = right-censored".into(),
    ];
    for c in covariates {
        data.push(format!(
            "vector[N] {c};  // covariate {c}, coded as in the profiles"
        ));
    }
    data
}

/// The PyMC likelihood function's arguments: time, event, then the covariates.
pub(super) fn pymc_args(covariates: &[String]) -> Vec<String> {
    let mut args = vec!["time".to_string(), "event".into()];
    args.extend(covariates.iter().cloned());
    args
}

//! LogitNormal(mu, sigma): logit θ ~ Normal(mu, sigma), θ in (0, 1).
//! Median logistic(mu). Moments have no closed form; they are computed by
//! Gauss–Legendre quadrature over the normal scale. Base: standard normal.

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{finite, positive, Base, Continuous, DistError, FamilyInfo, Support};
use crate::numerics::{logistic, logit, norm_cdf, norm_pdf, norm_quantile};

#[derive(Debug, Clone, Copy)]
pub struct LogitNormal {
    pub mu: f64,
    pub sigma: f64,
}

impl LogitNormal {
    pub fn new(mu: f64, sigma: f64) -> Result<Self, DistError> {
        Ok(Self {
            mu: finite("logit-normal", "mu", mu)?,
            sigma: positive("logit-normal", "sigma", sigma)?,
        })
    }

    /// E[g(θ)] by quadrature on z ∈ [−10, 10].
    fn expectation(&self, g: impl Fn(f64) -> f64) -> f64 {
        crate::numerics::integrate(
            |z| g(logistic(self.mu + self.sigma * z)) * norm_pdf(z),
            -10.0,
            10.0,
            40,
            10,
        )
    }
}

const PARAMS: [Param; 2] = [
    Param::real("mu", Start::LogitMiddle),
    Param::positive("sigma", Start::Offset),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "logit-normal",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Normal,
    support: Support::Unit,
    roles: &[],
    about: "logit-normal on (0, 1): the logit is normal(mu, sigma)",
    build: |p| Ok(Box::new(LogitNormal::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): none: `<name>_logit ~
/// normal(mu, sigma)` and `<name> = inv_logit(<name>_logit)`.
fn stan(a: &Args) -> StanForm {
    StanForm::new("normal", vec![a.v(0), a.v(1)])
        .via("logit", "inv_logit", Some(0.0), Some(1.0))
        .noted(format!(
            "{} ~ logit-normal({}, {}): Stan has none, so its logit is normal",
            a.name,
            a.n(0),
            a.n(1)
        ))
}

/// PyMC 5 (`pymc.distributions.continuous`): LogitNormal(mu, sigma).
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("LogitNormal", vec![("mu", a.v(0)), ("sigma", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: logit θ ~ stats.norm(loc=0.6, scale=0.5), pdf with the 1/(x(1 − x)) Jacobian, quantile expit(norm.ppf)",
    params: &[0.6, 0.5],
    points: &[
        (0.3, 0.0018982356953648372, 0.05758542406432251),
        (0.65, 0.5151874201418721, 3.5046431550015376),
        (0.9, 0.9992995101938995, 0.05392837806596441),
    ],
    quantiles: &[(0.05, 0.4446214237897636), (0.5, 0.6456563062257954), (0.95, 0.8057185823097297)],
    tol: 1e-12,
};

impl Continuous for LogitNormal {
    fn family(&self) -> &'static str {
        "logit-normal"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else if x >= 1.0 {
            1.0
        } else {
            norm_cdf((logit(x) - self.mu) / self.sigma)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x <= 0.0 || x >= 1.0 {
            0.0
        } else {
            norm_pdf((logit(x) - self.mu) / self.sigma) / (self.sigma * x * (1.0 - x))
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        logistic(self.mu + self.sigma * norm_quantile(p))
    }
    fn support(&self) -> (f64, f64) {
        (0.0, 1.0)
    }
    fn mean(&self) -> Option<f64> {
        Some(self.expectation(|t| t))
    }
    fn variance(&self) -> Option<f64> {
        let m = self.expectation(|t| t);
        Some(self.expectation(|t| (t - m) * (t - m)))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("mu", self.mu), ("sigma", self.sigma)]
    }
    fn from_base(&self, z: f64) -> f64 {
        logistic(self.mu + self.sigma * z)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn moments_match_quadrature() {
        // μ = 0.6, σ = 0.5 → mean 0.63812, variance 0.012082 (scipy 1.17.1
        // `integrate.quad` over the normal scale: 0.6381209, 0.0120817),
        // median logistic(0.6) = 0.645656 (scipy expit). Checked here against an
        // independent quadrature: the trapezoid rule on the (0, 1) scale with the density.
        let d = LogitNormal::new(0.6, 0.5).unwrap();
        let m = d.mean().unwrap();
        let v = d.variance().unwrap();
        assert!((m - 0.63812).abs() < 5e-6, "{m}");
        assert!((v - 0.012082).abs() < 5e-7, "{v}");
        assert!((d.quantile(0.5) - 0.645656).abs() < 5e-7);
        let n = 200_000;
        let (mut s1, mut s2) = (0.0, 0.0);
        for k in 1..n {
            let x = k as f64 / n as f64;
            let f = d.pdf(x) / n as f64;
            s1 += x * f;
            s2 += x * x * f;
        }
        assert!((s1 - m).abs() < 1e-7);
        assert!((s2 - s1 * s1 - v).abs() < 1e-7);
        crate::dist::invariants::check(&d);
    }
}

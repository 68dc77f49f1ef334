//! Gamma(shape, rate): density ∝ x^(shape−1) e^(−rate·x). Mean shape/rate.
//! CDF and quantile from statrs 0.19 (`Gamma::new(shape, rate)`). Base: uniform.

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{computable, positive, Base, Continuous, DistError, FamilyInfo, Role, Support};
use statrs::distribution::{Continuous as _, ContinuousCDF};

#[derive(Debug, Clone)]
pub struct Gamma {
    pub shape: f64,
    pub rate: f64,
    inner: statrs::distribution::Gamma,
}

impl Gamma {
    pub fn new(shape: f64, rate: f64) -> Result<Self, DistError> {
        let shape = computable("gamma", "shape", shape, RANGE, WHY)?;
        let rate = positive("gamma", "rate", rate)?;
        let inner = statrs::distribution::Gamma::new(shape, rate).map_err(|_| DistError {
            family: "gamma",
            param: "shape",
            value: shape,
            reason: "rejected by statrs",
        })?;
        Ok(Self { shape, rate, inner })
    }
}

/// Where the shape keeps the CDF and quantile computable ([`computable`]).
const RANGE: (f64, f64) = (1e-4, 1e5);
const WHY: &str = "must lie in [1e-4, 1e5], where the gamma CDF and quantile can be computed \
(a shape of 1e5 already has a coefficient of variation of 0.3 %: for a narrower belief use a \
normal or lognormal)";

const PARAMS: [Param; 2] = [
    Param::positive("shape", Start::Offset),
    Param::positive("rate", Start::InverseHalfSpread),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "gamma",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Positive,
    roles: &[Role::LatencyShape],
    about: "gamma with shape and rate (mean shape/rate)",
    build: |p| Ok(Box::new(Gamma::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): gamma(alpha, beta), beta a rate.
fn stan(a: &Args) -> StanForm {
    StanForm::new("gamma", vec![a.v(0), a.v(1)])
        .positive()
        .noted("gamma(shape, rate)")
}

/// PyMC 5 (`pymc.distributions.continuous`): Gamma(alpha, beta), beta a rate.
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("Gamma", vec![("alpha", a.v(0)), ("beta", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.gamma(a=2.5, scale=1/1.5)",
    params: &[2.5, 1.5],
    points: &[
        (0.3, 0.029778361590214426, 0.21719074405218725),
        (1.5, 0.5201165618867003, 0.40138972612974916),
        (5.0, 0.9896376620842136, 0.012818533423821173),
    ],
    quantiles: &[
        (0.05, 0.3818254086872564),
        (0.5, 1.4504867303651754),
        (0.95, 3.6901658978387837),
    ],
    tol: 1e-12,
};

impl Continuous for Gamma {
    fn family(&self) -> &'static str {
        "gamma"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            self.inner.cdf(x)
        }
    }
    fn sf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            1.0
        } else {
            self.inner.sf(x)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < 0.0 {
            0.0
        } else {
            self.inner.pdf(x)
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        if !(0.0..=1.0).contains(&p) {
            return f64::NAN;
        }
        self.inner.inverse_cdf(p)
    }
    fn support(&self) -> (f64, f64) {
        (0.0, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        Some(self.shape / self.rate)
    }
    fn variance(&self) -> Option<f64> {
        Some(self.shape / (self.rate * self.rate))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("shape", self.shape), ("rate", self.rate)]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        for (a, b) in [(0.5, 2.0), (2.0, 3.0), (30.0, 1.0)] {
            crate::dist::invariants::check(&super::Gamma::new(a, b).unwrap());
        }
    }
}

//! Beta(alpha, beta) on (0, 1). Mean alpha/(alpha + beta). CDF and quantile from
//! statrs 0.19 (regularised incomplete beta and its inverse). Base: uniform.

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{computable, Base, Continuous, DistError, FamilyInfo, Support};
use statrs::distribution::{Continuous as _, ContinuousCDF};

#[derive(Debug, Clone)]
pub struct Beta {
    pub alpha: f64,
    pub beta: f64,
    inner: statrs::distribution::Beta,
}

impl Beta {
    pub fn new(alpha: f64, beta: f64) -> Result<Self, DistError> {
        let alpha = computable("beta", "alpha", alpha, RANGE, WHY)?;
        let beta = computable("beta", "beta", beta, RANGE, WHY)?;
        let inner = statrs::distribution::Beta::new(alpha, beta).map_err(|_| DistError {
            family: "beta",
            param: "alpha",
            value: alpha,
            reason: "rejected by statrs",
        })?;
        Ok(Self { alpha, beta, inner })
    }
}

/// Where α and β keep the CDF and quantile computable ([`computable`]).
const RANGE: (f64, f64) = (1e-4, 1e6);
const WHY: &str = "must lie in [1e-4, 1e6], where the beta CDF and quantile can be computed; \
outside it the distribution is a point mass to display precision (at 0 or 1 below 1e-4, an sd \
under 5e-4 above 1e6): state it as an atom (`atoms = [{ at = …, mass = … }]`) or use smaller α \
and β with the same mean";

const PARAMS: [Param; 2] = [
    Param::positive("alpha", Start::Offset),
    Param::positive("beta", Start::Offset),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "beta",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Unit,
    roles: &[],
    about: "beta on (0, 1) with shapes alpha and beta",
    build: |p| Ok(Box::new(Beta::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): beta(alpha, beta) on a
/// <lower=0, upper=1> parameter.
fn stan(a: &Args) -> StanForm {
    StanForm::new("beta", vec![a.v(0), a.v(1)]).bounded(Some(0.0), Some(1.0))
}

/// PyMC 5 (`pymc.distributions.continuous`): Beta(alpha, beta).
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("Beta", vec![("alpha", a.v(0)), ("beta", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.beta(a=2, b=3)",
    params: &[2.0, 3.0],
    points: &[
        (0.05, 0.014018749999999998, 0.5415),
        (0.4, 0.5247999999999999, 1.7279999999999998),
        (0.9, 0.9963, 0.108),
    ],
    quantiles: &[
        (0.05, 0.09761146288641434),
        (0.5, 0.3857275681323895),
        (0.95, 0.7513953742698181),
    ],
    tol: 1e-12,
};

impl Continuous for Beta {
    fn family(&self) -> &'static str {
        "beta"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else if x >= 1.0 {
            1.0
        } else {
            self.inner.cdf(x)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x <= 0.0 || x >= 1.0 {
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
        (0.0, 1.0)
    }
    fn mean(&self) -> Option<f64> {
        Some(self.alpha / (self.alpha + self.beta))
    }
    fn variance(&self) -> Option<f64> {
        let s = self.alpha + self.beta;
        Some(self.alpha * self.beta / (s * s * (s + 1.0)))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("alpha", self.alpha), ("beta", self.beta)]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scipy_quantiles() {
        // scipy 1.17.1: beta.ppf([.05, .5, .95], 2, 3) = 0.0976115, 0.3857276, 0.7513954 (rounded).
        let d = Beta::new(2.0, 3.0).unwrap();
        for (p, q) in [(0.05, 0.0976115), (0.5, 0.3857276), (0.95, 0.7513954)] {
            assert!((d.quantile(p) - q).abs() < 5e-8, "p {p}: {}", d.quantile(p));
        }
        crate::dist::invariants::check(&d);
        crate::dist::invariants::check(&Beta::new(0.5, 0.7).unwrap());
    }
}

//! Exponential(rate): CDF 1 − e^(−rate·x), mean 1/rate. Base: uniform,
//! θ = −ln(1 − u)/rate.

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{positive, Base, Continuous, DistError, FamilyInfo, Role, Support};

#[derive(Debug, Clone, Copy)]
pub struct Exponential {
    pub rate: f64,
}

impl Exponential {
    pub fn new(rate: f64) -> Result<Self, DistError> {
        Ok(Self {
            rate: positive("exponential", "rate", rate)?,
        })
    }
}

const PARAMS: [Param; 1] = [Param::positive("rate", Start::InverseHalfSpread)];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "exponential",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Positive,
    roles: &[Role::NoiseSd, Role::LatencyShape],
    about: "exponential with rate (mean 1/rate)",
    build: |p| Ok(Box::new(Exponential::new(p[0])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): exponential(beta), beta a rate.
fn stan(a: &Args) -> StanForm {
    StanForm::new("exponential", vec![a.v(0)])
        .positive()
        .noted("exponential(rate)")
}

/// PyMC 5 (`pymc.distributions.continuous`): Exponential(lam), lam a rate.
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("Exponential", vec![("lam", a.v(0))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.expon(scale=1/0.7)",
    params: &[0.7],
    points: &[
        (0.1, 0.06760618009405177, 0.6526756739341637),
        (1.0, 0.5034146962085905, 0.34760971265398666),
        (6.0, 0.9850044231795223, 0.010496903774334392),
    ],
    quantiles: &[
        (0.05, 0.07327613483935791),
        (0.5, 0.990210257942779),
        (0.95, 4.279617533648557),
    ],
    tol: 1e-12,
};

impl Continuous for Exponential {
    fn family(&self) -> &'static str {
        "exponential"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            -(-self.rate * x).exp_m1()
        }
    }
    fn sf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            1.0
        } else {
            (-self.rate * x).exp()
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < 0.0 {
            0.0
        } else {
            self.rate * (-self.rate * x).exp()
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        -(-p).ln_1p() / self.rate
    }
    fn support(&self) -> (f64, f64) {
        (0.0, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        Some(1.0 / self.rate)
    }
    fn variance(&self) -> Option<f64> {
        Some(1.0 / (self.rate * self.rate))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("rate", self.rate)]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        crate::dist::invariants::check(&super::Exponential::new(0.7).unwrap());
    }
}

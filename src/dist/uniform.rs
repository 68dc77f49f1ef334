//! Uniform(lower, upper). Base: uniform, θ = lower + (upper − lower)·u.

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{finite, Base, Continuous, DistError, FamilyInfo, Role, Support};

#[derive(Debug, Clone, Copy)]
pub struct Uniform {
    pub lower: f64,
    pub upper: f64,
}

impl Uniform {
    pub fn new(lower: f64, upper: f64) -> Result<Self, DistError> {
        let lower = finite("uniform", "lower", lower)?;
        let upper = finite("uniform", "upper", upper)?;
        if upper <= lower {
            return Err(DistError {
                family: "uniform",
                param: "upper",
                value: upper,
                reason: "must exceed lower",
            });
        }
        Ok(Self { lower, upper })
    }
}

const PARAMS: [Param; 2] = [
    Param::real("lower", Start::BelowLowest),
    Param::real("upper", Start::AboveHighest),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "uniform",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Interval,
    roles: &[Role::LatencyShape],
    about: "uniform between lower and upper",
    build: |p| Ok(Box::new(Uniform::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): uniform(alpha, beta) on a
/// <lower=alpha, upper=beta> parameter.
fn stan(a: &Args) -> StanForm {
    StanForm::new("uniform", vec![a.v(0), a.v(1)]).bounded(Some(a.v(0)), Some(a.v(1)))
}

/// PyMC 5 (`pymc.distributions.continuous`): Uniform(lower, upper).
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("Uniform", vec![("lower", a.v(0)), ("upper", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.uniform(loc=-1, scale=4)",
    params: &[-1.0, 3.0],
    points: &[(-0.5, 0.125, 0.25), (0.0, 0.25, 0.25), (2.9, 0.975, 0.25)],
    quantiles: &[(0.05, -0.8), (0.5, 1.0), (0.95, 2.8)],
    tol: 1e-12,
};

impl Continuous for Uniform {
    fn family(&self) -> &'static str {
        "uniform"
    }
    fn cdf(&self, x: f64) -> f64 {
        ((x - self.lower) / (self.upper - self.lower)).clamp(0.0, 1.0)
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < self.lower || x > self.upper {
            0.0
        } else {
            1.0 / (self.upper - self.lower)
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        self.lower + (self.upper - self.lower) * p
    }
    fn support(&self) -> (f64, f64) {
        (self.lower, self.upper)
    }
    fn mean(&self) -> Option<f64> {
        Some(0.5 * (self.lower + self.upper))
    }
    fn variance(&self) -> Option<f64> {
        Some((self.upper - self.lower).powi(2) / 12.0)
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("lower", self.lower), ("upper", self.upper)]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        crate::dist::invariants::check(&super::Uniform::new(-1.0, 3.0).unwrap());
    }
}

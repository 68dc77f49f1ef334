//! Weibull(shape k, scale λ): S(t) = exp(−(t/λ)^k), median λ·(ln 2)^(1/k),
//! mean λ·Γ(1 + 1/k). Base: uniform, θ = λ·(−ln(1 − u))^(1/k).

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{positive, Base, Continuous, DistError, FamilyInfo, Role, Support};
use crate::numerics::ln_gamma;

#[derive(Debug, Clone, Copy)]
pub struct Weibull {
    pub shape: f64,
    pub scale: f64,
}

impl Weibull {
    pub fn new(shape: f64, scale: f64) -> Result<Self, DistError> {
        Ok(Self {
            shape: positive("weibull", "shape", shape)?,
            scale: positive("weibull", "scale", scale)?,
        })
    }
}

const PARAMS: [Param; 2] = [
    Param::positive("shape", Start::Offset),
    Param::positive("scale", Start::HalfSpread),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "weibull",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Positive,
    roles: &[Role::LatencyShape],
    about: "Weibull with shape k and scale: S(t) = exp(-(t/scale)^k)",
    build: |p| Ok(Box::new(Weibull::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): weibull(alpha, sigma), alpha
/// the shape, sigma the scale.
fn stan(a: &Args) -> StanForm {
    StanForm::new("weibull", vec![a.v(0), a.v(1)])
        .positive()
        .noted("weibull(shape, scale)")
}

/// PyMC 5 (`pymc.distributions.continuous`): Weibull(alpha, beta), alpha the shape, beta the scale.
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("Weibull", vec![("alpha", a.v(0)), ("beta", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.weibull_min(c=1.5, scale=2)",
    params: &[1.5, 2.0],
    points: &[
        (0.2, 0.03112800565992458, 0.22978816974483038),
        (1.5, 0.4777030864174585, 0.3392417966105149),
        (5.0, 0.9808000398449904, 0.02276835190286614),
    ],
    quantiles: &[
        (0.05, 0.2761025331125684),
        (0.5, 1.5664395375493025),
        (0.95, 4.156221275069113),
    ],
    tol: 1e-12,
};

impl Continuous for Weibull {
    fn family(&self) -> &'static str {
        "weibull"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            -(-(x / self.scale).powf(self.shape)).exp_m1()
        }
    }
    fn sf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            1.0
        } else {
            (-(x / self.scale).powf(self.shape)).exp()
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < 0.0 {
            return 0.0;
        }
        let z = x / self.scale;
        self.shape / self.scale * z.powf(self.shape - 1.0) * (-z.powf(self.shape)).exp()
    }
    fn quantile(&self, p: f64) -> f64 {
        self.scale * (-(-p).ln_1p()).powf(1.0 / self.shape)
    }
    fn support(&self) -> (f64, f64) {
        (0.0, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        Some(self.scale * ln_gamma(1.0 + 1.0 / self.shape).exp())
    }
    fn variance(&self) -> Option<f64> {
        let g1 = ln_gamma(1.0 + 1.0 / self.shape).exp();
        let g2 = ln_gamma(1.0 + 2.0 / self.shape).exp();
        Some(self.scale * self.scale * (g2 - g1 * g1))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("shape", self.shape), ("scale", self.scale)]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn median_formula() {
        // Weibull median = scale·(ln 2)^(1/shape); k = 1.5, λ = 2 → 1.56644 (scipy 1.17.1
        // weibull_min(1.5, scale=2).median() = 1.5664395).
        let d = Weibull::new(1.5, 2.0).unwrap();
        assert!((d.quantile(0.5) - 1.56644).abs() < 5e-6);
        crate::dist::invariants::check(&d);
    }
}

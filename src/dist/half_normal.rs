//! HalfNormal(scale): |Z|·scale. Base: standard normal, θ = scale·|z|.
//! Mean scale·√(2/π).

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{positive, Base, Continuous, DistError, FamilyInfo, Role, Support};
use crate::numerics::{norm_cdf, norm_pdf, norm_quantile};
use std::f64::consts::PI;

#[derive(Debug, Clone, Copy)]
pub struct HalfNormal {
    pub scale: f64,
}

impl HalfNormal {
    pub fn new(scale: f64) -> Result<Self, DistError> {
        Ok(Self {
            scale: positive("half-normal", "scale", scale)?,
        })
    }
}

const PARAMS: [Param; 1] = [Param::positive("scale", Start::HalfSpread)];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "half-normal",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Normal,
    support: Support::Positive,
    roles: &[Role::NoiseSd, Role::LatencyShape],
    about: "half-normal: |normal(0, scale)|",
    build: |p| Ok(Box::new(HalfNormal::new(p[0])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): normal(0, sigma) on a <lower=0>
/// parameter (the bound truncates; the constant factor 2 does not matter for sampling).
fn stan(a: &Args) -> StanForm {
    StanForm::new("normal", vec![0.0, a.v(0)])
        .truncated_at_zero(format!(
            "half-normal({})",
            a.n(0)
        ))
}

/// PyMC 5 (`pymc.distributions.continuous`): HalfNormal(sigma).
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("HalfNormal", vec![("sigma", a.v(0))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.halfnorm(scale=2.5)",
    params: &[2.5],
    points: &[
        (0.1, 0.031906873705661525, 0.31889860336368403),
        (2.0, 0.5762892028332065, 0.2317532422091862),
        (6.0, 0.9836049281508077, 0.017915624235874318),
    ],
    quantiles: &[
        (0.05, 0.1567669448580346),
        (0.5, 1.6862243754902042),
        (0.95, 4.899909961350135),
    ],
    tol: 1e-12,
};

impl Continuous for HalfNormal {
    fn family(&self) -> &'static str {
        "half-normal"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            2.0 * norm_cdf(x / self.scale) - 1.0
        }
    }
    fn sf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            1.0
        } else {
            2.0 * norm_cdf(-x / self.scale)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < 0.0 {
            0.0
        } else {
            2.0 * norm_pdf(x / self.scale) / self.scale
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        self.scale * norm_quantile(0.5 + 0.5 * p)
    }
    fn support(&self) -> (f64, f64) {
        (0.0, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        Some(self.scale * (2.0 / PI).sqrt())
    }
    fn variance(&self) -> Option<f64> {
        Some(self.scale * self.scale * (1.0 - 2.0 / PI))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("scale", self.scale)]
    }
    fn from_base(&self, z: f64) -> f64 {
        self.scale * z.abs()
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        crate::dist::invariants::check(&super::HalfNormal::new(2.5).unwrap());
    }
}

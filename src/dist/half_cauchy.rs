//! HalfCauchy(scale): |C|·scale, CDF (2/π)·atan(x/scale), quantile scale·tan(πp/2).
//! Base: uniform. No mean.

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{positive, Base, Continuous, DistError, FamilyInfo, Support};
use std::f64::consts::PI;

#[derive(Debug, Clone, Copy)]
pub struct HalfCauchy {
    pub scale: f64,
}

impl HalfCauchy {
    pub fn new(scale: f64) -> Result<Self, DistError> {
        Ok(Self {
            scale: positive("half-cauchy", "scale", scale)?,
        })
    }
}

const PARAMS: [Param; 1] = [Param::positive("scale", Start::HalfSpread)];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "half-cauchy",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Positive,
    roles: &[],
    about: "half-Cauchy with scale (no mean)",
    build: |p| Ok(Box::new(HalfCauchy::new(p[0])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): cauchy(0, sigma) on a <lower=0>
/// parameter (the bound truncates).
fn stan(a: &Args) -> StanForm {
    StanForm::new("cauchy", vec![0.0, a.v(0)])
        .truncated_at_zero(format!(
            "half-cauchy({})",
            a.n(0)
        ))
}

/// PyMC 5 (`pymc.distributions.continuous`): HalfCauchy(beta), beta the scale.
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("HalfCauchy", vec![("beta", a.v(0))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.halfcauchy(scale=0.3)",
    params: &[0.3],
    points: &[
        (0.05, 0.10513691342250688, 2.0647127752462104),
        (0.3, 0.5, 1.061032953945969),
        (4.0, 0.9523427407908999, 0.011869852809836818),
    ],
    quantiles: &[
        (0.05, 0.02361051204738553),
        (0.5, 0.29999999999999993),
        (0.95, 3.8118614208524084),
    ],
    tol: 1e-12,
};

impl Continuous for HalfCauchy {
    fn family(&self) -> &'static str {
        "half-cauchy"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            2.0 / PI * (x / self.scale).atan()
        }
    }
    fn sf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            1.0
        } else {
            2.0 / PI * (self.scale / x).atan()
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < 0.0 {
            0.0
        } else {
            2.0 / (PI * self.scale * (1.0 + (x / self.scale).powi(2)))
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        if p >= 1.0 {
            return f64::INFINITY;
        }
        self.scale * (0.5 * PI * p).tan()
    }
    fn support(&self) -> (f64, f64) {
        (0.0, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        None
    }
    fn variance(&self) -> Option<f64> {
        None
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("scale", self.scale)]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        crate::dist::invariants::check(&super::HalfCauchy::new(0.3).unwrap());
    }
}

//! InverseGamma(shape, scale): 1/θ ~ Gamma(shape, rate = scale). Mean scale/(shape − 1)
//! for shape > 1. Computed through the gamma family. Base: uniform.

use super::forms::{Args, Forms, PymcForm, StanForm};
use super::gamma::Gamma;
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{computable, positive, Base, Continuous, DistError, FamilyInfo, Role, Support};

#[derive(Debug, Clone)]
pub struct InverseGamma {
    pub shape: f64,
    pub scale: f64,
    g: Gamma,
}

impl InverseGamma {
    pub fn new(shape: f64, scale: f64) -> Result<Self, DistError> {
        let shape = computable("inverse-gamma", "shape", shape, RANGE, WHY)?;
        let scale = positive("inverse-gamma", "scale", scale)?;
        Ok(Self {
            shape,
            scale,
            g: Gamma::new(shape, scale)?,
        })
    }
}

/// Where the shape keeps the CDF and quantile computable ([`computable`]).
const RANGE: (f64, f64) = (1e-4, 1e5);
const WHY: &str = "must lie in [1e-4, 1e5], where the inverse-gamma CDF and quantile can be computed \
(a shape of 1e5 already has a coefficient of variation of 0.3 %: for a narrower belief use a \
normal or lognormal)";

const PARAMS: [Param; 2] = [
    Param::positive("shape", Start::Offset),
    Param::positive("scale", Start::HalfSpread),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "inverse-gamma",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Positive,
    roles: &[Role::NoiseSd, Role::LatencyShape],
    about: "inverse-gamma: 1/x is gamma(shape, rate = scale)",
    build: |p| Ok(Box::new(InverseGamma::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): inv_gamma(alpha, beta), beta a scale.
fn stan(a: &Args) -> StanForm {
    StanForm::new("inv_gamma", vec![a.v(0), a.v(1)])
        .positive()
        .noted("inverse-gamma(shape, scale)")
}

/// PyMC 5 (`pymc.distributions.continuous`): InverseGamma(alpha, beta), beta a scale.
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("InverseGamma", vec![("alpha", a.v(0)), ("beta", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.invgamma(a=3, scale=2)",
    params: &[3.0, 2.0],
    points: &[
        (0.2, 0.0027693957155115775, 0.11349982440621202),
        (0.8, 0.5438131158833297, 0.8016113146865114),
        (3.0, 0.9697878915060072, 0.02535393180407862),
    ],
    quantiles: &[
        (0.05, 0.31767242068607077),
        (0.5, 0.7479262863802246),
        (0.95, 2.445910382133402),
    ],
    // Quantiles invert statrs 0.19's gamma CDF, good to about 1.5e-9 relative here.
    tol: 1e-8,
};

impl Continuous for InverseGamma {
    fn family(&self) -> &'static str {
        "inverse-gamma"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            self.g.sf(1.0 / x)
        }
    }
    fn sf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            1.0
        } else {
            self.g.cdf(1.0 / x)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            self.g.pdf(1.0 / x) / (x * x)
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        1.0 / self.g.quantile(1.0 - p)
    }
    fn support(&self) -> (f64, f64) {
        (0.0, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        (self.shape > 1.0).then(|| self.scale / (self.shape - 1.0))
    }
    fn variance(&self) -> Option<f64> {
        (self.shape > 2.0)
            .then(|| self.scale * self.scale / ((self.shape - 1.0).powi(2) * (self.shape - 2.0)))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("shape", self.shape), ("scale", self.scale)]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        crate::dist::invariants::check(&super::InverseGamma::new(3.0, 2.0).unwrap());
    }
}

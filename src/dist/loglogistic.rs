//! LogLogistic(shape k, scale α): S(t) = 1/(1 + (t/α)^k), median α.
//! Base: uniform, θ = α·(u/(1 − u))^(1/k).

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{positive, Base, Continuous, DistError, FamilyInfo, Support};
use std::f64::consts::PI;

#[derive(Debug, Clone, Copy)]
pub struct LogLogistic {
    pub shape: f64,
    pub scale: f64,
}

impl LogLogistic {
    pub fn new(shape: f64, scale: f64) -> Result<Self, DistError> {
        Ok(Self {
            shape: positive("loglogistic", "shape", shape)?,
            scale: positive("loglogistic", "scale", scale)?,
        })
    }
}

const PARAMS: [Param; 2] = [
    Param::positive("shape", Start::Offset),
    Param::positive("scale", Start::HalfSpread),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "loglogistic",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Positive,
    roles: &[],
    about: "log-logistic with shape k and scale (the median)",
    build: |p| Ok(Box::new(LogLogistic::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): none in every version (a native
/// `loglogistic` exists only in recent releases): log θ ~ logistic(log scale, 1/shape),
/// because F(t) = 1/(1 + (t/scale)^−shape) = logistic(shape·(log t − log scale)); so
/// `<name>_log ~ logistic(…)`, `<name> = exp(<name>_log)`.
fn stan(a: &Args) -> StanForm {
    StanForm::new("logistic", vec![a.v(1).ln(), 1.0 / a.v(0)])
        .via("log", "exp", Some(0.0), None)
        .noted(format!(
            "{} ~ loglogistic(shape {}, scale {}): its log is logistic(log scale, 1/shape)",
            a.name,
            a.n(0),
            a.n(1)
        ))
}

/// PyMC 5 (`pymc.distributions.continuous`): none: log θ ~ Logistic(mu = log scale, s =
/// 1/shape) and θ = exp(log θ) as a Deterministic (the identity above).
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("Logistic", vec![("mu", a.v(1).ln()), ("s", 1.0 / a.v(0))])
        .via("log", "exp")
        .noted(format!(
            "{} ~ loglogistic(shape {}, scale {}): PyMC has none; its log is Logistic(log scale, 1/shape)",
            a.name,
            a.n(0),
            a.n(1)
        ))
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.fisk(c=2.5, scale=7)",
    params: &[2.5, 7.0],
    points: &[
        (1.0, 0.007654517091643753, 0.01898981364934372),
        (7.5, 0.5430139583799927, 0.08271659979482811),
        (40.0, 0.9873506980622744, 0.0007805810686383636),
    ],
    quantiles: &[
        (0.05, 2.1557410893086586),
        (0.5, 7.0),
        (0.95, 22.73000233794969),
    ],
    tol: 1e-12,
};

impl Continuous for LogLogistic {
    fn family(&self) -> &'static str {
        "loglogistic"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            1.0 / (1.0 + (x / self.scale).powf(-self.shape))
        }
    }
    fn sf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            1.0
        } else {
            1.0 / (1.0 + (x / self.scale).powf(self.shape))
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            return 0.0;
        }
        let z = (x / self.scale).powf(self.shape);
        self.shape / x * z / ((1.0 + z) * (1.0 + z))
    }
    fn quantile(&self, p: f64) -> f64 {
        self.scale * (p / (1.0 - p)).powf(1.0 / self.shape)
    }
    fn support(&self) -> (f64, f64) {
        (0.0, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        let b = PI / self.shape;
        (self.shape > 1.0).then(|| self.scale * b / b.sin())
    }
    fn variance(&self) -> Option<f64> {
        let b = PI / self.shape;
        (self.shape > 2.0)
            .then(|| self.scale * self.scale * (2.0 * b / (2.0 * b).sin() - (b / b.sin()).powi(2)))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("shape", self.shape), ("scale", self.scale)]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn median_is_scale() {
        // Log-logistic median = scale (Klein & Moeschberger, Survival Analysis, §2.5).
        let d = super::LogLogistic::new(2.5, 7.0).unwrap();
        assert!((crate::dist::Continuous::quantile(&d, 0.5) - 7.0).abs() < 1e-12);
        crate::dist::invariants::check(&d);
    }
}

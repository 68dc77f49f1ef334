//! HalfCauchy(scale): |C|·scale, CDF (2/π)·atan(x/scale), quantile scale·tan(πp/2).
//! Base: uniform. No mean.

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

pub const INFO: FamilyInfo = FamilyInfo {
    name: "half-cauchy",
    params: &["scale"],
    base: Base::Uniform,
    support: Support::Positive,
    about: "half-Cauchy with scale (no mean)",
    build: |p| Ok(Box::new(HalfCauchy::new(p[0])?)),
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

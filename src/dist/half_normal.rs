//! HalfNormal(scale): |Z|·scale. Base: standard normal, θ = scale·|z|.
//! Mean scale·√(2/π).

use super::{positive, Base, Continuous, DistError, FamilyInfo, Support};
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

pub const INFO: FamilyInfo = FamilyInfo {
    name: "half-normal",
    params: &["scale"],
    base: Base::Normal,
    support: Support::Positive,
    about: "half-normal: |normal(0, scale)|",
    build: |p| Ok(Box::new(HalfNormal::new(p[0])?)),
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

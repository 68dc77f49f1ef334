//! InverseGamma(shape, scale): 1/θ ~ Gamma(shape, rate = scale). Mean scale/(shape − 1)
//! for shape > 1. Computed through the gamma family. Base: uniform.

use super::gamma::Gamma;
use super::{positive, Base, Continuous, DistError, FamilyInfo, Support};

#[derive(Debug, Clone)]
pub struct InverseGamma {
    pub shape: f64,
    pub scale: f64,
    g: Gamma,
}

impl InverseGamma {
    pub fn new(shape: f64, scale: f64) -> Result<Self, DistError> {
        let shape = positive("inverse-gamma", "shape", shape)?;
        let scale = positive("inverse-gamma", "scale", scale)?;
        Ok(Self {
            shape,
            scale,
            g: Gamma::new(shape, scale)?,
        })
    }
}

pub const INFO: FamilyInfo = FamilyInfo {
    name: "inverse-gamma",
    params: &["shape", "scale"],
    base: Base::Uniform,
    support: Support::Positive,
    about: "inverse-gamma: 1/x is gamma(shape, rate = scale)",
    build: |p| Ok(Box::new(InverseGamma::new(p[0], p[1])?)),
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

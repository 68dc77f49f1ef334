//! LogLogistic(shape k, scale α): S(t) = 1/(1 + (t/α)^k), median α.
//! Base: uniform, θ = α·(u/(1 − u))^(1/k).

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

pub const INFO: FamilyInfo = FamilyInfo {
    name: "loglogistic",
    params: &["shape", "scale"],
    base: Base::Uniform,
    support: Support::Positive,
    about: "log-logistic with shape k and scale (the median)",
    build: |p| Ok(Box::new(LogLogistic::new(p[0], p[1])?)),
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
        // Log-logistic median = scale (issue 2's outside check; Klein & Moeschberger §2.5).
        let d = super::LogLogistic::new(2.5, 7.0).unwrap();
        assert!((crate::dist::Continuous::quantile(&d, 0.5) - 7.0).abs() < 1e-12);
        crate::dist::invariants::check(&d);
    }
}

//! Weibull(shape k, scale λ): S(t) = exp(−(t/λ)^k), median λ·(ln 2)^(1/k),
//! mean λ·Γ(1 + 1/k). Base: uniform, θ = λ·(−ln(1 − u))^(1/k).

use super::{positive, Base, Continuous, DistError, FamilyInfo, Support};
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

pub const INFO: FamilyInfo = FamilyInfo {
    name: "weibull",
    params: &["shape", "scale"],
    base: Base::Uniform,
    support: Support::Positive,
    about: "Weibull with shape k and scale: S(t) = exp(-(t/scale)^k)",
    build: |p| Ok(Box::new(Weibull::new(p[0], p[1])?)),
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
        // Issue 2: Weibull median = scale·(ln 2)^(1/shape); k = 1.5, λ = 2 → 1.56644.
        let d = Weibull::new(1.5, 2.0).unwrap();
        assert!((d.quantile(0.5) - 1.56644).abs() < 5e-6);
        crate::dist::invariants::check(&d);
    }
}

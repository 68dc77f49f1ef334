//! Gamma(shape, rate): density ∝ x^(shape−1) e^(−rate·x). Mean shape/rate.
//! CDF and quantile from statrs 0.19 (`Gamma::new(shape, rate)`). Base: uniform.

use super::{positive, Base, Continuous, DistError, FamilyInfo, Support};
use statrs::distribution::{Continuous as _, ContinuousCDF};

#[derive(Debug, Clone)]
pub struct Gamma {
    pub shape: f64,
    pub rate: f64,
    inner: statrs::distribution::Gamma,
}

impl Gamma {
    pub fn new(shape: f64, rate: f64) -> Result<Self, DistError> {
        let shape = positive("gamma", "shape", shape)?;
        let rate = positive("gamma", "rate", rate)?;
        let inner = statrs::distribution::Gamma::new(shape, rate).map_err(|_| DistError {
            family: "gamma",
            param: "shape",
            value: shape,
            reason: "rejected by statrs",
        })?;
        Ok(Self { shape, rate, inner })
    }
}

pub const INFO: FamilyInfo = FamilyInfo {
    name: "gamma",
    params: &["shape", "rate"],
    base: Base::Uniform,
    support: Support::Positive,
    about: "gamma with shape and rate (mean shape/rate)",
    build: |p| Ok(Box::new(Gamma::new(p[0], p[1])?)),
};

impl Continuous for Gamma {
    fn family(&self) -> &'static str {
        "gamma"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            self.inner.cdf(x)
        }
    }
    fn sf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            1.0
        } else {
            self.inner.sf(x)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < 0.0 {
            0.0
        } else {
            self.inner.pdf(x)
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        if !(0.0..=1.0).contains(&p) {
            return f64::NAN;
        }
        self.inner.inverse_cdf(p)
    }
    fn support(&self) -> (f64, f64) {
        (0.0, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        Some(self.shape / self.rate)
    }
    fn variance(&self) -> Option<f64> {
        Some(self.shape / (self.rate * self.rate))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("shape", self.shape), ("rate", self.rate)]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        for (a, b) in [(0.5, 2.0), (2.0, 3.0), (30.0, 1.0)] {
            crate::dist::invariants::check(&super::Gamma::new(a, b).unwrap());
        }
    }
}

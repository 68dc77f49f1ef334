//! Exponential(rate): CDF 1 − e^(−rate·x), mean 1/rate. Base: uniform,
//! θ = −ln(1 − u)/rate.

use super::{positive, Base, Continuous, DistError, FamilyInfo, Support};

#[derive(Debug, Clone, Copy)]
pub struct Exponential {
    pub rate: f64,
}

impl Exponential {
    pub fn new(rate: f64) -> Result<Self, DistError> {
        Ok(Self {
            rate: positive("exponential", "rate", rate)?,
        })
    }
}

pub const INFO: FamilyInfo = FamilyInfo {
    name: "exponential",
    params: &["rate"],
    base: Base::Uniform,
    support: Support::Positive,
    about: "exponential with rate (mean 1/rate)",
    build: |p| Ok(Box::new(Exponential::new(p[0])?)),
};

impl Continuous for Exponential {
    fn family(&self) -> &'static str {
        "exponential"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            -(-self.rate * x).exp_m1()
        }
    }
    fn sf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            1.0
        } else {
            (-self.rate * x).exp()
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < 0.0 {
            0.0
        } else {
            self.rate * (-self.rate * x).exp()
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        -(-p).ln_1p() / self.rate
    }
    fn support(&self) -> (f64, f64) {
        (0.0, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        Some(1.0 / self.rate)
    }
    fn variance(&self) -> Option<f64> {
        Some(1.0 / (self.rate * self.rate))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("rate", self.rate)]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        crate::dist::invariants::check(&super::Exponential::new(0.7).unwrap());
    }
}

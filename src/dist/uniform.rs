//! Uniform(lower, upper). Base: uniform, θ = lower + (upper − lower)·u.

use super::{finite, Base, Continuous, DistError, FamilyInfo, Support};

#[derive(Debug, Clone, Copy)]
pub struct Uniform {
    pub lower: f64,
    pub upper: f64,
}

impl Uniform {
    pub fn new(lower: f64, upper: f64) -> Result<Self, DistError> {
        let lower = finite("uniform", "lower", lower)?;
        let upper = finite("uniform", "upper", upper)?;
        if upper <= lower {
            return Err(DistError {
                family: "uniform",
                param: "upper",
                value: upper,
                reason: "must exceed lower",
            });
        }
        Ok(Self { lower, upper })
    }
}

pub const INFO: FamilyInfo = FamilyInfo {
    name: "uniform",
    params: &["lower", "upper"],
    base: Base::Uniform,
    support: Support::Interval,
    about: "uniform between lower and upper",
    build: |p| Ok(Box::new(Uniform::new(p[0], p[1])?)),
};

impl Continuous for Uniform {
    fn family(&self) -> &'static str {
        "uniform"
    }
    fn cdf(&self, x: f64) -> f64 {
        ((x - self.lower) / (self.upper - self.lower)).clamp(0.0, 1.0)
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < self.lower || x > self.upper {
            0.0
        } else {
            1.0 / (self.upper - self.lower)
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        self.lower + (self.upper - self.lower) * p
    }
    fn support(&self) -> (f64, f64) {
        (self.lower, self.upper)
    }
    fn mean(&self) -> Option<f64> {
        Some(0.5 * (self.lower + self.upper))
    }
    fn variance(&self) -> Option<f64> {
        Some((self.upper - self.lower).powi(2) / 12.0)
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("lower", self.lower), ("upper", self.upper)]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        crate::dist::invariants::check(&super::Uniform::new(-1.0, 3.0).unwrap());
    }
}

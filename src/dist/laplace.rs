//! Laplace(location, scale): density e^(−|x − location|/scale)/(2·scale).
//! Base: uniform, closed-form quantile.

use super::{finite, positive, Base, Continuous, DistError, FamilyInfo, Support};

#[derive(Debug, Clone, Copy)]
pub struct Laplace {
    pub location: f64,
    pub scale: f64,
}

impl Laplace {
    pub fn new(location: f64, scale: f64) -> Result<Self, DistError> {
        Ok(Self {
            location: finite("laplace", "location", location)?,
            scale: positive("laplace", "scale", scale)?,
        })
    }
}

pub const INFO: FamilyInfo = FamilyInfo {
    name: "laplace",
    params: &["location", "scale"],
    base: Base::Uniform,
    support: Support::Real,
    about: "Laplace (double exponential) with location and scale",
    build: |p| Ok(Box::new(Laplace::new(p[0], p[1])?)),
};

impl Continuous for Laplace {
    fn family(&self) -> &'static str {
        "laplace"
    }
    fn cdf(&self, x: f64) -> f64 {
        let z = (x - self.location) / self.scale;
        if z < 0.0 {
            0.5 * z.exp()
        } else {
            1.0 - 0.5 * (-z).exp()
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        (-((x - self.location) / self.scale).abs()).exp() / (2.0 * self.scale)
    }
    fn quantile(&self, p: f64) -> f64 {
        if p < 0.5 {
            self.location + self.scale * (2.0 * p).ln()
        } else {
            self.location - self.scale * (2.0 * (1.0 - p)).ln()
        }
    }
    fn support(&self) -> (f64, f64) {
        (f64::NEG_INFINITY, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        Some(self.location)
    }
    fn variance(&self) -> Option<f64> {
        Some(2.0 * self.scale * self.scale)
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("location", self.location), ("scale", self.scale)]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        crate::dist::invariants::check(&super::Laplace::new(1.0, 0.5).unwrap());
    }
}

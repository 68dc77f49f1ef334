//! Laplace(location, scale): density e^(−|x − location|/scale)/(2·scale).
//! Base: uniform, closed-form quantile.

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
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

const PARAMS: [Param; 2] = [
    Param::real("location", Start::Middle),
    Param::positive("scale", Start::HalfSpread),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "laplace",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Real,
    roles: &[],
    about: "Laplace (double exponential) with location and scale",
    build: |p| Ok(Box::new(Laplace::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): double_exponential(mu, sigma),
/// sigma the scale.
fn stan(a: &Args) -> StanForm {
    StanForm::new("double_exponential", vec![a.v(0), a.v(1)]).noted("laplace(location, scale)")
}

/// PyMC 5 (`pymc.distributions.continuous`): Laplace(mu, b), b the scale.
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("Laplace", vec![("mu", a.v(0)), ("b", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.laplace(loc=1, scale=0.5)",
    params: &[1.0, 0.5],
    points: &[
        (-0.5, 0.024893534183931972, 0.049787068367863944),
        (1.2, 0.6648399769821803, 0.6703200460356393),
        (3.0, 0.9908421805556329, 0.01831563888873418),
    ],
    quantiles: &[
        (0.05, -0.15129254649702273),
        (0.5, 1.0),
        (0.95, 2.1512925464970225),
    ],
    tol: 1e-12,
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

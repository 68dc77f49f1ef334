//! Normal(mean, sd). Base: standard normal, θ = mean + sd·z.

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{finite, positive, Base, Continuous, DistError, FamilyInfo, Support};
use crate::numerics::{norm_cdf, norm_pdf, norm_quantile};

#[derive(Debug, Clone, Copy)]
pub struct Normal {
    pub mean: f64,
    pub sd: f64,
}

impl Normal {
    pub fn new(mean: f64, sd: f64) -> Result<Self, DistError> {
        Ok(Self {
            mean: finite("normal", "mean", mean)?,
            sd: positive("normal", "sd", sd)?,
        })
    }
}

const PARAMS: [Param; 2] = [
    Param::real("mean", Start::Middle),
    Param::positive("sd", Start::HalfSpread),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "normal",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Normal,
    support: Support::Real,
    roles: &[],
    about: "normal with mean and standard deviation sd",
    build: |p| Ok(Box::new(Normal::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): normal(mu, sigma), sigma an sd.
fn stan(a: &Args) -> StanForm {
    StanForm::new("normal", vec![a.v(0), a.v(1)])
}

/// PyMC 5 (`pymc.distributions.continuous`): Normal(mu, sigma).
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("Normal", vec![("mu", a.v(0)), ("sigma", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.norm(loc=1, scale=2)",
    params: &[1.0, 2.0],
    points: &[
        (-2.0, 0.06680720126885807, 0.06475879783294587),
        (1.5, 0.5987063256829237, 0.19333405840142465),
        (4.0, 0.9331927987311419, 0.06475879783294587),
    ],
    quantiles: &[
        (0.05, -2.2897072539029457),
        (0.5, 1.0),
        (0.95, 4.289707253902945),
    ],
    tol: 1e-12,
};

impl Continuous for Normal {
    fn family(&self) -> &'static str {
        "normal"
    }
    fn cdf(&self, x: f64) -> f64 {
        norm_cdf((x - self.mean) / self.sd)
    }
    fn sf(&self, x: f64) -> f64 {
        norm_cdf((self.mean - x) / self.sd)
    }
    fn pdf(&self, x: f64) -> f64 {
        norm_pdf((x - self.mean) / self.sd) / self.sd
    }
    fn quantile(&self, p: f64) -> f64 {
        self.mean + self.sd * norm_quantile(p)
    }
    fn support(&self) -> (f64, f64) {
        (f64::NEG_INFINITY, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        Some(self.mean)
    }
    fn variance(&self) -> Option<f64> {
        Some(self.sd * self.sd)
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("mean", self.mean), ("sd", self.sd)]
    }
    fn from_base(&self, z: f64) -> f64 {
        self.mean + self.sd * z
    }
    fn fill_from_base(&self, base: &[f64], out: &mut [f64]) {
        for (o, z) in out.iter_mut().zip(base) {
            *o = self.mean + self.sd * z;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reference_values() {
        // scipy 1.17: norm(loc=1, scale=2).cdf(2) = 0.6914624612740131, .ppf(0.1) =
        // -1.5631031310892007
        let d = Normal::new(1.0, 2.0).unwrap();
        assert!((d.cdf(2.0) - 0.6914624612740131).abs() < 1e-14);
        assert!((d.quantile(0.1) + 1.5631031310892007).abs() < 1e-13);
        crate::dist::invariants::check(&d);
    }

    #[test]
    fn rejects_bad_sd() {
        let e = Normal::new(0.0, -1.0).unwrap_err();
        assert_eq!(e.param, "sd");
        assert_eq!(e.value, -1.0);
    }
}

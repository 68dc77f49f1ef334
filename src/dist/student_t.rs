//! StudentT(df, location, scale). CDF and quantile from statrs 0.19
//! (`StudentsT::new(location, scale, freedom)`). Base: uniform.

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{computable, finite, positive, Base, Continuous, DistError, FamilyInfo, Support};
use statrs::distribution::{Continuous as _, ContinuousCDF};

#[derive(Debug, Clone)]
pub struct StudentT {
    pub df: f64,
    pub location: f64,
    pub scale: f64,
    inner: statrs::distribution::StudentsT,
}

impl StudentT {
    pub fn new(df: f64, location: f64, scale: f64) -> Result<Self, DistError> {
        let df = computable("student-t", "df", df, DF_RANGE, DF_WHY)?;
        let location = finite("student-t", "location", location)?;
        let scale = positive("student-t", "scale", scale)?;
        let inner =
            statrs::distribution::StudentsT::new(location, scale, df).map_err(|_| DistError {
                family: "student-t",
                param: "df",
                value: df,
                reason: "rejected by statrs",
            })?;
        Ok(Self {
            df,
            location,
            scale,
            inner,
        })
    }
}

/// Where the degrees of freedom keep the CDF and quantile computable
/// ([`computable`]); shared with the half-Student-t.
pub(crate) const DF_RANGE: (f64, f64) = (1e-3, 1e6);
pub(crate) const DF_WHY: &str = "must lie in [1e-3, 1e6], where the Student-t CDF and quantile \
can be computed (beyond 1e6 it is a normal to every printed digit: use the normal family)";

const PARAMS: [Param; 3] = [
    Param::positive("df", Start::Offset),
    Param::real("location", Start::Middle),
    Param::positive("scale", Start::HalfSpread),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "student-t",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Real,
    roles: &[],
    about: "Student t with df degrees of freedom, location and scale",
    build: |p| Ok(Box::new(StudentT::new(p[0], p[1], p[2])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): student_t(nu, mu, sigma).
fn stan(a: &Args) -> StanForm {
    StanForm::new("student_t", vec![a.v(0), a.v(1), a.v(2)])
}

/// PyMC 5 (`pymc.distributions.continuous`): StudentT(nu, mu, sigma).
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new(
        "StudentT",
        vec![("nu", a.v(0)), ("mu", a.v(1)), ("sigma", a.v(2))],
    )
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.t(df=3, loc=1, scale=2)",
    params: &[3.0, 1.0, 2.0],
    points: &[
        (-5.0, 0.02883444281121865, 0.01148601865462067),
        (1.5, 0.5906353887855852, 0.17635176663221003),
        (8.0, 0.9802594811903587, 0.007112009400764856),
    ],
    quantiles: &[
        (0.05, -3.7067268696036484),
        (0.5, 1.0),
        (0.95, 5.706726869603647),
    ],
    tol: 1e-12,
};

impl Continuous for StudentT {
    fn family(&self) -> &'static str {
        "student-t"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x.is_infinite() {
            return if x > 0.0 { 1.0 } else { 0.0 };
        }
        self.inner.cdf(x)
    }
    fn pdf(&self, x: f64) -> f64 {
        self.inner.pdf(x)
    }
    fn quantile(&self, p: f64) -> f64 {
        if !(0.0..=1.0).contains(&p) {
            return f64::NAN;
        }
        if p == 0.0 {
            return f64::NEG_INFINITY;
        }
        if p == 1.0 {
            return f64::INFINITY;
        }
        self.inner.inverse_cdf(p)
    }
    fn support(&self) -> (f64, f64) {
        (f64::NEG_INFINITY, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        (self.df > 1.0).then_some(self.location)
    }
    fn variance(&self) -> Option<f64> {
        (self.df > 2.0).then(|| self.scale * self.scale * self.df / (self.df - 2.0))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![
            ("df", self.df),
            ("location", self.location),
            ("scale", self.scale),
        ]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        crate::dist::invariants::check(&super::StudentT::new(3.0, 1.0, 2.0).unwrap());
    }
}

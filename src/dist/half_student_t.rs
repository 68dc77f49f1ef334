//! HalfStudentT(df, scale): |T|·scale with T ~ Student t(df). Base: uniform,
//! θ = scale·t_df⁻¹((1 + u)/2).

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::student_t::StudentT;
use super::student_t::{DF_RANGE, DF_WHY};
use super::{computable, positive, Base, Continuous, DistError, FamilyInfo, Role, Support};

#[derive(Debug, Clone)]
pub struct HalfStudentT {
    pub df: f64,
    pub scale: f64,
    t: StudentT,
}

impl HalfStudentT {
    pub fn new(df: f64, scale: f64) -> Result<Self, DistError> {
        let df = computable("half-student-t", "df", df, DF_RANGE, DF_WHY)?;
        let scale = positive("half-student-t", "scale", scale)?;
        Ok(Self {
            df,
            scale,
            t: StudentT::new(df, 0.0, scale)?,
        })
    }
}

const PARAMS: [Param; 2] = [
    Param::positive("df", Start::Offset),
    Param::positive("scale", Start::HalfSpread),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "half-student-t",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Positive,
    roles: &[Role::NoiseSd],
    about: "half Student t: |t(df, 0, scale)|",
    build: |p| Ok(Box::new(HalfStudentT::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): student_t(nu, 0, sigma) on a
/// <lower=0> parameter (the bound truncates).
fn stan(a: &Args) -> StanForm {
    StanForm::new("student_t", vec![a.v(0), 0.0, a.v(1)])
        .truncated_at_zero(format!(
            "half-student-t({}, {})",
            a.n(0),
            a.n(1)
        ))
}

/// PyMC 5 (`pymc.distributions.continuous`): HalfStudentT(nu, sigma).
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("HalfStudentT", vec![("nu", a.v(0)), ("sigma", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: |T| with T ~ stats.t(df=3, scale=1.5): cdf 2·t.cdf − 1, pdf 2·t.pdf, quantile t.ppf((1 + p)/2)",
    params: &[3.0, 1.5],
    points: &[
        (0.1, 0.04895867538336507, 0.48862129005861527),
        (1.5, 0.6089977810442295, 0.275664447710896),
        (9.0, 0.9907272851077153, 0.002899823250081746),
    ],
    quantiles: &[(0.05, 0.10213128401440447), (0.5, 1.1473384926065167), (0.95, 4.773669457925561)],
    tol: 1e-12,
};

impl Continuous for HalfStudentT {
    fn family(&self) -> &'static str {
        "half-student-t"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            2.0 * self.t.cdf(x) - 1.0
        }
    }
    fn sf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            1.0
        } else {
            2.0 * self.t.cdf(-x)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x < 0.0 {
            0.0
        } else {
            2.0 * self.t.pdf(x)
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        self.t.quantile(0.5 + 0.5 * p)
    }
    fn support(&self) -> (f64, f64) {
        (0.0, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        use crate::numerics::ln_gamma;
        let v = self.df;
        (v > 1.0).then(|| {
            2.0 * self.scale
                * (v / std::f64::consts::PI).sqrt()
                * (ln_gamma((v + 1.0) / 2.0) - ln_gamma(v / 2.0)).exp()
                / (v - 1.0)
        })
    }
    fn variance(&self) -> Option<f64> {
        let m = self.mean()?;
        (self.df > 2.0).then(|| self.scale * self.scale * self.df / (self.df - 2.0) - m * m)
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("df", self.df), ("scale", self.scale)]
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn invariants() {
        crate::dist::invariants::check(&super::HalfStudentT::new(3.0, 1.5).unwrap());
    }
}

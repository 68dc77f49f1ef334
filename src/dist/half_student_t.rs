//! HalfStudentT(df, scale): |T|·scale with T ~ Student t(df). Base: uniform,
//! θ = scale·t_df⁻¹((1 + u)/2).

use super::student_t::StudentT;
use super::{positive, Base, Continuous, DistError, FamilyInfo, Support};

#[derive(Debug, Clone)]
pub struct HalfStudentT {
    pub df: f64,
    pub scale: f64,
    t: StudentT,
}

impl HalfStudentT {
    pub fn new(df: f64, scale: f64) -> Result<Self, DistError> {
        let df = positive("half-student-t", "df", df)?;
        let scale = positive("half-student-t", "scale", scale)?;
        Ok(Self {
            df,
            scale,
            t: StudentT::new(df, 0.0, scale)?,
        })
    }
}

pub const INFO: FamilyInfo = FamilyInfo {
    name: "half-student-t",
    params: &["df", "scale"],
    base: Base::Uniform,
    support: Support::Positive,
    about: "half Student t: |t(df, 0, scale)|",
    build: |p| Ok(Box::new(HalfStudentT::new(p[0], p[1])?)),
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

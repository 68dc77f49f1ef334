//! StudentT(df, location, scale). CDF and quantile from statrs 0.19
//! (`StudentsT::new(location, scale, freedom)`). Base: uniform.

use super::{finite, positive, Base, Continuous, DistError, FamilyInfo, Support};
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
        let df = positive("student-t", "df", df)?;
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

pub const INFO: FamilyInfo = FamilyInfo {
    name: "student-t",
    params: &["df", "location", "scale"],
    base: Base::Uniform,
    support: Support::Real,
    about: "Student t with df degrees of freedom, location and scale",
    build: |p| Ok(Box::new(StudentT::new(p[0], p[1], p[2])?)),
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

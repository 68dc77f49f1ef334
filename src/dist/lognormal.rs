//! LogNormal(meanlog, sdlog): ln θ ~ Normal(meanlog, sdlog). Base: standard normal,
//! θ = exp(meanlog + sdlog·z). Median e^meanlog, mean e^(meanlog + sdlog²/2).

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{finite, positive, Base, Continuous, DistError, FamilyInfo, Role, Support};
use crate::numerics::{norm_cdf, norm_pdf, norm_quantile};

#[derive(Debug, Clone, Copy)]
pub struct LogNormal {
    pub meanlog: f64,
    pub sdlog: f64,
}

impl LogNormal {
    pub fn new(meanlog: f64, sdlog: f64) -> Result<Self, DistError> {
        Ok(Self {
            meanlog: finite("lognormal", "meanlog", meanlog)?,
            sdlog: positive("lognormal", "sdlog", sdlog)?,
        })
    }
}

const PARAMS: [Param; 2] = [
    Param::real("meanlog", Start::LogMiddle),
    Param::positive("sdlog", Start::Offset),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "lognormal",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Normal,
    support: Support::Positive,
    roles: &[Role::LatencyShape],
    about: "log-normal: the log is normal(meanlog, sdlog)",
    build: |p| Ok(Box::new(LogNormal::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): lognormal(mu, sigma) of the log.
fn stan(a: &Args) -> StanForm {
    StanForm::new("lognormal", vec![a.v(0), a.v(1)]).positive()
}

/// PyMC 5 (`pymc.distributions.continuous`): LogNormal(mu, sigma).
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("LogNormal", vec![("mu", a.v(0)), ("sigma", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.lognorm(s=0.35, scale=exp(0.4))",
    params: &[0.4, 0.35],
    points: &[
        (0.8, 0.03750443121231214, 0.29202875589465543),
        (1.5, 0.5062290688501575, 0.7597974270421578),
        (3.0, 0.9770349493939805, 0.05182893066853459),
    ],
    quantiles: &[
        (0.05, 0.8388706387595357),
        (0.5, 1.4918246976412703),
        (0.95, 2.6530204129965074),
    ],
    tol: 1e-12,
};

impl Continuous for LogNormal {
    fn family(&self) -> &'static str {
        "lognormal"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            norm_cdf((x.ln() - self.meanlog) / self.sdlog)
        }
    }
    fn sf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            1.0
        } else {
            norm_cdf((self.meanlog - x.ln()) / self.sdlog)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            norm_pdf((x.ln() - self.meanlog) / self.sdlog) / (self.sdlog * x)
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        (self.meanlog + self.sdlog * norm_quantile(p)).exp()
    }
    fn support(&self) -> (f64, f64) {
        (0.0, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        Some((self.meanlog + 0.5 * self.sdlog * self.sdlog).exp())
    }
    fn variance(&self) -> Option<f64> {
        let s2 = self.sdlog * self.sdlog;
        Some((s2.exp() - 1.0) * (2.0 * self.meanlog + s2).exp())
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("meanlog", self.meanlog), ("sdlog", self.sdlog)]
    }
    fn from_base(&self, z: f64) -> f64 {
        (self.meanlog + self.sdlog * z).exp()
    }
    fn fill_from_base(&self, base: &[f64], out: &mut [f64]) {
        for (o, z) in out.iter_mut().zip(base) {
            *o = (self.meanlog + self.sdlog * z).exp();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reference_values() {
        // Median e^μ (a standard identity).
        let d = LogNormal::new(3.0, 0.4).unwrap();
        assert!((d.quantile(0.5) - 3f64.exp()).abs() < 1e-12);
        crate::dist::invariants::check(&d);
    }
}

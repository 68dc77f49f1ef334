//! Gumbel(mu, beta): the largest-extreme-value distribution on the real line,
//! F(x) = exp(−exp(−(x − mu)/beta)), quantile mu − beta·ln(−ln p), mode mu,
//! mean mu + γ·beta (γ the Euler–Mascheroni constant), variance π²β²/6
//! (Johnson, Kotz & Balakrishnan, Continuous Univariate Distributions, vol. 2,
//! 2nd ed., ch. 22). Base: uniform, θ = mu − beta·ln(−ln u).

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{finite, positive, Base, Continuous, DistError, FamilyInfo, Support};
use std::f64::consts::PI;

/// The Euler–Mascheroni constant γ.
const EULER_GAMMA: f64 = 0.577_215_664_901_532_9;

#[derive(Debug, Clone, Copy)]
pub struct Gumbel {
    pub mu: f64,
    pub beta: f64,
}

impl Gumbel {
    pub fn new(mu: f64, beta: f64) -> Result<Self, DistError> {
        Ok(Self {
            mu: finite("gumbel", "mu", mu)?,
            beta: positive("gumbel", "beta", beta)?,
        })
    }
}

const PARAMS: [Param; 2] = [
    Param::real("mu", Start::Middle),
    Param::positive("beta", Start::HalfSpread),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "gumbel",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Real,
    roles: &[],
    about: "Gumbel (largest extreme value) with location mu and scale beta",
    build: |p| Ok(Box::new(Gumbel::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference, "Gumbel distribution"): gumbel(mu, beta),
/// beta the scale. brms prior strings use the same call.
fn stan(a: &Args) -> StanForm {
    StanForm::new("gumbel", vec![a.v(0), a.v(1)])
}

/// PyMC (PyMC 5 API reference, `pymc.Gumbel`): Gumbel(mu, beta), beta the scale.
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("Gumbel", vec![("mu", a.v(0)), ("beta", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.gumbel_r(loc=0.5, scale=2)",
    params: &[0.5, 2.0],
    points: &[
        (-2.0, 0.03049041346306221, 0.05321099995044945),
        (1.0, 0.4589560693076638, 0.17871767308609124),
        (8.0, 0.9767566411323356, 0.011485557224659682),
    ],
    quantiles: &[
        (0.05, -1.6943774007298975),
        (0.5, 1.2330258411633288),
        (0.95, 6.440390498084327),
    ],
    tol: 1e-12,
};

impl Continuous for Gumbel {
    fn family(&self) -> &'static str {
        "gumbel"
    }
    fn cdf(&self, x: f64) -> f64 {
        (-(-(x - self.mu) / self.beta).exp()).exp()
    }
    fn sf(&self, x: f64) -> f64 {
        -(-(-(x - self.mu) / self.beta).exp()).exp_m1()
    }
    fn pdf(&self, x: f64) -> f64 {
        let z = (x - self.mu) / self.beta;
        (-(z + (-z).exp())).exp() / self.beta
    }
    fn quantile(&self, p: f64) -> f64 {
        if !(0.0..=1.0).contains(&p) {
            return f64::NAN;
        }
        self.mu - self.beta * (-p.ln()).ln()
    }
    fn support(&self) -> (f64, f64) {
        (f64::NEG_INFINITY, f64::INFINITY)
    }
    fn mean(&self) -> Option<f64> {
        Some(self.mu + EULER_GAMMA * self.beta)
    }
    fn variance(&self) -> Option<f64> {
        Some(PI * PI * self.beta * self.beta / 6.0)
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("mu", self.mu), ("beta", self.beta)]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn moments_and_export_forms() {
        // scipy 1.17.1: gumbel_r(loc=0.5, scale=2).mean() = 1.6544313298030657,
        // .var() = 6.579736267392906.
        let d = Gumbel::new(0.5, 2.0).unwrap();
        assert!((d.mean().unwrap() - 1.6544313298030657).abs() < 1e-14);
        assert!((d.variance().unwrap() - 6.579736267392906).abs() < 1e-13);
        // The ends of the quantile function are the ends of the support.
        assert_eq!(d.quantile(0.0), f64::NEG_INFINITY);
        assert_eq!(d.quantile(1.0), f64::INFINITY);
        let a = Args {
            name: "t",
            values: &[0.5, 2.0],
            num: |x| format!("{x}"),
        };
        assert_eq!(stan(&a).call(a.num), "gumbel(0.5, 2)");
        assert_eq!(pymc(&a).kwargs_text(a.num), "mu=0.5, beta=2");
        for (mu, beta) in [(-3.0, 0.1), (10.0, 5.0)] {
            crate::dist::invariants::check(&Gumbel::new(mu, beta).unwrap());
        }
    }
}

//! Prior effective sample size (ESS) of probability-type quantities.
//!
//! A Beta(a, b) belief about a probability carries as much information as a + b
//! binomial observations (common practice; e.g. Morita, Thall & Müller 2008,
//! Biometrics 64, §1). For any distribution on (0, 1) with mean m and variance v we
//! report the moment-matched Beta's a + b = m(1 − m)/v − 1: exact for a Beta, and
//! for implied draws estimated from their sample mean and variance.
//!
//! Other quantities (medians, RMST, differences) get no ESS: a sample-size analogue
//! needs a likelihood for the quantity, which a derived quantity does not have. The
//! Morita–Thall–Müller ESS of the fitted parametric prior itself (the number of
//! mixture-cure observations that an ε-information prior must see to match the
//! prior's Fisher-information curvature) is not implemented: it needs the expected
//! information of the censored mixture-cure likelihood under a censoring pattern
//! the belief file does not state, and we had no reference values to verify it on.

use crate::dist::Mixed;

/// a + b of the Beta with mean `m` and variance `v` (None outside 0 < m < 1, v > 0,
/// or when v ≥ m(1 − m), which no Beta has).
pub fn beta_ess(m: f64, v: f64) -> Option<f64> {
    if !(m > 0.0 && m < 1.0 && v > 0.0 && v.is_finite()) {
        return None;
    }
    let ab = m * (1.0 - m) / v - 1.0;
    (ab > 0.0).then_some(ab)
}

/// ESS of draws of a probability (None when any draw is outside [0, 1]).
pub fn from_draws(draws: &[f64]) -> Option<f64> {
    if draws.len() < 2 || draws.iter().any(|x| !(0.0..=1.0).contains(x)) {
        return None;
    }
    let n = draws.len() as f64;
    let m = draws.iter().sum::<f64>() / n;
    let v = draws.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (n - 1.0);
    beta_ess(m, v)
}

/// ESS of a stated belief on (0, 1), from its exact moments (continuous part
/// and atoms together).
pub fn of_belief(d: &Mixed) -> Option<f64> {
    let cm = d.cont_mass();
    let (mut m1, mut m2) = (0.0, 0.0);
    for a in &d.atoms {
        if !(0.0..=1.0).contains(&a.at) {
            return None;
        }
        m1 += a.mass * a.at;
        m2 += a.mass * a.at * a.at;
    }
    if let Some(c) = &d.cont {
        let (lo, hi) = c.support();
        if lo < 0.0 || hi > 1.0 {
            return None;
        }
        let (mu, var) = (c.mean()?, c.variance()?);
        m1 += cm * mu;
        m2 += cm * (var + mu * mu);
    }
    beta_ess(m1, m2 - m1 * m1)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::dist::{beta::Beta, Continuous};
    use std::sync::Arc;

    #[test]
    fn beta_belief_reports_a_plus_b() {
        let d = Mixed::new(vec![], Some(Arc::new(Beta::new(3.0, 7.0).unwrap()))).unwrap();
        assert!((of_belief(&d).unwrap() - 10.0).abs() < 1e-9);
        let h = Mixed::new(vec![], Some(Arc::new(Beta::new(1.5, 3.5).unwrap()))).unwrap();
        assert!((of_belief(&h).unwrap() - 5.0).abs() < 1e-9);
    }

    #[test]
    fn draws_of_a_beta_give_a_plus_b_within_mc_error() {
        let b = Beta::new(3.0, 7.0).unwrap();
        let n = 200_000;
        let u = crate::rng::uniforms(11, 0, n);
        let x: Vec<f64> = u.iter().map(|u| b.quantile(*u)).collect();
        let ess = from_draws(&x).unwrap();
        // SE by the delta method: dESS/dv = −m(1−m)/v², se(v) = √((μ₄ − v²)/n).
        let m = x.iter().sum::<f64>() / n as f64;
        let v = x.iter().map(|x| (x - m).powi(2)).sum::<f64>() / n as f64;
        let mu4 = x.iter().map(|x| (x - m).powi(4)).sum::<f64>() / n as f64;
        let se = m * (1.0 - m) / (v * v) * ((mu4 - v * v) / n as f64).sqrt();
        assert!((ess - 10.0).abs() < 4.0 * se, "ess {ess}, se {se}");
        assert!(from_draws(&[0.5, 1.5]).is_none());
    }
}

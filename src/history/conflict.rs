//! Prior–data conflict: is the Kaplan–Meier survival at a horizon in new data
//! surprising under the fitted prior?
//!
//! The statistic is Ŝ(h) of the new data. Its prior-predictive distribution is the
//! fitted prior's distribution of S(h) (draws from the template) convolved with the
//! sampling error of a trial of that size: given S, the trial's Ŝ(h) is taken as
//! Binomial(m, S)/m with m = round(Ŝ(1 − Ŝ)/se²), the Greenwood effective number of
//! patients of the new data (m = n for uncensored data, where this is exact). This
//! is the simpler of the two checks the design allows: it does not re-simulate the
//! censoring pattern, which enters only through m.
//!
//! Tail probability: two-sided mid-p, 2·min(P(T < t) + ½P(T = t), P(T > t) +
//! ½P(T = t)), capped at 1 (Box 1980, JRSS A 143, prior-predictive checks; mid-p:
//! Lancaster 1961, JASA 56). The binomial probabilities are exact given each prior
//! draw, so the only Monte Carlo error is that of the prior draws. Flagged when the
//! tail probability is below the chosen level.

use statrs::distribution::{Binomial, Discrete, DiscreteCDF};

/// A tail probability in words-friendly form (scientific below 0.001).
fn fmt_p(p: f64) -> String {
    if p < 1e-3 {
        format!("{p:.1e}")
    } else {
        format!("{p:.4}")
    }
}

#[derive(Debug, Clone, serde::Serialize)]
pub struct Conflict {
    pub horizon: f64,
    pub observed: f64,
    pub observed_se: f64,
    /// Effective number of patients m of the new data at the horizon.
    pub trials: u64,
    pub prob_below: f64,
    pub prob_equal: f64,
    pub prob_above: f64,
    pub tail: f64,
    pub level: f64,
    pub flagged: bool,
    /// 5 %, 50 %, 95 % of the prior distribution of S(h).
    pub prior_quantiles: [f64; 3],
    pub words: String,
}

/// Effective number of patients of an estimate `s` with standard error `se`
/// (falls back to `n` at the edges, where Greenwood's se is 0).
pub fn trials(s: f64, se: f64, n: usize) -> u64 {
    if se > 0.0 && s > 0.0 && s < 1.0 {
        ((s * (1.0 - s) / (se * se)).round() as u64).max(1)
    } else {
        n.max(1) as u64
    }
}

/// The check for observed `s_obs` (standard error `se`) against prior draws of S(h).
pub fn check(prior: &[f64], horizon: f64, s_obs: f64, se: f64, m: u64, level: f64) -> Conflict {
    let x = s_obs * m as f64;
    let k_eq = x.round();
    let tie = (x - k_eq).abs() < 1e-7;
    // Largest integer k with k/m < s_obs.
    let k_lt = if tie { k_eq - 1.0 } else { x.floor() };
    let (mut below, mut equal) = (0.0, 0.0);
    let mut used = 0usize;
    for &s in prior {
        if !(0.0..=1.0).contains(&s) {
            continue;
        }
        used += 1;
        let b = match Binomial::new(s, m) {
            Ok(b) => b,
            Err(_) => continue,
        };
        if k_lt >= 0.0 {
            below += b.cdf(k_lt as u64);
        }
        if tie {
            equal += b.pmf(k_eq as u64);
        }
    }
    let n = used.max(1) as f64;
    let (below, equal) = (below / n, equal / n);
    let above = (1.0 - below - equal).max(0.0);
    let tail = (2.0 * (below + 0.5 * equal).min(above + 0.5 * equal)).min(1.0);
    let flagged = tail < level;
    let mut sorted: Vec<f64> = prior
        .iter()
        .copied()
        .filter(|s| (0.0..=1.0).contains(s))
        .collect();
    sorted.sort_by(f64::total_cmp);
    let q = |p: f64| {
        if sorted.is_empty() {
            f64::NAN
        } else {
            crate::numerics::empirical_quantile(&sorted, p)
        }
    };
    let pq = [q(0.05), q(0.5), q(0.95)];
    let side = if below + 0.5 * equal < above + 0.5 * equal {
        "lower"
    } else {
        "upper"
    };
    let words = if flagged {
        format!(
            "CONFLICT: the new data's survival at {horizon}, {s_obs:.3}, lies in the {side} tail of what the prior predicts for a trial of {m} effective patients (two-sided tail probability {} < {level}); the prior's 90 % range for S({horizon}) is {:.3}–{:.3}. Reconsider the belief or the discount before borrowing from it.",
            fmt_p(tail),
            pq[0],
            pq[2]
        )
    } else {
        format!(
            "no conflict flagged: the new data's survival at {horizon}, {s_obs:.3}, is within what the prior predicts for a trial of {m} effective patients (two-sided tail probability {tail:.4} ≥ {level})."
        )
    };
    Conflict {
        horizon,
        observed: s_obs,
        observed_se: se,
        trials: m,
        prob_below: below,
        prob_equal: equal,
        prob_above: above,
        tail,
        level,
        flagged,
        prior_quantiles: pq,
        words,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::dist::{beta::Beta, Continuous};

    #[test]
    fn data_from_the_prior_are_flagged_at_the_nominal_rate() {
        let prior_d = Beta::new(20.0, 30.0).unwrap();
        let prior: Vec<f64> = crate::rng::uniforms(3, 0, 2000)
            .iter()
            .map(|u| prior_d.quantile(*u))
            .collect();
        let (reps, n, level) = (1000usize, 60u64, 0.1);
        let u = crate::rng::uniforms(4, 0, reps * (1 + n as usize));
        let mut flagged = 0usize;
        for r in 0..reps {
            let base = r * (1 + n as usize);
            let s = prior_d.quantile(u[base]);
            let k = u[base + 1..base + 1 + n as usize]
                .iter()
                .filter(|v| **v < s)
                .count();
            let obs = k as f64 / n as f64;
            let se = (obs * (1.0 - obs) / n as f64).sqrt();
            if check(&prior, 12.0, obs, se, n, level).flagged {
                flagged += 1;
            }
        }
        let rate = flagged as f64 / reps as f64;
        let sd = (level * (1.0 - level) / reps as f64).sqrt();
        assert!(
            (rate - level).abs() < 4.0 * sd,
            "rate {rate} vs {level} ± {}",
            4.0 * sd
        );
    }

    #[test]
    fn data_far_outside_are_flagged() {
        let prior_d = Beta::new(20.0, 30.0).unwrap();
        let prior: Vec<f64> = crate::rng::uniforms(3, 0, 2000)
            .iter()
            .map(|u| prior_d.quantile(*u))
            .collect();
        let c = check(&prior, 12.0, 0.9, 0.04, 60, 0.05);
        assert!(c.flagged && c.tail < 1e-4 && c.words.starts_with("CONFLICT"));
        let c = check(&prior, 12.0, 0.4, 0.06, 60, 0.05);
        assert!(!c.flagged);
    }
}

//! Historical data → a belief, deliberately discounted.
//!
//! Probability-type summaries (survival at a horizon, the plateau as evidence
//! about the cure fraction, a binary event probability) become a Beta belief:
//! with estimate p̂ and standard error se, the historical data carry
//! n_h = p̂(1 − p̂)/se² effective patients (for uncensored data Greenwood's se² is
//! p̂(1 − p̂)/n, so n_h = n; for a binary count n_h = total). A power-prior weight
//! w ∈ (0, 1] keeps w·n_h of them (Ibrahim & Chen 2000, Statistical Science 15):
//! Beta(a, b) with a + b = w·n_h and mean p̂ — the power prior of binomial data
//! from a Beta(0, 0) initial prior, exactly, in the binary case. An extra
//! between-trial standard deviation τ adds τ² to that Beta's variance
//! p̂(1 − p̂)/(w·n_h + 1), and a + b = p̂(1 − p̂)/var − 1 by moment matching.
//!
//! The median becomes a log-normal belief: meanlog = ln m̂, and sdlog² =
//! (se(m̂)/m̂)²/w + τ² with se(m̂) the delta-method standard error of
//! [`super::km`] (τ on the log scale here). These are our choices; common practice
//! in the power-prior and meta-analytic-predictive literature (Neuenschwander et
//! al. 2010, Clinical Trials 7) but not a single published recipe.

use super::km::KaplanMeier;
use crate::dist::{beta::Beta, lognormal::LogNormal, Dist};
use std::sync::Arc;

/// Which summary of the historical data the belief is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Summary {
    SurvivalProb,
    Plateau,
    Median,
    /// events/total
    Binary,
}

pub const SUMMARIES: [&str; 3] = ["survival_prob", "plateau", "median"];

impl Summary {
    pub fn parse(s: &str) -> Option<Self> {
        match s {
            "survival_prob" => Some(Summary::SurvivalProb),
            "plateau" => Some(Summary::Plateau),
            "median" => Some(Summary::Median),
            _ => None,
        }
    }
    /// The mixture-cure quantity this summary is evidence about.
    pub fn quantity(&self) -> &'static str {
        match self {
            Summary::SurvivalProb => "survival_prob",
            Summary::Plateau => "cure_fraction",
            Summary::Median => "median_survival",
            Summary::Binary => "event_prob",
        }
    }
}

/// The discount: power-prior weight w ∈ (0, 1] and extra spread τ ≥ 0.
#[derive(Debug, Clone, Copy)]
pub struct Discount {
    pub weight: f64,
    pub extra_sd: f64,
}

impl Discount {
    pub fn new(weight: f64, extra_sd: f64) -> Result<Self, String> {
        if !(weight > 0.0 && weight <= 1.0) {
            return Err(format!("discount {weight} must lie in (0, 1]"));
        }
        if !(extra_sd.is_finite() && extra_sd >= 0.0) {
            return Err(format!("extra_sd {extra_sd} must be ≥ 0"));
        }
        Ok(Discount { weight, extra_sd })
    }
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Shape {
    Beta { alpha: f64, beta: f64 },
    LogNormal { meanlog: f64, sdlog: f64 },
}

/// A belief built from historical data.
#[derive(Debug, Clone)]
pub struct HistBelief {
    pub summary: Summary,
    pub horizon: Option<f64>,
    pub estimate: f64,
    pub se: f64,
    /// Effective number of historical patients n_h (probability summaries).
    pub n_hist: Option<f64>,
    pub discount: Discount,
    pub shape: Shape,
    /// What the data were, in words.
    pub source: String,
}

fn beta(p: f64, n_h: f64, d: Discount) -> Result<Shape, String> {
    if !(p > 0.0 && p < 1.0) {
        return Err(format!(
            "the estimate {p} is at the edge of (0, 1): a Beta belief needs 0 < p < 1"
        ));
    }
    let mut ab = d.weight * n_h;
    if d.extra_sd > 0.0 {
        let var = p * (1.0 - p) / (ab + 1.0) + d.extra_sd * d.extra_sd;
        ab = p * (1.0 - p) / var - 1.0;
        if ab <= 0.0 {
            return Err(format!(
                "extra_sd {} is too large for an estimate of {p}: no Beta has that variance",
                d.extra_sd
            ));
        }
    }
    Ok(Shape::Beta {
        alpha: p * ab,
        beta: (1.0 - p) * ab,
    })
}

impl HistBelief {
    /// From a Kaplan–Meier estimate. `horizon` is needed for survival_prob.
    pub fn from_km(
        km: &KaplanMeier,
        summary: Summary,
        horizon: Option<f64>,
        d: Discount,
    ) -> Result<Self, String> {
        let src = format!("Kaplan–Meier of {} patients, {} events", km.n, km.events);
        let (est, se, src) = match summary {
            Summary::SurvivalProb => {
                let h = horizon.ok_or("summary survival_prob needs a horizon")?;
                if h > km.last_time {
                    return Err(format!(
                        "horizon {h} lies beyond the last follow-up time {}",
                        km.last_time
                    ));
                }
                let (s, se) = km.at(h);
                (s, se, format!("{src}; Ŝ({h})"))
            }
            Summary::Plateau => {
                let (s, se, t) = km.plateau().ok_or("no events: no plateau")?;
                (s, se, format!("{src}; plateau after the last event at {t}"))
            }
            Summary::Median => {
                let (m, se) = km.median().ok_or("the median is not reached in the data")?;
                let se =
                    se.ok_or("the slope of Ŝ around ½ cannot be estimated for the median's se")?;
                let sdlog = ((se / m).powi(2) / d.weight + d.extra_sd.powi(2)).sqrt();
                return Ok(HistBelief {
                    summary,
                    horizon: None,
                    estimate: m,
                    se,
                    n_hist: None,
                    discount: d,
                    shape: Shape::LogNormal {
                        meanlog: m.ln(),
                        sdlog,
                    },
                    source: format!("{src}; median"),
                });
            }
            Summary::Binary => return Err("use from_binary for events/total".into()),
        };
        if se <= 0.0 {
            return Err(format!(
                "the estimate {est} has standard error 0 (no events or everyone at risk had one)"
            ));
        }
        let n_h = est * (1.0 - est) / (se * se);
        Ok(HistBelief {
            summary,
            horizon: if summary == Summary::SurvivalProb {
                horizon
            } else {
                None
            },
            estimate: est,
            se,
            n_hist: Some(n_h),
            discount: d,
            shape: beta(est, n_h, d)?,
            source: src,
        })
    }

    /// From `events` out of `total` patients (belief on the event probability).
    pub fn from_binary(
        events: u64,
        total: u64,
        horizon: Option<f64>,
        d: Discount,
    ) -> Result<Self, String> {
        if total == 0 || events > total {
            return Err(format!(
                "events {events} of total {total}: need 0 ≤ events ≤ total, total > 0"
            ));
        }
        let p = events as f64 / total as f64;
        Ok(HistBelief {
            summary: Summary::Binary,
            horizon,
            estimate: p,
            se: (p * (1.0 - p) / total as f64).sqrt(),
            n_hist: Some(total as f64),
            discount: d,
            shape: beta(p, total as f64, d)?,
            source: format!("{events} events of {total} patients"),
        })
    }

    pub fn dist(&self) -> Result<Dist, String> {
        match self.shape {
            Shape::Beta { alpha, beta } => Beta::new(alpha, beta)
                .map(|b| Arc::new(b) as Dist)
                .map_err(|e| e.to_string()),
            Shape::LogNormal { meanlog, sdlog } => LogNormal::new(meanlog, sdlog)
                .map(|b| Arc::new(b) as Dist)
                .map_err(|e| e.to_string()),
        }
    }

    /// The belief's effective sample size (a + b for a Beta; None otherwise).
    pub fn ess(&self) -> Option<f64> {
        match self.shape {
            Shape::Beta { alpha, beta } => Some(alpha + beta),
            _ => None,
        }
    }

    /// A `[[belief]]` block to paste into a belief file.
    pub fn toml_block(&self) -> String {
        let mut s = String::new();
        s.push_str(&format!("# from historical data: {}\n", self.source));
        s.push_str(&format!(
            "# estimate {:.6} (se {:.6}); discount {}, extra_sd {}",
            self.estimate, self.se, self.discount.weight, self.discount.extra_sd
        ));
        if let Some(n) = self.n_hist {
            s.push_str(&format!(
                "; {:.1} effective historical patients, belief ESS {:.1}",
                n,
                self.ess().unwrap_or(0.0)
            ));
        }
        s.push_str("\n[[belief]]\n");
        s.push_str(&format!("quantity = \"{}\"\n", self.summary.quantity()));
        if let Some(h) = self.horizon {
            s.push_str(&format!("horizon = {h}\n"));
        }
        match self.shape {
            Shape::Beta { alpha, beta } => s.push_str(&format!(
                "distribution = {{ family = \"beta\", alpha = {alpha:.6}, beta = {beta:.6} }}\n"
            )),
            Shape::LogNormal { meanlog, sdlog } => s.push_str(&format!(
                "distribution = {{ family = \"lognormal\", meanlog = {meanlog:.6}, sdlog = {sdlog:.6} }}\n"
            )),
        }
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uncensored_km_gives_n_patients_and_discount_halves() {
        // Uncensored data: Greenwood's variance is p(1 − p)/n (Klein & Moeschberger
        // 2003, §4.2), so the effective number of patients is n exactly.
        let data: Vec<_> = (1..=40)
            .map(|i| super::super::Obs {
                time: i as f64,
                event: true,
            })
            .collect();
        let km = KaplanMeier::new(&data);
        let full = HistBelief::from_km(
            &km,
            Summary::SurvivalProb,
            Some(10.0),
            Discount::new(1.0, 0.0).unwrap(),
        )
        .unwrap();
        assert!((full.n_hist.unwrap() - 40.0).abs() < 1e-9);
        assert!((full.ess().unwrap() - 40.0).abs() < 1e-9);
        let half = HistBelief::from_km(
            &km,
            Summary::SurvivalProb,
            Some(10.0),
            Discount::new(0.5, 0.0).unwrap(),
        )
        .unwrap();
        assert!((half.ess().unwrap() - 20.0).abs() < 1e-9);
        if let Shape::Beta { alpha, beta } = half.shape {
            assert!((alpha / (alpha + beta) - 0.75).abs() < 1e-12);
        }
        // Extra spread: variance = p(1−p)/(ab + 1) + τ² exactly.
        let tau = HistBelief::from_km(
            &km,
            Summary::SurvivalProb,
            Some(10.0),
            Discount::new(0.5, 0.05).unwrap(),
        )
        .unwrap();
        let ab = tau.ess().unwrap();
        let var = 0.75 * 0.25 / (ab + 1.0);
        assert!((var - (0.75 * 0.25 / 21.0 + 0.0025)).abs() < 1e-12);
        assert!(Discount::new(0.0, 0.0).is_err() && Discount::new(1.5, 0.0).is_err());
    }

    #[test]
    fn binary_is_the_power_prior() {
        // Power prior of 12/40 with weight 0.5 and a Beta(0, 0) initial prior:
        // Beta(6, 14) (Ibrahim & Chen 2000, eq. 2.1 with a conjugate binomial likelihood).
        let b = HistBelief::from_binary(12, 40, None, Discount::new(0.5, 0.0).unwrap()).unwrap();
        match b.shape {
            Shape::Beta { alpha, beta } => {
                assert!((alpha - 6.0).abs() < 1e-12 && (beta - 14.0).abs() < 1e-12)
            }
            _ => panic!("expected a Beta"),
        }
        assert!(HistBelief::from_binary(0, 40, None, Discount::new(0.5, 0.0).unwrap()).is_err());
    }
}

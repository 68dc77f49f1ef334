//! What fixed hyperparameters imply: for each belief's quantity, the mean, sd,
//! quantiles and atom masses of its prior-predictive draws.

use crate::error::Result;
use crate::fit::objective::Objective;
use crate::fit::verdict::{empirical_quantile, PROBS};
use crate::spec::Spec;
use serde::Serialize;

#[derive(Debug, Clone, Serialize)]
pub struct QuantitySummary {
    pub label: String,
    pub mean: Option<f64>,
    pub sd: Option<f64>,
    pub probs: Vec<f64>,
    #[serde(serialize_with = "crate::numerics::ext::nums::serialize")]
    pub quantiles: Vec<f64>,
    /// Mass at +∞ (e.g. a median never reached).
    pub mass_at_inf: f64,
    /// Masses at the belief's atoms, (location, implied mass).
    pub atom_masses: Vec<(f64, f64)>,
    /// Believed quantiles at the same probabilities, for comparison.
    #[serde(serialize_with = "crate::numerics::ext::nums::serialize")]
    pub believed: Vec<f64>,
}

/// Summaries of every belief's quantity at the full hyperparameter vector `h`.
pub fn summarise(spec: &Spec, h: &[f64]) -> Result<Vec<QuantitySummary>> {
    let obj = Objective::fitting(spec);
    let sorted = obj.sorted_draws(h)?;
    Ok(spec
        .beliefs
        .iter()
        .zip(&sorted)
        .map(|(b, s)| {
            let n = s.len() as f64;
            let fin: Vec<f64> = s.iter().copied().filter(|v| v.is_finite()).collect();
            let (mean, sd) = if fin.len() > 1 {
                let m = fin.iter().sum::<f64>() / fin.len() as f64;
                let v = fin.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (fin.len() - 1) as f64;
                (Some(m), Some(v.sqrt()))
            } else {
                (None, None)
            };
            QuantitySummary {
                label: b.label.clone(),
                mean,
                sd,
                probs: PROBS.to_vec(),
                quantiles: PROBS.iter().map(|p| empirical_quantile(s, *p)).collect(),
                mass_at_inf: s.iter().filter(|v| v.is_infinite()).count() as f64 / n,
                atom_masses: b
                    .target
                    .atoms()
                    .iter()
                    .map(|a| (a.at, s.iter().filter(|v| **v == a.at).count() as f64 / n))
                    .collect(),
                believed: PROBS.iter().map(|p| b.target.quantile(*p)).collect(),
            }
        })
        .collect())
}

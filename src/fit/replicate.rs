//! Replicability: refit from K independent seeds and report, per hyperparameter,
//! the spread across seeds. A hyperparameter whose relative range (max − min over
//! seeds, divided by the larger of |mean| and 1 % of its bounds' width) exceeds
//! 5 % is flagged: the beliefs do not pin it down at this number of draws.

use crate::error::Result;
use crate::rng;
use crate::spec::Spec;
use rayon::prelude::*;
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Debug, Clone, Serialize, serde::Deserialize)]
pub struct Spread {
    #[serde(with = "crate::numerics::ext::nums")]
    pub values: Vec<f64>,
    #[serde(with = "crate::numerics::ext::num")]
    pub mean: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub sd: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub cv: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub relative_range: f64,
    pub flagged: bool,
}

#[derive(Debug, Clone, Serialize, serde::Deserialize)]
pub struct Replicates {
    pub seeds: Vec<u64>,
    pub per_hyperparameter: BTreeMap<String, Spread>,
    pub flagged: Vec<String>,
    pub threshold: f64,
}

pub const THRESHOLD: f64 = 0.05;

/// Refit `spec` from `k` child seeds of its seed. `tie_break` is the rule the main
/// fit actually applied, so that every replicate follows the same procedure (an
/// "auto" decision taken afresh per seed could differ near its threshold).
/// `tick(done)` after each replicate fit (for progress displays).
pub fn run(
    spec: &Spec,
    k: usize,
    tie_break: crate::spec::TieBreak,
    tick: Option<&(dyn Fn(usize) + Sync)>,
) -> Result<Replicates> {
    let seeds: Vec<u64> = (1..=k as u64)
        .map(|r| rng::child_seed(spec.seed, 0x5245_5000 + r))
        .collect();
    let done = std::sync::atomic::AtomicUsize::new(0);
    let fits: Vec<Result<Vec<f64>>> = seeds
        .par_iter()
        .map(|s| {
            let mut sp = spec.clone();
            sp.seed = *s;
            sp.fit.tie_break = tie_break;
            let h = super::fit_point(&sp, None, None).map(|p| p.h);
            let n = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
            if let Some(t) = tick {
                t(n);
            }
            h
        })
        .collect();
    let fits: Vec<Vec<f64>> = fits.into_iter().collect::<Result<_>>()?;
    let mut per = BTreeMap::new();
    let mut flagged = Vec::new();
    for (i, h) in spec.hypers().iter().enumerate() {
        if !h.is_free() {
            continue;
        }
        let values: Vec<f64> = fits.iter().map(|f| f[i]).collect();
        let n = values.len() as f64;
        let mean = values.iter().sum::<f64>() / n;
        let sd = if n > 1.0 {
            (values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt()
        } else {
            0.0
        };
        let (lo, hi) = match h.value {
            crate::templates::HyperValue::Free { lo, hi, .. } => (lo, hi),
            _ => (0.0, 1.0),
        };
        let range = values.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
            - values.iter().cloned().fold(f64::INFINITY, f64::min);
        let relative_range = range / mean.abs().max(0.01 * (hi - lo));
        let f = relative_range > THRESHOLD;
        if f {
            flagged.push(h.name.clone());
        }
        per.insert(
            h.name.clone(),
            Spread {
                values,
                mean,
                sd,
                cv: sd / mean.abs().max(1e-300),
                relative_range,
                flagged: f,
            },
        );
    }
    Ok(Replicates {
        seeds,
        per_hyperparameter: per,
        flagged,
        threshold: THRESHOLD,
    })
}

//! Finite mixture Σ w_k F_k of continuous families (weights normalised to 1).
//! CDF and density are the weighted sums; the quantile is found by Brent's method
//! inside the bracket of the components' quantiles. Used for pooled experts
//! (the linear opinion pool) and mixture beliefs. Base: uniform.

use super::{Continuous, Dist};
use crate::numerics::invert_cdf;

#[derive(Debug, Clone)]
pub struct Mixture {
    pub components: Vec<(f64, Dist)>,
}

impl Mixture {
    /// Weights must be positive and finite; they are normalised to sum to 1.
    pub fn new(components: Vec<(f64, Dist)>) -> Result<Self, String> {
        if components.is_empty() {
            return Err("a mixture needs at least one component".into());
        }
        let total: f64 = components.iter().map(|c| c.0).sum();
        if let Some((w, _)) = components.iter().find(|c| !(c.0.is_finite() && c.0 > 0.0)) {
            return Err(format!("mixture weight {w} must be finite and > 0"));
        }
        Ok(Self {
            components: components
                .into_iter()
                .map(|(w, d)| (w / total, d))
                .collect(),
        })
    }
}

impl Continuous for Mixture {
    fn family(&self) -> &'static str {
        "mixture"
    }
    fn cdf(&self, x: f64) -> f64 {
        self.components.iter().map(|(w, d)| w * d.cdf(x)).sum()
    }
    fn sf(&self, x: f64) -> f64 {
        self.components.iter().map(|(w, d)| w * d.sf(x)).sum()
    }
    fn pdf(&self, x: f64) -> f64 {
        self.components.iter().map(|(w, d)| w * d.pdf(x)).sum()
    }
    fn quantile(&self, p: f64) -> f64 {
        if p <= 0.0 {
            return self.support().0;
        }
        if p >= 1.0 {
            return self.support().1;
        }
        let lo = self
            .components
            .iter()
            .map(|(_, d)| d.quantile(p))
            .fold(f64::INFINITY, f64::min);
        let hi = self
            .components
            .iter()
            .map(|(_, d)| d.quantile(p))
            .fold(f64::NEG_INFINITY, f64::max);
        if lo == hi {
            return lo;
        }
        invert_cdf(|x| self.cdf(x), p, lo, hi)
    }
    fn support(&self) -> (f64, f64) {
        let lo = self
            .components
            .iter()
            .map(|(_, d)| d.support().0)
            .fold(f64::INFINITY, f64::min);
        let hi = self
            .components
            .iter()
            .map(|(_, d)| d.support().1)
            .fold(f64::NEG_INFINITY, f64::max);
        (lo, hi)
    }
    fn mean(&self) -> Option<f64> {
        let mut s = 0.0;
        for (w, d) in &self.components {
            s += w * d.mean()?;
        }
        Some(s)
    }
    fn variance(&self) -> Option<f64> {
        let m = self.mean()?;
        let mut s = 0.0;
        for (w, d) in &self.components {
            let mk = d.mean()?;
            s += w * (d.variance()? + (mk - m) * (mk - m));
        }
        Some(s)
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        self.components
            .iter()
            .map(|(w, _)| ("weight", *w))
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::dist::normal::Normal;
    use std::sync::Arc;

    #[test]
    fn two_normals() {
        let m = Mixture::new(vec![
            (1.0, Arc::new(Normal::new(-1.0, 0.5).unwrap()) as Dist),
            (3.0, Arc::new(Normal::new(2.0, 1.0).unwrap()) as Dist),
        ])
        .unwrap();
        // Mean 0.25·(−1) + 0.75·2 = 1.25; variance Σw(σ² + (μ − m)²) (law of total variance).
        assert!((m.mean().unwrap() - 1.25).abs() < 1e-12);
        let v = 0.25 * (0.25 + 2.25f64.powi(2)) + 0.75 * (1.0 + 0.75f64.powi(2));
        assert!((m.variance().unwrap() - v).abs() < 1e-12);
        crate::dist::invariants::check(&m);
        assert!(Mixture::new(vec![(
            0.0,
            Arc::new(Normal::new(0.0, 1.0).unwrap()) as Dist
        )])
        .is_err());
    }
}

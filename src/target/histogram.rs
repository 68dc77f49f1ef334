//! A histogram belief: bin edges e_0 < … < e_K and bin probabilities p_k summing
//! to 1; the CDF is linear within each bin (mass spread uniformly in the bin).

use crate::dist::Continuous;

#[derive(Debug, Clone)]
pub struct Histogram {
    edges: Vec<f64>,
    cum: Vec<f64>,
}

impl Histogram {
    /// Errors name the first offending entry (index from 1).
    pub fn new(edges: Vec<f64>, probs: Vec<f64>) -> Result<Self, String> {
        if edges.len() < 2 {
            return Err("a histogram needs at least two edges".into());
        }
        if probs.len() + 1 != edges.len() {
            return Err(format!(
                "{} edges need {} probabilities, got {}",
                edges.len(),
                edges.len() - 1,
                probs.len()
            ));
        }
        for (i, e) in edges.iter().enumerate() {
            if !e.is_finite() {
                return Err(format!("edge #{} = {e} must be finite", i + 1));
            }
            if i > 0 && *e <= edges[i - 1] {
                return Err(format!(
                    "edges must increase: edge #{} = {e} follows {}",
                    i + 1,
                    edges[i - 1]
                ));
            }
        }
        for (i, p) in probs.iter().enumerate() {
            if !(p.is_finite() && *p >= 0.0) {
                return Err(format!("probability #{} = {p} must be ≥ 0", i + 1));
            }
        }
        let total: f64 = probs.iter().sum();
        if (total - 1.0).abs() > 1e-6 {
            return Err(format!("probabilities sum to {total}, not 1"));
        }
        let mut cum = vec![0.0];
        for p in &probs {
            cum.push(cum.last().copied().unwrap_or(0.0) + p / total);
        }
        Ok(Self { edges, cum })
    }
}

impl Continuous for Histogram {
    fn family(&self) -> &'static str {
        "histogram"
    }
    fn cdf(&self, x: f64) -> f64 {
        let n = self.edges.len();
        if x <= self.edges[0] {
            return 0.0;
        }
        if x >= self.edges[n - 1] {
            return 1.0;
        }
        let k = self.edges.partition_point(|e| *e <= x) - 1;
        let t = (x - self.edges[k]) / (self.edges[k + 1] - self.edges[k]);
        self.cum[k] + t * (self.cum[k + 1] - self.cum[k])
    }
    fn pdf(&self, x: f64) -> f64 {
        let n = self.edges.len();
        if x < self.edges[0] || x >= self.edges[n - 1] {
            return 0.0;
        }
        let k = self.edges.partition_point(|e| *e <= x) - 1;
        (self.cum[k + 1] - self.cum[k]) / (self.edges[k + 1] - self.edges[k])
    }
    fn quantile(&self, p: f64) -> f64 {
        let p = p.clamp(0.0, 1.0);
        // First bin whose cumulative probability reaches p, skipping empty bins.
        let k = self
            .cum
            .partition_point(|c| *c < p)
            .clamp(1, self.cum.len() - 1)
            - 1;
        let (c0, c1) = (self.cum[k], self.cum[k + 1]);
        if c1 <= c0 {
            return self.edges[k];
        }
        self.edges[k] + (p - c0) / (c1 - c0) * (self.edges[k + 1] - self.edges[k])
    }
    fn support(&self) -> (f64, f64) {
        (self.edges[0], self.edges[self.edges.len() - 1])
    }
    fn mean(&self) -> Option<f64> {
        Some(
            (0..self.edges.len() - 1)
                .map(|k| {
                    (self.cum[k + 1] - self.cum[k]) * 0.5 * (self.edges[k] + self.edges[k + 1])
                })
                .sum(),
        )
    }
    fn variance(&self) -> Option<f64> {
        let m = self.mean()?;
        Some(
            (0..self.edges.len() - 1)
                .map(|k| {
                    let (a, b) = (self.edges[k], self.edges[k + 1]);
                    let w = self.cum[k + 1] - self.cum[k];
                    // E[X²] of a uniform on [a, b] is (a² + ab + b²)/3.
                    w * (a * a + a * b + b * b) / 3.0
                })
                .sum::<f64>()
                - m * m,
        )
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        Vec::new()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn piecewise_linear_cdf() {
        let h = Histogram::new(vec![0.0, 1.0, 3.0], vec![0.25, 0.75]).unwrap();
        assert!((h.cdf(0.5) - 0.125).abs() < 1e-15);
        assert!((h.cdf(2.0) - 0.625).abs() < 1e-15);
        assert!((h.quantile(0.625) - 2.0).abs() < 1e-12);
        crate::dist::invariants::check_cdf(&h);
        // Density integrates to 1 bin by bin.
        assert!((h.pdf(0.5) * 1.0 + h.pdf(2.0) * 2.0 - 1.0).abs() < 1e-15);
    }

    #[test]
    fn rejects_bad_histograms() {
        assert!(Histogram::new(vec![0.0, 1.0], vec![0.5]).is_err());
        assert!(Histogram::new(vec![0.0, 2.0, 1.0], vec![0.5, 0.5]).is_err());
        assert!(Histogram::new(vec![0.0, 1.0, 2.0], vec![-0.5, 1.5]).is_err());
    }
}

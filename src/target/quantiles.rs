//! Beliefs from elicited quantiles (x_i, p_i), i = 1..K ≥ 2.
//!
//! Two routes:
//! * **Interpolation** (default): a monotone cubic (Fritsch–Carlson) through the
//!   points (g(x_i), Φ⁻¹(p_i)), where g is the identity, log or logit according to
//!   the quantity's support, extended linearly beyond the outer quantiles. The
//!   result is a smooth CDF that passes exactly through every elicited quantile,
//!   has normal tails on the g-scale and never leaves the support; with two
//!   quantiles it is exactly a normal, log-normal or logit-normal.
//! * **A fitted family**: the family's parameters minimise Σ (F(x_i) − p_i)² (on the
//!   log scale for positive parameters), by Nelder–Mead from starts the family
//!   declares for each parameter (`dist::params`: domain and start hint).

use crate::dist::{Continuous, Support};
use crate::numerics::{
    hermite_eval, logistic, logit, norm_cdf, norm_pdf, norm_quantile, pchip_slopes,
};

/// The scale on which a quantity's beliefs are interpolated (and widened).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Scale {
    Identity,
    Log,
    Logit,
}

impl Scale {
    pub fn for_support(s: Support) -> Self {
        match s {
            Support::Positive => Scale::Log,
            Support::Unit => Scale::Logit,
            _ => Scale::Identity,
        }
    }
    #[inline]
    pub fn to(&self, x: f64) -> f64 {
        match self {
            Scale::Identity => x,
            Scale::Log => x.ln(),
            Scale::Logit => logit(x),
        }
    }
    #[inline]
    pub fn from(&self, y: f64) -> f64 {
        match self {
            Scale::Identity => y,
            Scale::Log => y.exp(),
            Scale::Logit => logistic(y),
        }
    }
    /// dy/dx
    #[inline]
    fn jac(&self, x: f64) -> f64 {
        match self {
            Scale::Identity => 1.0,
            Scale::Log => 1.0 / x,
            Scale::Logit => 1.0 / (x * (1.0 - x)),
        }
    }
    pub fn domain(&self) -> (f64, f64) {
        match self {
            Scale::Identity => (f64::NEG_INFINITY, f64::INFINITY),
            Scale::Log => (0.0, f64::INFINITY),
            Scale::Logit => (0.0, 1.0),
        }
    }
}

/// Validate elicited quantiles: at least two, probabilities strictly inside
/// (0, 1) and increasing, values strictly increasing, finite and inside the scale's
/// domain. Returns them sorted by probability.
pub fn validate(mut pts: Vec<(f64, f64)>, scale: Scale) -> Result<Vec<(f64, f64)>, String> {
    if pts.len() < 2 {
        return Err(format!("need at least two quantiles, got {}", pts.len()));
    }
    for (p, x) in &pts {
        if !(p.is_finite() && *p > 0.0 && *p < 1.0) {
            return Err(format!("probability {p} must lie strictly between 0 and 1"));
        }
        if !x.is_finite() {
            return Err(format!("quantile value {x} (at p = {p}) must be finite"));
        }
        let (lo, hi) = scale.domain();
        if *x <= lo || *x >= hi {
            return Err(format!(
                "quantile value {x} (at p = {p}) lies outside the quantity's range ({lo}, {hi})"
            ));
        }
    }
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    for w in pts.windows(2) {
        if w[1].0 == w[0].0 {
            return Err(format!("probability {} is given twice", w[0].0));
        }
        if w[1].1 <= w[0].1 {
            return Err(format!(
                "quantiles must increase: the {}-quantile {} is not above the {}-quantile {}",
                w[1].0, w[1].1, w[0].0, w[0].1
            ));
        }
    }
    Ok(pts)
}

/// Monotone interpolation through elicited quantiles (see the module docs).
#[derive(Debug, Clone)]
pub struct QuantileSpline {
    scale: Scale,
    y: Vec<f64>,
    z: Vec<f64>,
    m: Vec<f64>,
}

impl QuantileSpline {
    /// `pts` as (probability, value), already validated.
    pub fn new(pts: &[(f64, f64)], scale: Scale) -> Self {
        let y: Vec<f64> = pts.iter().map(|(_, x)| scale.to(*x)).collect();
        let z: Vec<f64> = pts.iter().map(|(p, _)| norm_quantile(*p)).collect();
        let m = pchip_slopes(&y, &z);
        Self { scale, y, z, m }
    }

    /// z(y) = Φ⁻¹(F) on the g-scale, linear beyond the ends with the end slopes.
    fn zy(&self, y: f64) -> f64 {
        let n = self.y.len();
        if y <= self.y[0] {
            self.z[0] + self.end_slope(0) * (y - self.y[0])
        } else if y >= self.y[n - 1] {
            self.z[n - 1] + self.end_slope(n - 1) * (y - self.y[n - 1])
        } else {
            hermite_eval(&self.y, &self.z, &self.m, y)
        }
    }

    /// dz/dy
    fn dzy(&self, y: f64) -> f64 {
        let n = self.y.len();
        if y <= self.y[0] {
            return self.end_slope(0);
        }
        if y >= self.y[n - 1] {
            return self.end_slope(n - 1);
        }
        let h = 1e-6 * (self.y[n - 1] - self.y[0]);
        (hermite_eval(&self.y, &self.z, &self.m, (y + h).min(self.y[n - 1]))
            - hermite_eval(&self.y, &self.z, &self.m, (y - h).max(self.y[0])))
            / (2.0 * h)
    }

    /// Tails continue with the slope of the outer secant (always > 0), so the
    /// extension is a normal tail on the g-scale.
    fn end_slope(&self, i: usize) -> f64 {
        let n = self.y.len();
        let s = if i == 0 {
            (self.z[1] - self.z[0]) / (self.y[1] - self.y[0])
        } else {
            (self.z[n - 1] - self.z[n - 2]) / (self.y[n - 1] - self.y[n - 2])
        };
        s.max(1e-12)
    }
}

impl Continuous for QuantileSpline {
    fn family(&self) -> &'static str {
        "quantile-interpolation"
    }
    fn cdf(&self, x: f64) -> f64 {
        let (lo, hi) = self.scale.domain();
        if x <= lo {
            return 0.0;
        }
        if x >= hi {
            return 1.0;
        }
        norm_cdf(self.zy(self.scale.to(x)))
    }
    fn pdf(&self, x: f64) -> f64 {
        let (lo, hi) = self.scale.domain();
        if x <= lo || x >= hi {
            return 0.0;
        }
        let y = self.scale.to(x);
        norm_pdf(self.zy(y)) * self.dzy(y) * self.scale.jac(x)
    }
    fn quantile(&self, p: f64) -> f64 {
        if p <= 0.0 {
            return self.scale.domain().0;
        }
        if p >= 1.0 {
            return self.scale.domain().1;
        }
        let z = norm_quantile(p);
        let n = self.y.len();
        let y = if z <= self.z[0] {
            self.y[0] + (z - self.z[0]) / self.end_slope(0)
        } else if z >= self.z[n - 1] {
            self.y[n - 1] + (z - self.z[n - 1]) / self.end_slope(n - 1)
        } else {
            let k = self.z.partition_point(|v| *v <= z).clamp(1, n - 1) - 1;
            crate::numerics::brent_root(
                |y| hermite_eval(&self.y, &self.z, &self.m, y) - z,
                self.y[k],
                self.y[k + 1],
                1e-13 * (1.0 + self.y[k].abs()),
            )
            .unwrap_or(self.y[k])
        };
        self.scale.from(y)
    }
    fn support(&self) -> (f64, f64) {
        self.scale.domain()
    }
    fn mean(&self) -> Option<f64> {
        // E[X] = ∫₀¹ Q(p) dp by Gauss–Legendre on the probit scale.
        Some(crate::numerics::integrate(
            |z| self.quantile(norm_cdf(z)) * norm_pdf(z),
            -8.0,
            8.0,
            32,
            8,
        ))
    }
    fn variance(&self) -> Option<f64> {
        let m = self.mean()?;
        Some(crate::numerics::integrate(
            |z| (self.quantile(norm_cdf(z)) - m).powi(2) * norm_pdf(z),
            -8.0,
            8.0,
            32,
            8,
        ))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        Vec::new()
    }
}

/// Fit a registered family to elicited quantiles by least squares on the CDF.
/// Returns the fitted distribution and the largest |F(x_i) − p_i|.
pub fn fit_family(
    info: &'static crate::dist::FamilyInfo,
    pts: &[(f64, f64)],
) -> Result<(Box<dyn Continuous>, f64), String> {
    use crate::numerics::simplex::minimise;
    // Each parameter moves on its domain's working scale (log for positive ones)
    // and starts where the family's hint puts it, from the elicited middle and
    // spread; the offsets give a handful of deterministic starts.
    let to_params = |v: &[f64]| -> Vec<f64> {
        v.iter()
            .zip(info.specs)
            .map(|(x, spec)| spec.domain.from_working(*x))
            .collect()
    };
    let loss = |v: &[f64]| -> f64 {
        match (info.build)(&to_params(v)) {
            Ok(d) => pts.iter().map(|(p, x)| (d.cdf(*x) - p).powi(2)).sum(),
            Err(_) => f64::INFINITY,
        }
    };
    let elicited = crate::dist::params::Elicited::new(pts);
    let mut best: Option<(Vec<f64>, f64)> = None;
    let starts: Vec<Vec<f64>> = [0.0, 1.0, -1.0, 2.0, -2.0]
        .iter()
        .map(|s| {
            info.specs
                .iter()
                .map(|spec| spec.start.working(&elicited, *s))
                .collect()
        })
        .collect();
    for s in starts {
        if !loss(&s).is_finite() {
            continue;
        }
        let (x, f) = minimise(&loss, &s, 0.5, 4000, 1e-16);
        if best.as_ref().is_none_or(|b| f < b.1) {
            best = Some((x, f));
        }
    }
    let (x, _) =
        best.ok_or_else(|| format!("could not fit family `{}` to the quantiles", info.name))?;
    let d = (info.build)(&to_params(&x)).map_err(|e| e.to_string())?;
    let worst = pts
        .iter()
        .map(|(p, q)| (d.cdf(*q) - p).abs())
        .fold(0.0, f64::max);
    Ok((d, worst))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn passes_through_quantiles_and_stays_in_support() {
        let pts = validate(vec![(0.1, 0.15), (0.5, 0.25), (0.9, 0.40)], Scale::Logit).unwrap();
        let s = QuantileSpline::new(&pts, Scale::Logit);
        for (p, x) in &pts {
            assert!((s.cdf(*x) - p).abs() < 1e-12);
            assert!((s.quantile(*p) - x).abs() < 1e-9);
        }
        assert!(s.quantile(1e-9) > 0.0 && s.quantile(1.0 - 1e-9) < 1.0);
        crate::dist::invariants::check(&s);
    }

    #[test]
    fn two_quantiles_give_lognormal() {
        // With two quantiles on the log scale the interpolant is exactly log-normal:
        // median 10, 0.9-quantile 10·e^(1.2815516·0.5) (scipy 1.17 norm.ppf(0.9) =
        // 1.2815515655446004).
        let q90 = 10.0 * (1.2815515655446004f64 * 0.5).exp();
        let pts = validate(vec![(0.5, 10.0), (0.9, q90)], Scale::Log).unwrap();
        let s = QuantileSpline::new(&pts, Scale::Log);
        let ln = crate::dist::lognormal::LogNormal::new(10f64.ln(), 0.5).unwrap();
        for x in [2.0, 7.0, 10.0, 19.0, 40.0] {
            assert!((s.cdf(x) - ln.cdf(x)).abs() < 1e-12);
        }
    }

    #[test]
    fn rejects_bad_quantiles() {
        assert!(validate(vec![(0.5, 1.0)], Scale::Identity).is_err());
        assert!(validate(vec![(0.1, 2.0), (0.9, 1.0)], Scale::Identity).is_err());
        assert!(validate(vec![(0.0, 1.0), (0.9, 2.0)], Scale::Identity).is_err());
        assert!(validate(vec![(0.1, -1.0), (0.9, 2.0)], Scale::Log).is_err());
    }

    #[test]
    fn fitted_beta_recovers_parameters() {
        // Quantiles of Beta(2, 3) from scipy 1.17.1 (`stats.beta(2, 3).ppf`, rounded
        // to 7 decimals): the fitted beta reproduces them.
        let info = crate::dist::family("beta").unwrap();
        let pts = [(0.05, 0.0976115), (0.5, 0.3857276), (0.95, 0.7513954)];
        let (d, worst) = fit_family(info, &pts).unwrap();
        assert!(worst < 1e-6, "{worst}");
        let p = d.params();
        assert!(
            (p[0].1 - 2.0).abs() < 1e-3 && (p[1].1 - 3.0).abs() < 1e-3,
            "{p:?}"
        );
    }
}

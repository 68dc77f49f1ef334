//! A belief made narrower or wider about its median, for sensitivity analysis.
//!
//! On the working scale g of the quantity (identity, log or logit; see
//! [`Scale::for_support`]) the continuous part is stretched by a factor w about
//! m = g(median of the continuous part):
//!
//! F_w(x) = F(g⁻¹(m + (g(x) − m)/w)),  Q_w(p) = g⁻¹(m + w·(g(Q(p)) − m)),
//!
//! so every quantile's distance from the median on the g-scale is multiplied by
//! w, the median is kept, and a normal (log-normal, logit-normal) belief stays in
//! its family with its sd (sdlog, logit sd) multiplied by w. The density follows
//! from the chain rule, f_w(x) = f(x')·g'(x) / (w·g'(x')) with x' the pre-image
//! above. Atoms are not touched: [`widen`] rescales only the continuous part of a
//! [`Mixed`] belief and keeps every atom's location and mass.

use super::quantiles::Scale;
use crate::dist::{Continuous, Dist, Mixed};
use crate::numerics::{norm_cdf, norm_pdf};
use std::sync::Arc;

/// The continuous part of a belief, widened by `w` about its median on `scale`.
#[derive(Debug, Clone)]
pub struct Widened {
    inner: Dist,
    scale: Scale,
    /// g(median of `inner`).
    m: f64,
    w: f64,
}

/// dy/dx of the working scale.
fn jac(scale: Scale, x: f64) -> f64 {
    match scale {
        Scale::Identity => 1.0,
        Scale::Log => 1.0 / x,
        Scale::Logit => 1.0 / (x * (1.0 - x)),
    }
}

impl Widened {
    /// `w` must be finite and > 0 (checked by the caller's input validation;
    /// returns an error message otherwise).
    pub fn new(inner: Dist, scale: Scale, w: f64) -> Result<Self, String> {
        if !(w.is_finite() && w > 0.0) {
            return Err(format!("width factor {w} must be finite and > 0"));
        }
        let med = inner.quantile(0.5);
        let m = scale.to(med);
        if !m.is_finite() {
            return Err(format!(
                "the belief's median {med} has no finite value on the {scale:?} scale"
            ));
        }
        Ok(Self { inner, scale, m, w })
    }

    /// The pre-image x' = g⁻¹(m + (g(x) − m)/w).
    #[inline]
    fn back(&self, x: f64) -> f64 {
        self.scale
            .from(self.m + (self.scale.to(x) - self.m) / self.w)
    }

    /// The image of an inner value: g⁻¹(m + w·(g(x) − m)).
    #[inline]
    fn forth(&self, x: f64) -> f64 {
        let y = self.scale.to(x);
        if y.is_infinite() {
            return x;
        }
        self.scale.from(self.m + self.w * (y - self.m))
    }

    fn in_domain(&self, x: f64) -> Option<f64> {
        let (lo, hi) = self.scale.domain();
        if x <= lo {
            Some(0.0)
        } else if x >= hi {
            Some(1.0)
        } else {
            None
        }
    }
}

impl Continuous for Widened {
    fn family(&self) -> &'static str {
        "widened"
    }
    fn cdf(&self, x: f64) -> f64 {
        if let Some(v) = self.in_domain(x) {
            return v;
        }
        self.inner.cdf(self.back(x))
    }
    fn sf(&self, x: f64) -> f64 {
        if let Some(v) = self.in_domain(x) {
            return 1.0 - v;
        }
        self.inner.sf(self.back(x))
    }
    fn pdf(&self, x: f64) -> f64 {
        if self.in_domain(x).is_some() {
            return 0.0;
        }
        let xb = self.back(x);
        let jb = jac(self.scale, xb);
        if !(jb.is_finite() && jb > 0.0) {
            return 0.0;
        }
        self.inner.pdf(xb) * jac(self.scale, x) / (self.w * jb)
    }
    fn quantile(&self, p: f64) -> f64 {
        self.forth(self.inner.quantile(p))
    }
    fn support(&self) -> (f64, f64) {
        let (lo, hi) = self.inner.support();
        (self.forth(lo), self.forth(hi))
    }
    fn mean(&self) -> Option<f64> {
        // E[X] = ∫ Q(Φ(z)) φ(z) dz, Gauss–Legendre on the probit scale (as for
        // interpolated quantiles).
        let v = crate::numerics::integrate(
            |z| self.quantile(norm_cdf(z)) * norm_pdf(z),
            -8.0,
            8.0,
            32,
            8,
        );
        v.is_finite().then_some(v)
    }
    fn variance(&self) -> Option<f64> {
        let m = self.mean()?;
        let v = crate::numerics::integrate(
            |z| (self.quantile(norm_cdf(z)) - m).powi(2) * norm_pdf(z),
            -8.0,
            8.0,
            32,
            8,
        );
        v.is_finite().then_some(v)
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("width", self.w)]
    }
}

/// Widen a belief's continuous part by `w` on `scale`, atoms unchanged. Width 1
/// returns the belief itself (an identical clone, not a wrapper).
pub fn widen(dist: &Mixed, scale: Scale, w: f64) -> Result<Mixed, String> {
    if w == 1.0 {
        return Ok(dist.clone());
    }
    let cont: Option<Dist> = match &dist.cont {
        Some(c) => Some(Arc::new(Widened::new(c.clone(), scale, w)?)),
        None => None,
    };
    Mixed::new(dist.atoms.clone(), cont)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::dist::{beta::Beta, lognormal::LogNormal, normal::Normal, Atom};

    #[test]
    fn lognormal_stays_lognormal_with_scaled_sdlog() {
        // Widening log-normal(μ, σ) by w on the log scale gives log-normal(μ, wσ)
        // exactly (the module's formula; both sides from our own code).
        let w = 1.7;
        let d = Widened::new(Arc::new(LogNormal::new(3.0, 0.4).unwrap()), Scale::Log, w).unwrap();
        let want = LogNormal::new(3.0, 0.4 * w).unwrap();
        for x in [2.0, 10.0, 20.1, 40.0, 150.0] {
            assert!((d.cdf(x) - want.cdf(x)).abs() < 1e-13, "x {x}");
            assert!((d.pdf(x) - want.pdf(x)).abs() < 1e-12 * (1.0 + want.pdf(x)));
        }
        for p in [0.01, 0.3, 0.5, 0.9] {
            assert!((d.quantile(p) - want.quantile(p)).abs() < 1e-9 * want.quantile(p));
        }
        crate::dist::invariants::check(&d);
    }

    #[test]
    fn normal_sd_scales_on_identity() {
        let d = Widened::new(
            Arc::new(Normal::new(-1.0, 2.0).unwrap()),
            Scale::Identity,
            0.5,
        )
        .unwrap();
        let want = Normal::new(-1.0, 1.0).unwrap();
        for x in [-4.0, -1.0, 0.3, 2.0] {
            assert!((d.cdf(x) - want.cdf(x)).abs() < 1e-14);
        }
        crate::dist::invariants::check(&d);
    }

    #[test]
    fn beta_widened_on_logit_keeps_median_and_support() {
        let b = Beta::new(12.0, 18.0).unwrap();
        let med = b.quantile(0.5);
        for w in [0.5, 2.0] {
            let d =
                Widened::new(Arc::new(Beta::new(12.0, 18.0).unwrap()), Scale::Logit, w).unwrap();
            assert!((d.quantile(0.5) - med).abs() < 1e-12);
            assert_eq!(d.support(), (0.0, 1.0));
            // The logit distance of the 0.9-quantile from the median scales by w.
            let g = |x: f64| crate::numerics::logit(x);
            let r = (g(d.quantile(0.9)) - g(med)) / (g(b.quantile(0.9)) - g(med));
            assert!((r - w).abs() < 1e-9, "{r}");
            crate::dist::invariants::check(&d);
        }
    }

    #[test]
    fn atoms_are_kept_and_width_one_is_identity() {
        let m = Mixed::new(
            vec![Atom {
                at: f64::INFINITY,
                mass: 0.05,
            }],
            Some(Arc::new(LogNormal::new(3.0, 0.4).unwrap())),
        )
        .unwrap();
        let w = widen(&m, Scale::Log, 2.0).unwrap();
        assert_eq!(w.atoms, m.atoms);
        assert_eq!(w.cont.as_ref().unwrap().family(), "widened");
        // The continuous part's median is kept, so F(median) is unchanged.
        let med = 3f64.exp();
        assert!((w.cdf(med) - m.cdf(med)).abs() < 1e-14);
        let same = widen(&m, Scale::Log, 1.0).unwrap();
        assert_eq!(same.cont.as_ref().unwrap().family(), "lognormal");
        assert!(Widened::new(m.cont.clone().unwrap(), Scale::Log, 0.0).is_err());
    }
}

//! Latency distributions shared by the survival templates: the survival of the
//! uncured in a mixture cure, the promotion-time distribution F = 1 − S_u in a
//! promotion-time cure, the event-time distribution of parametric survival.
//!
//! Each has a scale λ (log scale ls = ln λ, in the template's time unit) and a
//! shape k; everything is a function of z = k·(ln t − ln λ):
//! * weibull:      S_u(t) = exp(−(t/λ)^k),        H_u(t) = (t/λ)^k = e^z
//! * exponential:  the Weibull with k = 1
//! * lognormal:    S_u(t) = 1 − Φ(z)  (meanlog ln λ, sdlog 1/k)
//! * loglogistic:  S_u(t) = 1/(1 + (t/λ)^k),      H_u(t) = ln(1 + e^z)
//!
//! H_u = −ln S_u is the cumulative hazard. Weibull and exponential latencies are
//! proportional-hazards families: shifting ln λ by −β/k multiplies the hazard by
//! e^β at every t (Collett, Modelling Survival Data in Medical Research, 3rd ed.,
//! §5.6: the Weibull is the one family that is both PH and AFT). Tails are
//! computed on the log scale ([`Latency::ln_cum_hazard`], [`Latency::ln_cdf`]) so
//! that hazard ratios stay finite where S_u rounds to 1.

use crate::numerics::{gamma_p, ln_gamma, norm_cdf, norm_quantile};

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Latency {
    Weibull,
    Exponential,
    LogNormal,
    LogLogistic,
}

/// The `[model] latency` names, in the order of [`Latency::from_name`].
pub const LATENCIES: [&str; 4] = ["weibull", "exponential", "lognormal", "loglogistic"];

/// ln(−ln ½): w(½) of the Weibull (the other latencies have w(½) = 0).
pub const LN_LN2: f64 = -0.366_512_920_581_664_3;

/// ln Φ(x), accurate far into the lower tail (for x < −30 the asymptotic series
/// ln φ(x) − ln(−x) + ln(1 − x⁻² + 3x⁻⁴ − 15x⁻⁶); Abramowitz & Stegun 26.2.12).
pub fn ln_norm_cdf(x: f64) -> f64 {
    if x > -30.0 {
        norm_cdf(x).ln()
    } else {
        let x2 = x * x;
        -0.5 * x2 - (-x).ln() - 0.918_938_533_204_672_8
            + (1.0 - 1.0 / x2 + 3.0 / (x2 * x2) - 15.0 / (x2 * x2 * x2)).ln()
    }
}

/// ln(1 + e^z) without overflow.
fn softplus(z: f64) -> f64 {
    if z > 30.0 {
        z + (-z).exp().ln_1p()
    } else {
        z.exp().ln_1p()
    }
}

impl Latency {
    pub fn from_name(name: &str) -> Option<Latency> {
        Some(match name {
            "weibull" => Latency::Weibull,
            "exponential" => Latency::Exponential,
            "lognormal" => Latency::LogNormal,
            "loglogistic" => Latency::LogLogistic,
            _ => return None,
        })
    }

    /// Whether a change of ln λ multiplies the hazard by a constant (Weibull,
    /// exponential): the family is closed under proportional hazards.
    pub fn is_ph(&self) -> bool {
        matches!(self, Latency::Weibull | Latency::Exponential)
    }

    /// S_u(t) for log-scale ls = ln λ and shape k. Everything is computed from
    /// z = k·(ln t − ln λ): one exp or erfc per call, no `powf`.
    #[inline]
    pub fn surv(&self, t: f64, ls: f64, k: f64) -> f64 {
        if t <= 0.0 {
            return 1.0;
        }
        self.surv_log(t.ln(), ls, k)
    }

    /// S_u at ln t (hoists the logarithm out of loops over draws).
    #[inline]
    pub fn surv_log(&self, lt: f64, ls: f64, k: f64) -> f64 {
        let z = k * (lt - ls);
        match self {
            Latency::Weibull | Latency::Exponential => (-z.exp()).exp(),
            Latency::LogNormal => norm_cdf(-z),
            Latency::LogLogistic => 1.0 / (1.0 + z.exp()),
        }
    }

    /// F_u = 1 − S_u at ln t, without cancellation when S_u is close to 1.
    #[inline]
    pub fn cdf_log(&self, lt: f64, ls: f64, k: f64) -> f64 {
        let z = k * (lt - ls);
        match self {
            Latency::Weibull | Latency::Exponential => -(-z.exp()).exp_m1(),
            Latency::LogNormal => norm_cdf(z),
            Latency::LogLogistic => 1.0 / (1.0 + (-z).exp()),
        }
    }

    /// ln F_u at ln t (finite where F_u underflows).
    pub fn ln_cdf(&self, lt: f64, ls: f64, k: f64) -> f64 {
        let z = k * (lt - ls);
        match self {
            Latency::Weibull | Latency::Exponential => {
                if z < -20.0 {
                    // ln(1 − e^{−x}) = ln x − x/2 + O(x²), x = e^z.
                    z - 0.5 * z.exp()
                } else {
                    (-(-z.exp()).exp_m1()).ln()
                }
            }
            Latency::LogNormal => ln_norm_cdf(z),
            Latency::LogLogistic => -softplus(-z),
        }
    }

    /// ln H_u(t) = ln(−ln S_u) at ln t: the log cumulative hazard.
    pub fn ln_cum_hazard(&self, lt: f64, ls: f64, k: f64) -> f64 {
        let z = k * (lt - ls);
        match self {
            Latency::Weibull | Latency::Exponential => z,
            Latency::LogLogistic => {
                if z < -30.0 {
                    z - 0.5 * z.exp()
                } else {
                    softplus(z).ln()
                }
            }
            Latency::LogNormal => {
                if z < -5.0 {
                    let p = norm_cdf(z);
                    if p > 1e-300 {
                        (-(-p).ln_1p()).ln()
                    } else {
                        ln_norm_cdf(z)
                    }
                } else {
                    (-ln_norm_cdf(-z)).ln()
                }
            }
        }
    }

    /// ln of the time at which S_u falls to s ∈ (0, 1): ln λ + w(s)/k with
    /// w = ln(−ln s) (Weibull), Φ⁻¹(1 − s) (log-normal), ln((1 − s)/s) (log-logistic).
    #[inline]
    pub fn log_surv_inv(&self, s: f64, ls: f64, k: f64) -> f64 {
        let w = match self {
            Latency::Weibull | Latency::Exponential => (-s.ln()).ln(),
            Latency::LogNormal => norm_quantile(1.0 - s),
            Latency::LogLogistic => ((1.0 - s) / s).ln(),
        };
        ls + w / k
    }

    /// The time at which S_u falls to s.
    #[inline]
    pub fn surv_inv(&self, s: f64, ls: f64, k: f64) -> f64 {
        self.log_surv_inv(s, ls, k).exp()
    }

    /// The median of the latency: λ(ln 2)^(1/k) (Weibull), λ otherwise.
    #[inline]
    pub fn median(&self, ls: f64, k: f64) -> f64 {
        match self {
            Latency::Weibull | Latency::Exponential => (ls + LN_LN2 / k).exp(),
            _ => ls.exp(),
        }
    }

    /// ∫₀ʰ S_u(t) dt.
    ///
    /// Weibull: λΓ(1 + 1/k)P(1/k, x) with x = (h/λ)^k (exponential: k = 1). When
    /// x < 1e-10 the leading terms of the series, h(1 − x/(k + 1)), are used
    /// instead: the closed form is then 0·∞ for huge λ (ln λ > 709) or a vanishing
    /// regularised gamma. The result is kept in [0, h] (0 ≤ S_u ≤ 1).
    pub fn integral(&self, h: f64, ls: f64, k: f64, gl: &(Vec<f64>, Vec<f64>)) -> f64 {
        let lambda = ls.exp();
        let v = match self {
            Latency::Exponential | Latency::Weibull => {
                let k = if *self == Latency::Exponential {
                    1.0
                } else {
                    k
                };
                let x = (k * (h.ln() - ls)).exp();
                if x < 1e-10 {
                    h * (1.0 - x / (k + 1.0))
                } else if *self == Latency::Exponential {
                    lambda * -(-h / lambda).exp_m1()
                } else {
                    let a = 1.0 / k;
                    lambda * ln_gamma(1.0 + a).exp() * gamma_p(a, x)
                }
            }
            _ => gauss(h, gl, |t| self.surv(t, ls, k)),
        };
        if v.is_nan() {
            // Should the closed form still be undefined (a degenerate shape draw,
            // k = 0 or ∞), integrate S_u by Gauss–Legendre instead.
            gauss(h, gl, |t| self.surv(t, ls, k))
        } else {
            v.clamp(0.0, h)
        }
    }
}

/// ∫₀ʰ f by the Gauss–Legendre rule `gl` (nodes and weights on [−1, 1]).
#[inline]
pub fn gauss(h: f64, gl: &(Vec<f64>, Vec<f64>), f: impl Fn(f64) -> f64) -> f64 {
    let (x, w) = gl;
    let mut s = 0.0;
    for (xi, wi) in x.iter().zip(w) {
        s += wi * f(0.5 * h * (xi + 1.0));
    }
    0.5 * h * s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rmst_integral_is_finite_for_tiny_horizons_and_huge_scales() {
        // Found by tests/numerical_robustness.rs: Weibull with k ≈ 600, ln λ ≈ 16 and
        // h = 1e-6 gave NaN (x = (h/λ)^k underflows to 0); exponential with
        // ln λ > 709 gave ∞·0. S_u ≈ 1 on [0, h] there, so the integral is h.
        let gl = crate::numerics::gauss_legendre(32);
        let v = Latency::Weibull.integral(1e-6, 16.278815618849784, 600.0, &gl);
        assert!((v - 1e-6).abs() <= 1e-21, "{v}");
        let v = Latency::Exponential.integral(36.0, 800.0, 1.0, &gl);
        assert_eq!(v, 36.0);
        for lat in [Latency::Weibull, Latency::LogNormal, Latency::LogLogistic] {
            for (h, ls, k) in [(1e6, -5.0, 50.0), (1e-6, 14.0, 0.05), (1e6, 14.0, 1e-300)] {
                let v = lat.integral(h, ls, k, &gl);
                assert!(
                    v.is_finite() && (0.0..=h).contains(&v),
                    "{lat:?} {h} {ls} {k}: {v}"
                );
            }
        }
        // Both sides of the series switch at x = 1e-10 (λ = 1, k = 2, h = √x) agree with
        // Γ(1.5)·P(0.5, x) from scipy 1.17 (gamma, gammainc).
        for (x, want) in [
            (5e-11, 7.071067811747631e-06),
            (2e-10, 1.4142135622788148e-05),
        ] {
            let v = Latency::Weibull.integral(f64::sqrt(x), 0.0, 2.0, &gl);
            assert!((v - want).abs() < 1e-14 * want, "{x}: {v} vs {want}");
        }
    }

    #[test]
    fn latency_medians_and_integrals() {
        // Weibull median λ(ln 2)^(1/k): k = 1.5, λ = 2 → 1.56644 (closed form;
        // Klein & Moeschberger, Survival Analysis, §2.5).
        assert!((Latency::Weibull.surv_inv(0.5, 2f64.ln(), 1.5) - 1.56644).abs() < 5e-6);
        // Log-logistic and log-normal medians equal the scale.
        assert!((Latency::LogLogistic.surv_inv(0.5, 7f64.ln(), 2.3) - 7.0).abs() < 1e-12);
        assert!((Latency::LogNormal.surv_inv(0.5, 7f64.ln(), 2.3) - 7.0).abs() < 1e-12);
        assert!(
            (Latency::Weibull.surv_inv(0.5, 2f64.ln(), 1.5)
                - Latency::Weibull.median(2f64.ln(), 1.5))
            .abs()
                < 1e-12
        );
        // ∫₀ʰ S_u: closed forms against composite quadrature.
        let gl = crate::numerics::gauss_legendre(32);
        for lat in [
            Latency::Weibull,
            Latency::Exponential,
            Latency::LogNormal,
            Latency::LogLogistic,
        ] {
            let (h, lam) = (30.0, 12.0);
            let k = if lat == Latency::Exponential {
                1.0
            } else {
                1.4
            };
            let q = crate::numerics::integrate(|t| lat.surv(t, lam, k), 0.0, h, 200, 8);
            assert!(
                (lat.integral(h, lam, k, &gl) - q).abs() < 1e-6 * q,
                "{lat:?}"
            );
        }
    }

    #[test]
    fn log_tails_agree_with_direct_forms_and_stay_finite() {
        // Recomputed with our own direct forms where they are accurate.
        for lat in [
            Latency::Weibull,
            Latency::Exponential,
            Latency::LogNormal,
            Latency::LogLogistic,
        ] {
            for lt in [-3.0, -0.5, 0.0, 0.7, 2.0] {
                let (ls, k) = (0.3, 1.3);
                let s = lat.surv_log(lt, ls, k);
                let f = lat.cdf_log(lt, ls, k);
                assert!((s + f - 1.0).abs() < 1e-14, "{lat:?}");
                assert!(
                    (lat.ln_cdf(lt, ls, k) - f.ln()).abs() < 1e-10,
                    "{lat:?} {lt}"
                );
                assert!(
                    (lat.ln_cum_hazard(lt, ls, k) - (-s.ln()).ln()).abs() < 1e-9,
                    "{lat:?} {lt}"
                );
            }
            // Far in the lower tail S_u rounds to 1 but ln H_u is finite and near
            // ln F_u (H = F + O(F²)).
            let (a, b) = (
                lat.ln_cum_hazard(-60.0, 0.0, 1.5),
                lat.ln_cdf(-60.0, 0.0, 1.5),
            );
            assert!(a.is_finite() && (a - b).abs() < 1e-6, "{lat:?} {a} {b}");
        }
        // ln Φ(−40) = −804.608442013754 (mpmath 1.4.1: log(ncdf(-40)) at 30 digits).
        assert!((ln_norm_cdf(-40.0) + 804.608_442_013_754).abs() < 1e-9);
    }
}

//! Beta(alpha, beta) on (0, 1). Mean alpha/(alpha + beta). CDF from statrs 0.19
//! (regularised incomplete beta); quantile from its inverse, checked through the
//! CDF in the tail it lies in and polished by Newton steps on ln F in logit x
//! when it misses by more than a relative 1e-9 (statrs's inverse misses by
//! orders of magnitude in the lower tail for shapes below 1). Base: uniform.
//!
//! [`QuantileTable`]: the quantile at many uniforms at once (the regression
//! templates' R² and group shares: one Beta quantile per draw and evaluation),
//! by cubic Hermite interpolation of y = logit Q(u) in t = logit u on a uniform
//! grid, with the exact slope dy/dt = u(1 − u)/(x(1 − x) f(x)) =
//! exp(ln u + ln(1 − u) − α ln x − β ln(1 − x) + ln B(α, β)) at every node. In
//! these coordinates the quantile is linear in both tails (x ≈ (uαB)^{1/α} as
//! u → 0, so y ≈ t/α + const; likewise 1 − x with 1/β), so a fixed spacing
//! serves every shape. Nodes with t > 0 use the reflection Q_{α,β}(u) =
//! 1 − Q_{β,α}(1 − u), so 1 − x is accurate near 1. The error is checked each
//! time a table is built, at every interval's midpoint against the exact
//! quantile; above [`TABLE_TOL`] the table declines and the caller computes
//! each quantile exactly (cubic Hermite interpolation: error ≤ h⁴/384·max|y⁗|,
//! e.g. Burden & Faires, Numerical Analysis, 9th ed., 2011, Thm 3.9).

use super::forms::{Args, Forms, PymcForm, StanForm};
#[cfg(test)]
use super::invariants::Reference;
use super::params::{names, Param, Start};
use super::{computable, Base, Continuous, DistError, FamilyInfo, Support};
use statrs::distribution::{Continuous as _, ContinuousCDF};

#[derive(Debug, Clone)]
pub struct Beta {
    pub alpha: f64,
    pub beta: f64,
    inner: statrs::distribution::Beta,
}

impl Beta {
    pub fn new(alpha: f64, beta: f64) -> Result<Self, DistError> {
        let alpha = computable("beta", "alpha", alpha, RANGE, WHY)?;
        let beta = computable("beta", "beta", beta, RANGE, WHY)?;
        let inner = statrs::distribution::Beta::new(alpha, beta).map_err(|_| DistError {
            family: "beta",
            param: "alpha",
            value: alpha,
            reason: "rejected by statrs",
        })?;
        Ok(Self { alpha, beta, inner })
    }
}

/// Where α and β keep the CDF and quantile computable ([`computable`]).
const RANGE: (f64, f64) = (1e-4, 1e6);
const WHY: &str = "must lie in [1e-4, 1e6], where the beta CDF and quantile can be computed; \
outside it the distribution is a point mass to display precision (at 0 or 1 below 1e-4, an sd \
under 5e-4 above 1e6): state it as an atom (`atoms = [{ at = …, mass = … }]`) or use smaller α \
and β with the same mean";

const PARAMS: [Param; 2] = [
    Param::positive("alpha", Start::Offset),
    Param::positive("beta", Start::Offset),
];

pub const INFO: FamilyInfo = FamilyInfo {
    name: "beta",
    params: &names(PARAMS),
    specs: &PARAMS,
    base: Base::Uniform,
    support: Support::Unit,
    roles: &[],
    about: "beta on (0, 1) with shapes alpha and beta",
    build: |p| Ok(Box::new(Beta::new(p[0], p[1])?)),
    forms: Forms::written(stan, pymc),
    #[cfg(test)]
    reference: REFERENCE,
};

/// Stan (Stan Functions Reference; brms uses the same call): beta(alpha, beta) on a
/// <lower=0, upper=1> parameter.
fn stan(a: &Args) -> StanForm {
    StanForm::new("beta", vec![a.v(0), a.v(1)]).bounded(Some(0.0), Some(1.0))
}

/// PyMC 5 (`pymc.distributions.continuous`): Beta(alpha, beta).
fn pymc(a: &Args) -> PymcForm {
    PymcForm::new("Beta", vec![("alpha", a.v(0)), ("beta", a.v(1))])
}

#[cfg(test)]
const REFERENCE: Reference = Reference {
    source: "scipy 1.17.1: stats.beta(a=2, b=3)",
    params: &[2.0, 3.0],
    points: &[
        (0.05, 0.014018749999999998, 0.5415),
        (0.4, 0.5247999999999999, 1.7279999999999998),
        (0.9, 0.9963, 0.108),
    ],
    quantiles: &[
        (0.05, 0.09761146288641434),
        (0.5, 0.3857275681323895),
        (0.95, 0.7513953742698181),
    ],
    tol: 1e-12,
};

impl Continuous for Beta {
    fn family(&self) -> &'static str {
        "beta"
    }
    fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else if x >= 1.0 {
            1.0
        } else {
            self.inner.cdf(x)
        }
    }
    fn pdf(&self, x: f64) -> f64 {
        if x <= 0.0 || x >= 1.0 {
            0.0
        } else {
            self.inner.pdf(x)
        }
    }
    fn quantile(&self, p: f64) -> f64 {
        if !(0.0..=1.0).contains(&p) {
            return f64::NAN;
        }
        if p == 0.0 || p == 1.0 {
            return p;
        }
        let x = self.inner.inverse_cdf(p);
        // statrs's inverse, checked in the tail it lies in through the CDF
        // (1 − x is exact for x ≥ ½); polished by Newton steps when it misses.
        let (miss, tail) = if p <= 0.5 {
            (self.cdf(x) / p - 1.0, p)
        } else {
            let q = 1.0 - p;
            let up = statrs::function::beta::beta_reg(self.beta, self.alpha, 1.0 - x);
            (up / q - 1.0, q)
        };
        if miss.abs() <= QUANTILE_CHECK {
            return x;
        }
        self.polished_quantile(p <= 0.5, tail)
    }
    fn support(&self) -> (f64, f64) {
        (0.0, 1.0)
    }
    /// A prior's draws (one column of uniforms): through a [`QuantileTable`]
    /// over their range when one passes its check, exactly otherwise
    /// ([`logit_quantiles`]); a whole column at a time, so the draws do not
    /// depend on the thread count.
    fn fill_from_base(&self, base: &[f64], out: &mut [f64]) {
        let y = logit_quantiles(self, base);
        for (o, y) in out.iter_mut().zip(y) {
            *o = crate::numerics::logistic(y);
        }
    }
    fn mean(&self) -> Option<f64> {
        Some(self.alpha / (self.alpha + self.beta))
    }
    fn variance(&self) -> Option<f64> {
        let s = self.alpha + self.beta;
        Some(self.alpha * self.beta / (s * s * (s + 1.0)))
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("alpha", self.alpha), ("beta", self.beta)]
    }
}

/// Largest error of y = logit Q(u) a [`QuantileTable`] accepts at its check
/// points (relative error of x/(1 − x), e.g. of R2D2's W = R²/(1 − R²)).
pub const TABLE_TOL: f64 = 1e-7;
/// Node spacing of a [`QuantileTable`] in t = logit u.
const TABLE_STEP: f64 = 0.0625;
/// At most this many nodes (t over [−50, 50] needs 1,602).
const TABLE_MAX_NODES: usize = 2048;

/// The Beta quantile in logit coordinates, tabulated over a range of t = logit u
/// (module docs).
#[derive(Debug, Clone)]
pub struct QuantileTable {
    t0: f64,
    y: Vec<f64>,
    d: Vec<f64>,
    dist: Beta,
    flip: Beta,
    ln_b: f64,
}

/// Largest relative miss of F(Q(u)) = u (or of its upper tail) at which
/// statrs's inverse is taken as it is.
const QUANTILE_CHECK: f64 = 1e-9;

impl Beta {
    /// Q(u) by Newton steps on ln F ([`Beta::lower_logit`]): `lower` for u ≤ ½,
    /// `tail` the smaller of u and 1 − u. For shapes below 1 statrs 0.19's
    /// inverse misses by orders of magnitude in the lower tail (e.g. at α = β =
    /// 0.2, u = 1e−6; see the test `quantile_is_the_inverse_of_the_cdf_in_both_tails`).
    fn polished_quantile(&self, lower: bool, tail: f64) -> f64 {
        use crate::numerics::ln_gamma;
        let ln_b = ln_gamma(self.alpha) + ln_gamma(self.beta) - ln_gamma(self.alpha + self.beta);
        if lower {
            self.lower_logit(ln_b, tail.ln(), None).0.exp()
        } else {
            match Beta::new(self.beta, self.alpha) {
                Ok(flip) => flip.lower_logit(ln_b, tail.ln(), None).1.exp(),
                Err(_) => self.inner.inverse_cdf(1.0 - tail),
            }
        }
    }

    /// y = logit Q(u) and dy/dt at t = logit u (`flip` is Beta(β, α), `ln_b`
    /// ln B(α, β)).
    fn logit_quantile(&self, flip: &Beta, ln_b: f64, t: f64, start: Option<f64>) -> (f64, f64) {
        // ln u = −softplus(−t), ln(1 − u) = −softplus(t).
        let (lu, l1u) = (-softplus(-t), -softplus(t));
        let (lx, l1x) = if t <= 0.0 {
            self.lower_logit(ln_b, lu, start)
        } else {
            let (l1x, lx) = flip.lower_logit(ln_b, l1u, start.map(|y| -y));
            (lx, l1x)
        };
        let slope = (lu + l1u - self.alpha * lx - self.beta * l1x + ln_b).exp();
        (lx - l1x, slope)
    }

    /// (ln x, ln(1 − x)) at x = Q(u) for u ≤ ½ (`ln_u` = ln u): Newton steps on
    /// ln F(x) = ln u in y = logit x, whose slope x(1 − x) f(x)/F(x) =
    /// x^α (1 − x)^β/(B F) is known in closed form, from `start` (y; the
    /// previous node's value carried along its slope) or from the lower-tail form
    /// x ≈ (uαB)^{1/α}, whichever misses ln u by less. Not statrs's inverse: it
    /// misses by several units of y in the lower tail for shapes below 1 (seen
    /// at α = β = 0.2, u ≈ 1e−6), while its CDF is accurate there.
    fn lower_logit(&self, ln_b: f64, ln_u: f64, start: Option<f64>) -> (f64, f64) {
        let (a, b) = (self.alpha, self.beta);
        let parts = |y: f64| (-softplus(-y), -softplus(y));
        let miss = |y: f64| {
            let f = self.cdf(crate::numerics::logistic(y));
            (f.ln() - ln_u).abs()
        };
        let tail = ((ln_u + a.ln() + ln_b) / a).min(0.0);
        let mut y = match start {
            Some(s) if s.is_finite() && miss(s) < miss(tail) => s,
            _ => tail,
        };
        for _ in 0..40 {
            let (lx, l1x) = parts(y);
            let f = self.cdf(crate::numerics::logistic(y));
            if f.is_nan() || f <= 0.0 {
                y += 1.0;
                continue;
            }
            let lf = f.ln();
            let slope = (a * lx + b * l1x - ln_b - lf).exp();
            if !(slope.is_finite() && slope > 0.0) {
                break;
            }
            let step = ((lf - ln_u) / slope).clamp(-10.0, 10.0);
            y -= step;
            if step.abs() < 1e-11 * (1.0 + y.abs()) {
                break;
            }
        }
        parts(y)
    }

    /// The table over t ∈ [`lo`, `hi`], or `None` when the check fails (or the
    /// range is not finite, or too wide): the caller then uses [`Continuous::quantile`].
    pub fn table(&self, lo: f64, hi: f64) -> Option<QuantileTable> {
        if !(lo.is_finite() && hi.is_finite() && hi >= lo) {
            return None;
        }
        let k = ((hi - lo) / TABLE_STEP).ceil() as usize + 2;
        if k > TABLE_MAX_NODES {
            return None;
        }
        let flip = Beta::new(self.beta, self.alpha).ok()?;
        use crate::numerics::ln_gamma;
        let ln_b = ln_gamma(self.alpha) + ln_gamma(self.beta) - ln_gamma(self.alpha + self.beta);
        let mut y = vec![0.0; k];
        let mut d = vec![0.0; k];
        let tk = |j: usize| lo + j as f64 * TABLE_STEP;
        // Each side from its own end towards the middle, every node starting
        // from its neighbour carried along its slope.
        let mut prev: Option<(f64, f64, f64)> = None;
        for j in (0..k).filter(|j| tk(*j) <= 0.0) {
            let start = prev.map(|(t, y, s)| y + s * (tk(j) - t));
            let (a, b) = self.logit_quantile(&flip, ln_b, tk(j), start);
            (y[j], d[j]) = (a, b);
            prev = Some((tk(j), a, b));
        }
        let mut prev: Option<(f64, f64, f64)> = None;
        for j in (0..k).rev().filter(|j| tk(*j) > 0.0) {
            let start = prev.map(|(t, y, s)| y + s * (tk(j) - t));
            let (a, b) = self.logit_quantile(&flip, ln_b, tk(j), start);
            (y[j], d[j]) = (a, b);
            prev = Some((tk(j), a, b));
        }
        if y.iter().chain(&d).any(|v| !v.is_finite()) {
            return None;
        }
        let t = QuantileTable {
            t0: lo,
            y,
            d,
            dist: self.clone(),
            flip,
            ln_b,
        };
        for j in 0..k - 1 {
            let m = lo + (j as f64 + 0.5) * TABLE_STEP;
            let guess = t.interpolate(m);
            let (exact, _) = self.logit_quantile(&t.flip, ln_b, m, Some(guess));
            let e = (guess - exact).abs();
            if e.is_nan() || e > TABLE_TOL {
                return None;
            }
        }
        Some(t)
    }
}

impl QuantileTable {
    /// y = logit Q(u) at t = logit u: interpolated inside the table's range,
    /// exact outside it.
    pub fn logit_at(&self, t: f64) -> f64 {
        let s = (t - self.t0) / TABLE_STEP;
        if s >= 0.0 && s <= (self.y.len() - 1) as f64 {
            self.interpolate(t)
        } else {
            self.dist.logit_quantile(&self.flip, self.ln_b, t, None).0
        }
    }

    fn interpolate(&self, t: f64) -> f64 {
        let s = (t - self.t0) / TABLE_STEP;
        let j = (s.floor() as usize).min(self.y.len() - 2);
        let s = s - j as f64;
        let (s2, s3) = (s * s, s * s * s);
        let h = TABLE_STEP;
        (2.0 * s3 - 3.0 * s2 + 1.0) * self.y[j]
            + (s3 - 2.0 * s2 + s) * h * self.d[j]
            + (3.0 * s2 - 2.0 * s3) * self.y[j + 1]
            + (s3 - s2) * h * self.d[j + 1]
    }
}

/// ln(1 + eˣ) without overflow.
fn softplus(v: f64) -> f64 {
    v.max(0.0) + (-v.abs()).exp().ln_1p()
}

/// logit u, accurate for the uniforms of [`crate::rng`] (1 − u is exact there).
pub fn logit(u: f64) -> f64 {
    u.ln() - (-u).ln_1p()
}

/// y = logit Q(u) for every uniform in `u`, from a [`QuantileTable`] over their
/// range when one passes its check, otherwise exactly.
pub fn logit_quantiles(d: &Beta, u: &[f64]) -> Vec<f64> {
    let t: Vec<f64> = u.iter().map(|u| logit(*u)).collect();
    let (lo, hi) = t
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
            (a.min(*x), b.max(*x))
        });
    // A table costs about 2k exact quantiles; below that many draws it does not pay.
    let k = ((hi - lo) / TABLE_STEP).ceil().max(0.0) as usize + 2;
    let table = if u.len() > 2 * k { d.table(lo, hi) } else { None };
    match table {
        Some(tb) => t.iter().map(|t| tb.interpolate(*t)).collect(),
        None => u
            .iter()
            .map(|u| {
                let x = d.quantile(*u);
                x.ln() - (-x).ln_1p()
            })
            .collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The table against the exact quantile (statrs 0.19, reflected for t > 0)
    /// off the nodes and off the check points, over shapes from 0.05 to 1,000:
    /// |Δy| ≤ TABLE_TOL wherever a table is built, and a table is built for
    /// every shape in [0.2, 200]² (where the regression templates' fits live).
    #[test]
    fn quantile_table_matches_the_exact_quantile() {
        let shapes = [0.05, 0.2, 0.5, 1.0, 2.0, 5.0, 20.0, 200.0, 1000.0];
        for a in shapes {
            for b in shapes {
                let d = Beta::new(a, b).unwrap();
                let flip = Beta::new(b, a).unwrap();
                let Some(t) = d.table(-16.0, 16.0) else {
                    assert!(
                        !((0.2..=200.0).contains(&a) && (0.2..=200.0).contains(&b)),
                        "no table at ({a}, {b})"
                    );
                    continue;
                };
                for k in 0..997 {
                    let x = -16.0 + 32.0 * (k as f64 + 0.31) / 997.0;
                    let (exact, _) = d.logit_quantile(&flip, t.ln_b, x, None);
                    let got = t.logit_at(x);
                    assert!(
                        (got - exact).abs() <= TABLE_TOL,
                        "({a}, {b}) at t = {x}: {got} vs {exact}"
                    );
                }
                // Back through the CDF (statrs 0.19's regularised incomplete
                // beta), both ends included: an error δ in y moves ln F by at
                // most δ·(1 − u)/(dy/dt) (ln(1 − F) likewise above ½).
                for u in [1e-9, 0.01, 0.3, 0.5, 0.9, 0.999999] {
                    let y = t.logit_at(logit(u));
                    let (_, slope) = d.logit_quantile(&flip, t.ln_b, logit(u), None);
                    let (lo, up) = if u <= 0.5 {
                        (d.cdf(crate::numerics::logistic(y)), u)
                    } else {
                        (flip.cdf(crate::numerics::logistic(-y)), 1.0 - u)
                    };
                    let tol = 1.01 * TABLE_TOL * (1.0 - up) / slope + 1e-12;
                    assert!((lo.ln() - up.ln()).abs() <= tol, "({a}, {b}) u {u}: {lo} vs {up}");
                }
            }
        }
    }

    /// The slope at the nodes is the derivative of logit Q: against a central
    /// difference of the exact values.
    #[test]
    fn table_slope_is_the_derivative() {
        let d = Beta::new(0.7, 3.0).unwrap();
        let flip = Beta::new(3.0, 0.7).unwrap();
        let lb = crate::numerics::ln_gamma(0.7) + crate::numerics::ln_gamma(3.0)
            - crate::numerics::ln_gamma(3.7);
        for t in [-12.0, -2.0, 0.0, 0.4, 9.0] {
            let e = 1e-5;
            let fd = (d.logit_quantile(&flip, lb, t + e, None).0
                - d.logit_quantile(&flip, lb, t - e, None).0)
                / (2.0 * e);
            let (_, s) = d.logit_quantile(&flip, lb, t, None);
            assert!((fd - s).abs() < 1e-6 * s.abs().max(1.0), "t {t}: {fd} vs {s}");
        }
    }

    /// Q is the inverse of the CDF in both tails, for shapes from 0.05 to 500:
    /// F(Q(u)) = u (lower tail) and 1 − F(Q(u)) = 1 − u (upper tail, through
    /// the reflected CDF of Beta(β, α), statrs 0.19's regularised incomplete
    /// beta) to a relative 1e-8. Without the check and polish, statrs's inverse
    /// alone fails this (first at α = β = 0.05, u = 1e−12: F(x) = 0.072).
    #[test]
    fn quantile_is_the_inverse_of_the_cdf_in_both_tails() {
        let shapes = [0.05, 0.2, 0.5, 1.0, 3.0, 40.0, 500.0];
        let us = [1e-12, 1e-9, 1e-6, 1e-4, 0.01, 0.2, 0.5];
        for a in shapes {
            for b in shapes {
                let d = Beta::new(a, b).unwrap();
                for u in us {
                    let x = d.quantile(u);
                    let got = d.cdf(x);
                    assert!((got / u - 1.0).abs() < 1e-8, "({a}, {b}) u {u}: x {x}, F {got}");
                    let x = d.quantile(1.0 - u);
                    // Near 1, x itself is resolved only to 1.1e-16 in 1 − x.
                    if 1.0 - x > 1e-6 && u >= 1e-9 {
                        let up = statrs::function::beta::beta_reg(b, a, 1.0 - x);
                        // 1 − u is itself rounded: relative error ≤ 1.2e-16/u.
                        let tol = 1e-8 + 2.3e-16 / u;
                        assert!((up / u - 1.0).abs() < tol, "({a}, {b}) 1 − u {u}: x {x}, 1 − F {up}");
                    }
                }
            }
        }
    }

    /// A prior column drawn through the table equals the exact quantile to the
    /// table's tolerance in logit x (here 20,000 uniforms, shapes below and above 1).
    #[test]
    fn prior_draws_through_the_table_match_the_exact_quantile() {
        let n = 20_000;
        let u: Vec<f64> = (0..n).map(|i| (i as f64 + 0.5) / n as f64).collect();
        for (a, b) in [(0.4, 0.7), (6.0, 14.0), (2.0, 300.0)] {
            let d = Beta::new(a, b).unwrap();
            let mut x = vec![0.0; n];
            d.fill_from_base(&u, &mut x);
            for (x, u) in x.iter().zip(&u) {
                let q = d.quantile(*u);
                let gap = (logit(*x) - logit(q)).abs();
                assert!(gap <= 1.01 * TABLE_TOL + 1e-12, "({a}, {b}) u {u}: {x} vs {q}");
            }
        }
    }

    #[test]
    fn scipy_quantiles() {
        // scipy 1.17.1: beta.ppf([.05, .5, .95], 2, 3) = 0.0976115, 0.3857276, 0.7513954 (rounded).
        let d = Beta::new(2.0, 3.0).unwrap();
        for (p, q) in [(0.05, 0.0976115), (0.5, 0.3857276), (0.95, 0.7513954)] {
            assert!((d.quantile(p) - q).abs() < 5e-8, "p {p}: {}", d.quantile(p));
        }
        crate::dist::invariants::check(&d);
        crate::dist::invariants::check(&Beta::new(0.5, 0.7).unwrap());
    }
}

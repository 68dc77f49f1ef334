//! Small numerical kernels shared by the distributions, targets and templates.
//!
//! * `norm_quantile`: Wichura (1988), "Algorithm AS 241: The percentage points of
//!   the normal distribution", Applied Statistics 37(3), 477–484 (PPND16, about
//!   16 significant digits).
//! * `norm_cdf`: via the complementary error function of the `special` crate.
//! * Gauss–Legendre nodes by Newton iteration on the Legendre recurrence
//!   (Press et al., Numerical Recipes, 3rd ed., §4.6).
//! * `pchip_slopes`: Fritsch & Carlson (1980), "Monotone piecewise cubic
//!   interpolation", SIAM J. Numer. Anal. 17(2), 238–246.
//! * `brent_root`: bracketing root finder (Brent 1973, Algorithms for
//!   Minimization without Derivatives, ch. 4).
// The AS 241 coefficients are printed to the precision Wichura published.
#![allow(clippy::excessive_precision)]

pub mod format;
pub mod simplex;

use special::Error as _;

pub const SQRT_2: f64 = std::f64::consts::SQRT_2;

/// Standard normal CDF.
#[inline]
pub fn norm_cdf(z: f64) -> f64 {
    if z.is_nan() {
        return f64::NAN;
    }
    0.5 * (-z / SQRT_2).compl_error()
}

/// Standard normal density.
#[inline]
pub fn norm_pdf(z: f64) -> f64 {
    (-0.5 * z * z).exp() / (2.0 * std::f64::consts::PI).sqrt()
}

/// Standard normal quantile (AS 241, PPND16). Returns ±inf at 0 and 1.
pub fn norm_quantile(p: f64) -> f64 {
    if p.is_nan() || !(0.0..=1.0).contains(&p) {
        return f64::NAN;
    }
    if p == 0.0 {
        return f64::NEG_INFINITY;
    }
    if p == 1.0 {
        return f64::INFINITY;
    }
    let q = p - 0.5;
    if q.abs() <= 0.425 {
        let r = 0.180625 - q * q;
        return q
            * (((((((r * 2509.0809287301226727 + 33430.575583588128105) * r
                + 67265.770927008700853)
                * r
                + 45921.953931549871457)
                * r
                + 13731.693765509461125)
                * r
                + 1971.5909503065514427)
                * r
                + 133.14166789178437745)
                * r
                + 3.387132872796366608)
            / (((((((r * 5226.495278852545925 + 28729.085735721942674) * r
                + 39307.89580009271061)
                * r
                + 21213.794301586595867)
                * r
                + 5394.1960214247511077)
                * r
                + 687.1870074920579083)
                * r
                + 42.313330701600911252)
                * r
                + 1.0);
    }
    let mut r = if q < 0.0 { p } else { 1.0 - p };
    r = (-r.ln()).sqrt();
    let val = if r <= 5.0 {
        r -= 1.6;
        (((((((r * 7.7454501427834140764e-4 + 0.0227238449892691845833) * r
            + 0.24178072517745061177)
            * r
            + 1.27045825245236838258)
            * r
            + 3.64784832476320460504)
            * r
            + 5.7694972214606914055)
            * r
            + 4.6303378461565452959)
            * r
            + 1.42343711074968357734)
            / (((((((r * 1.05075007164441684324e-9 + 5.475938084995344946e-4) * r
                + 0.0151986665636164571966)
                * r
                + 0.14810397642748007459)
                * r
                + 0.68976733498510000455)
                * r
                + 1.6763848301838038494)
                * r
                + 2.05319162663775882187)
                * r
                + 1.0)
    } else {
        r -= 5.0;
        (((((((r * 2.01033439929228813265e-7 + 2.71155556874348757815e-5) * r
            + 0.0012426609473880784386)
            * r
            + 0.026532189526576123093)
            * r
            + 0.29656057182850489123)
            * r
            + 1.7848265399172913358)
            * r
            + 5.4637849111641143699)
            * r
            + 6.6579046435011037772)
            / (((((((r * 2.04426310338993978564e-15 + 1.4215117583164458887e-7) * r
                + 1.8463183175100546818e-5)
                * r
                + 7.868691311456132591e-4)
                * r
                + 0.0148753612908506148525)
                * r
                + 0.13692988092273580531)
                * r
                + 0.59983220655588793769)
                * r
                + 1.0)
    };
    if q < 0.0 {
        -val
    } else {
        val
    }
}

#[inline]
pub fn logistic(x: f64) -> f64 {
    if x >= 0.0 {
        1.0 / (1.0 + (-x).exp())
    } else {
        let e = x.exp();
        e / (1.0 + e)
    }
}

#[inline]
pub fn logit(p: f64) -> f64 {
    (p / (1.0 - p)).ln()
}

/// ln Γ(x) for x > 0.
#[inline]
pub fn ln_gamma(x: f64) -> f64 {
    special::Gamma::ln_gamma(x).0
}

/// Regularised lower incomplete gamma P(a, x).
#[inline]
pub fn gamma_p(a: f64, x: f64) -> f64 {
    use special::Gamma as _;
    if x <= 0.0 {
        return 0.0;
    }
    if x.is_infinite() {
        return 1.0;
    }
    x.inc_gamma(a)
}

/// Gauss–Legendre nodes and weights on [-1, 1].
pub fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    let m = n.div_ceil(2);
    for i in 0..m {
        let mut z = (std::f64::consts::PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut pp = 0.0;
        for _ in 0..100 {
            let mut p1 = 1.0;
            let mut p2 = 0.0;
            for j in 0..n {
                let p3 = p2;
                p2 = p1;
                p1 = ((2 * j + 1) as f64 * z * p2 - j as f64 * p3) / (j + 1) as f64;
            }
            pp = n as f64 * (z * p1 - p2) / (z * z - 1.0);
            let z1 = z;
            z = z1 - p1 / pp;
            if (z - z1).abs() < 1e-15 {
                break;
            }
        }
        x[i] = -z;
        x[n - 1 - i] = z;
        w[i] = 2.0 / ((1.0 - z * z) * pp * pp);
        w[n - 1 - i] = w[i];
    }
    (x, w)
}

/// ∫_a^b f with composite Gauss–Legendre (`pieces` panels of `n` nodes).
pub fn integrate(f: impl Fn(f64) -> f64, a: f64, b: f64, pieces: usize, n: usize) -> f64 {
    let (x, w) = gauss_legendre(n);
    let h = (b - a) / pieces as f64;
    let mut s = 0.0;
    for k in 0..pieces {
        let lo = a + k as f64 * h;
        let c = lo + 0.5 * h;
        for (xi, wi) in x.iter().zip(&w) {
            s += wi * f(c + 0.5 * h * xi);
        }
    }
    s * 0.5 * h
}

/// Fritsch–Carlson monotone slopes for data (x, y) with strictly increasing x and
/// non-decreasing y.
pub fn pchip_slopes(x: &[f64], y: &[f64]) -> Vec<f64> {
    let n = x.len();
    let d: Vec<f64> = (0..n - 1)
        .map(|i| (y[i + 1] - y[i]) / (x[i + 1] - x[i]))
        .collect();
    if n == 2 {
        return vec![d[0], d[0]];
    }
    let mut m = vec![0.0; n];
    for i in 1..n - 1 {
        if d[i - 1] * d[i] <= 0.0 {
            m[i] = 0.0;
        } else {
            let h0 = x[i] - x[i - 1];
            let h1 = x[i + 1] - x[i];
            let w1 = 2.0 * h1 + h0;
            let w2 = h1 + 2.0 * h0;
            m[i] = (w1 + w2) / (w1 / d[i - 1] + w2 / d[i]);
        }
    }
    // One-sided three-point ends, limited to keep monotonicity (as in Moler's pchip).
    let end = |h0: f64, h1: f64, d0: f64, d1: f64| {
        let s = ((2.0 * h0 + h1) * d0 - h0 * d1) / (h0 + h1);
        if s * d0 <= 0.0 {
            0.0
        } else if d0 * d1 <= 0.0 && s.abs() > 3.0 * d0.abs() {
            3.0 * d0
        } else {
            s
        }
    };
    m[0] = end(x[1] - x[0], x[2] - x[1], d[0], d[1]);
    m[n - 1] = end(x[n - 1] - x[n - 2], x[n - 2] - x[n - 3], d[n - 2], d[n - 3]);
    m
}

/// Evaluate the cubic Hermite interpolant with slopes `m` at `t` (inside [x0, xn]).
pub fn hermite_eval(x: &[f64], y: &[f64], m: &[f64], t: f64) -> f64 {
    let n = x.len();
    let i = match x.partition_point(|v| *v <= t) {
        0 => 0,
        k if k >= n => n - 2,
        k => k - 1,
    };
    let h = x[i + 1] - x[i];
    let s = (t - x[i]) / h;
    let h00 = (1.0 + 2.0 * s) * (1.0 - s) * (1.0 - s);
    let h10 = s * (1.0 - s) * (1.0 - s);
    let h01 = s * s * (3.0 - 2.0 * s);
    let h11 = s * s * (s - 1.0);
    h00 * y[i] + h10 * h * m[i] + h01 * y[i + 1] + h11 * h * m[i + 1]
}

/// Brent's root finder on a bracket [a, b] with f(a), f(b) of opposite signs.
pub fn brent_root(f: impl Fn(f64) -> f64, mut a: f64, mut b: f64, tol: f64) -> Option<f64> {
    let mut fa = f(a);
    let mut fb = f(b);
    if fa == 0.0 {
        return Some(a);
    }
    if fb == 0.0 {
        return Some(b);
    }
    if fa * fb > 0.0 || !fa.is_finite() || !fb.is_finite() {
        return None;
    }
    let mut c = a;
    let mut fc = fa;
    let mut d = b - a;
    let mut e = d;
    for _ in 0..200 {
        if fb * fc > 0.0 {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol1 = 2.0 * f64::EPSILON * b.abs() + 0.5 * tol;
        let xm = 0.5 * (c - b);
        if xm.abs() <= tol1 || fb == 0.0 {
            return Some(b);
        }
        if e.abs() >= tol1 && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * xm * s;
                q = 1.0 - s;
            } else {
                let qq = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * xm * qq * (qq - r) - (b - a) * (r - 1.0));
                q = (qq - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            }
            p = p.abs();
            if 2.0 * p < (3.0 * xm * q - (tol1 * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = xm;
                e = d;
            }
        } else {
            d = xm;
            e = d;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol1 { d } else { tol1.copysign(xm) };
        fb = f(b);
    }
    Some(b)
}

/// Quantile of a continuous CDF by bracketing and Brent's method, for families
/// without a closed form. `lo`/`hi` bracket the support (may be widened).
pub fn invert_cdf(cdf: impl Fn(f64) -> f64, p: f64, mut lo: f64, mut hi: f64) -> f64 {
    let mut k = 0;
    while cdf(lo) > p && k < 200 {
        lo = if lo > 0.0 { lo / 2.0 } else { lo * 2.0 - 1.0 };
        k += 1;
    }
    k = 0;
    while cdf(hi) < p && k < 200 {
        hi = if hi < 0.0 { hi / 2.0 } else { hi * 2.0 + 1.0 };
        k += 1;
    }
    brent_root(
        |x| cdf(x) - p,
        lo,
        hi,
        1e-14 * (1.0 + lo.abs().max(hi.abs())),
    )
    .unwrap_or(f64::NAN)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn probit_round_trip_and_reference() {
        // Φ⁻¹(0.975) = 1.959963984540054 (Abramowitz & Stegun, Table 26.5; scipy 1.17 norm.ppf).
        assert!((norm_quantile(0.975) - 1.959963984540054).abs() < 1e-14);
        // Φ⁻¹(1e-10) = -6.361340902404056 (scipy 1.17 norm.ppf).
        assert!((norm_quantile(1e-10) + 6.361340902404056).abs() < 1e-12);
        for &p in &[1e-300, 1e-12, 0.01, 0.3, 0.5, 0.77, 0.999999] {
            let z = norm_quantile(p);
            assert!(
                (norm_cdf(z) - p).abs() <= 1e-12 * p.min(1.0 - p) + 4e-16,
                "p = {p}"
            );
        }
    }

    #[test]
    fn gauss_legendre_integrates_polynomials_exactly() {
        // An n-point rule is exact for degree 2n − 1 (Numerical Recipes §4.6).
        let v = integrate(|x| x.powi(9) + 3.0 * x * x, 0.0, 2.0, 1, 5);
        assert!((v - (2f64.powi(10) / 10.0 + 8.0)).abs() < 1e-11);
    }

    #[test]
    fn pchip_is_monotone() {
        let x = [0.0, 1.0, 2.0, 3.0, 4.0];
        let y = [0.0, 0.1, 0.1, 0.8, 1.0];
        let m = pchip_slopes(&x, &y);
        let mut last = -1.0;
        for k in 0..=400 {
            let v = hermite_eval(&x, &y, &m, k as f64 / 100.0);
            assert!(v >= last - 1e-15);
            last = v;
        }
    }

    #[test]
    fn brent_finds_root() {
        let r = brent_root(|x| x * x - 2.0, 0.0, 2.0, 1e-14).unwrap();
        assert!((r - SQRT_2).abs() < 1e-12);
    }
}

/// The p-quantile of sorted draws (type-1 empirical quantile, Hyndman & Fan 1996).
pub fn empirical_quantile(sorted: &[f64], p: f64) -> f64 {
    let n = sorted.len();
    let k = ((p * n as f64).ceil() as usize).clamp(1, n) - 1;
    sorted[k]
}

/// Serde helpers for the fit record: ±∞ written as the strings "inf"/"-inf" (JSON
/// has no infinity) and read back; a NaN is written as `null` and read back as NaN.
/// Use as `#[serde(with = "crate::numerics::ext::num")]` on an `f64` field and
/// `ext::nums` on a `Vec<f64>`.
pub mod ext {
    use serde::{de, Deserializer, Serializer};
    use std::fmt;

    fn one<S: Serializer>(x: f64, s: S) -> Result<S::Ok, S::Error> {
        if x == f64::INFINITY {
            s.serialize_str("inf")
        } else if x == f64::NEG_INFINITY {
            s.serialize_str("-inf")
        } else {
            s.serialize_f64(x)
        }
    }

    /// Accepts a number, "inf", "-inf", "nan" or null (NaN).
    struct Lenient;

    impl<'de> de::Visitor<'de> for Lenient {
        type Value = f64;
        fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
            f.write_str("a number, \"inf\", \"-inf\" or null")
        }
        fn visit_f64<E: de::Error>(self, v: f64) -> Result<f64, E> {
            Ok(v)
        }
        fn visit_i64<E: de::Error>(self, v: i64) -> Result<f64, E> {
            Ok(v as f64)
        }
        fn visit_u64<E: de::Error>(self, v: u64) -> Result<f64, E> {
            Ok(v as f64)
        }
        fn visit_unit<E: de::Error>(self) -> Result<f64, E> {
            Ok(f64::NAN)
        }
        fn visit_none<E: de::Error>(self) -> Result<f64, E> {
            Ok(f64::NAN)
        }
        fn visit_str<E: de::Error>(self, v: &str) -> Result<f64, E> {
            match v {
                "inf" => Ok(f64::INFINITY),
                "-inf" => Ok(f64::NEG_INFINITY),
                "nan" => Ok(f64::NAN),
                _ => Err(E::invalid_value(de::Unexpected::Str(v), &self)),
            }
        }
    }

    /// One `f64`.
    pub mod num {
        use super::*;
        pub fn serialize<S: Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
            one(*x, s)
        }
        pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
            d.deserialize_any(Lenient)
        }
    }

    /// A `Vec<f64>`.
    pub mod nums {
        use super::*;
        use serde::ser::SerializeSeq;

        struct W(f64);
        impl serde::Serialize for W {
            fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
                one(self.0, s)
            }
        }
        struct R(f64);
        impl<'de> serde::Deserialize<'de> for R {
            fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
                d.deserialize_any(Lenient).map(R)
            }
        }

        pub fn serialize<S: Serializer>(v: &[f64], s: S) -> Result<S::Ok, S::Error> {
            let mut seq = s.serialize_seq(Some(v.len()))?;
            for x in v {
                seq.serialize_element(&W(*x))?;
            }
            seq.end()
        }
        pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Vec<f64>, D::Error> {
            let v: Vec<R> = serde::Deserialize::deserialize(d)?;
            Ok(v.into_iter().map(|r| r.0).collect())
        }
    }
}

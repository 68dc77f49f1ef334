//! Invariants every family must satisfy (statrs-style shared checks): the CDF is
//! non-decreasing within [0, 1], `cdf(quantile(p)) = p`, quantiles increase, and
//! the density integrates to the CDF between two quantiles.

use super::Continuous;

pub fn check(d: &dyn Continuous) {
    check_cdf(d);
    // ∫ pdf over [q(0.1), q(0.9)] = 0.8, by composite Gauss–Legendre.
    let a = d.quantile(0.1);
    let b = d.quantile(0.9);
    let area = crate::numerics::integrate(|x| d.pdf(x), a, b, 64, 8);
    assert!((area - 0.8).abs() < 1e-6, "{}: pdf area {area}", d.family());
}

/// The CDF/quantile invariants alone (for densities with jumps, where a smooth
/// quadrature of the pdf is not exact).
pub fn check_cdf(d: &dyn Continuous) {
    let ps = [0.001, 0.01, 0.1, 0.25, 0.5, 0.75, 0.9, 0.99, 0.999];
    let mut last = f64::NEG_INFINITY;
    for &p in &ps {
        let x = d.quantile(p);
        assert!(x.is_finite(), "{}: quantile({p}) = {x}", d.family());
        assert!(x > last, "{}: quantiles not increasing at {p}", d.family());
        last = x;
        let back = d.cdf(x);
        assert!(
            (back - p).abs() < 1e-8,
            "{}: cdf(quantile({p})) = {back}",
            d.family()
        );
        assert!((d.sf(x) - (1.0 - p)).abs() < 1e-8);
    }
}

/// Reference values of a family from outside this crate: `source` names where
/// they come from (a library and its version, or a book and formula; values
/// recalled from memory say so).
#[derive(Debug, Clone, Copy)]
pub struct Reference {
    pub source: &'static str,
    /// Parameters in registry order.
    pub params: &'static [f64],
    /// (x, F(x), f(x)).
    pub points: &'static [(f64, f64, f64)],
    /// (p, F⁻¹(p)).
    pub quantiles: &'static [(f64, f64)],
    /// Largest relative error accepted (absolute below 1).
    pub tol: f64,
}

/// Compare `d` with `r` (a failing value names the family, point and source).
pub fn check_reference(d: &dyn Continuous, r: &Reference) {
    let close = |got: f64, want: f64| (got - want).abs() <= r.tol * want.abs().max(1.0);
    for &(x, cdf, pdf) in r.points {
        let (c, f) = (d.cdf(x), d.pdf(x));
        assert!(
            close(c, cdf),
            "{}: cdf({x}) = {c}, {} says {cdf}",
            d.family(),
            r.source
        );
        assert!(
            close(f, pdf),
            "{}: pdf({x}) = {f}, {} says {pdf}",
            d.family(),
            r.source
        );
    }
    for &(p, x) in r.quantiles {
        let q = d.quantile(p);
        assert!(
            close(q, x),
            "{}: quantile({p}) = {q}, {} says {x}",
            d.family(),
            r.source
        );
    }
}

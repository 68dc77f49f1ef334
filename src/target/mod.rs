//! Beliefs: what a user believes about a derived quantity, as a distribution on
//! the extended real line, tabulated once per fit for speed.
//!
//! A belief's continuous part comes from a parametric family, elicited quantiles
//! (a fitted family or a monotone interpolation), a histogram, or several experts
//! pooled linearly; atoms (point masses, also at +∞) take their mass and the
//! continuous part the rest. So "a 10 % chance the median is never reached,
//! otherwise log-normal(3, 0.4)" is `atoms = [{at = inf, mass = 0.1}]` plus a
//! log-normal that describes the other 90 %.
//!
//! The [`Target`] evaluates the belief's CDF at *sorted* simulated values in one
//! merge pass over a table of the continuous CDF at 4,097 quantile-spaced points
//! (probit-spaced probabilities, linear interpolation between them): O(N + M) per
//! evaluation with no special functions (README, "How it works").

pub mod ess;
pub mod histogram;
pub mod pool;
pub mod quantiles;
pub mod widened;

use crate::dist::{Atom, Dist, Mixed};
use crate::numerics::{norm_cdf, norm_quantile};

pub use histogram::Histogram;
pub use quantiles::QuantileSpline;

/// What the discrepancy sees of one simulated value: its position u = T(q) when
/// T is continuous at q, or the whole jump [T(a−), T(a)] when q sits on an atom.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Event {
    Point(f64),
    Span { lo: f64, hi: f64, count: usize },
}

const GRID: usize = 4097;
/// Table walks run side by side in [`Target::fc_run`].
const LANES: usize = 4;
const Z_MAX: f64 = 7.0;

/// A belief ready for fast evaluation.
#[derive(Debug, Clone)]
pub struct Target {
    pub dist: Mixed,
    xs: Vec<f64>,
    ps: Vec<f64>,
    /// (ps[k+1] − ps[k]) / (xs[k+1] − xs[k]): linear interpolation without a division.
    slopes: Vec<f64>,
}

impl Target {
    pub fn new(dist: Mixed) -> Self {
        let (mut xs, mut ps) = (Vec::new(), Vec::new());
        if let Some(c) = &dist.cont {
            for k in 0..GRID {
                let z = -Z_MAX + 2.0 * Z_MAX * k as f64 / (GRID - 1) as f64;
                let p = norm_cdf(z);
                let x = c.quantile(p);
                if !x.is_finite() {
                    continue;
                }
                // Keep the table strictly increasing in x (flat stretches of the
                // CDF collapse to their first point).
                if let Some(&last) = xs.last() {
                    if x <= last {
                        continue;
                    }
                }
                xs.push(x);
                ps.push(c.cdf(x));
            }
        }
        let slopes = xs
            .windows(2)
            .zip(ps.windows(2))
            .map(|(x, p)| (p[1] - p[0]) / (x[1] - x[0]))
            .collect();
        Self {
            dist,
            xs,
            ps,
            slopes,
        }
    }

    pub fn continuous(d: Dist) -> Self {
        Self::new(Mixed::continuous(d))
    }

    /// The belief's CDF at x (exact, not tabulated).
    pub fn cdf(&self, x: f64) -> f64 {
        self.dist.cdf(x)
    }

    pub fn quantile(&self, p: f64) -> f64 {
        self.dist.quantile(p)
    }

    pub fn atoms(&self) -> &[Atom] {
        &self.dist.atoms
    }

    /// The jumps of T in u-space, [T(a−), T(a)] for each atom a.
    pub fn spans(&self) -> Vec<(f64, f64)> {
        self.dist
            .atoms
            .iter()
            .map(|a| (self.dist.cdf_left(a.at), self.dist.cdf(a.at)))
            .collect()
    }

    /// Continuous CDF F_c of a run of ascending values `q`, written to `u` (scaled
    /// by `scale` and shifted by `shift`), by merge walks of the table. The run is
    /// cut into [`LANES`] stretches walked side by side (each found by bisection
    /// first): one walk is a chain of dependent loads, several overlap in the
    /// processor. The values equal those of one walk. `k` is the table index hint,
    /// left at the segment of the last value.
    #[inline]
    pub fn fc_run(&self, q: &[f64], shift: f64, scale: f64, k: &mut usize, u: &mut Vec<f64>) {
        u.clear();
        let n = self.xs.len();
        if self.dist.cont.is_none() || n < 2 {
            u.extend(q.iter().map(|&x| shift + scale * self.fc_walk(x, k)));
            return;
        }
        let xs = &self.xs[..];
        let at = |x: f64, k: &mut usize| self.table_at(x, k);
        let m = q.len();
        if m < 16 * LANES {
            u.extend(q.iter().map(|&x| shift + scale * at(x, k)));
            return;
        }
        u.resize(m, 0.0);
        let chunk = m.div_ceil(LANES);
        let mut ks = [0usize; LANES];
        for (l, kl) in ks.iter_mut().enumerate() {
            let first = (l * chunk).min(m - 1);
            let x = q[first];
            *kl = xs.partition_point(|v| *v <= x).saturating_sub(1).min(n - 2);
        }
        let full = m / chunk; // lanes with a whole stretch
        for j in 0..chunk {
            for (l, kl) in ks.iter_mut().enumerate().take(full) {
                let i = l * chunk + j;
                u[i] = shift + scale * at(q[i], kl);
            }
        }
        for (l, kl) in ks.iter_mut().enumerate().skip(full) {
            for i in (l * chunk).min(m)..((l + 1) * chunk).min(m) {
                u[i] = shift + scale * at(q[i], kl);
            }
        }
        *k = ks[(m - 1) / chunk];
    }

    /// Continuous CDF F_c by table lookup starting from index hint `k` (advanced).
    #[inline]
    pub(crate) fn fc_walk(&self, x: f64, k: &mut usize) -> f64 {
        let Some(c) = &self.dist.cont else {
            return 0.0;
        };
        if self.xs.len() < 2 {
            return if x == f64::INFINITY { 1.0 } else { c.cdf(x) };
        }
        self.table_at(x, k)
    }

    /// The tabulated F_c at x (a table of at least two points), from segment hint
    /// `k`, which never passes the segment holding x and is left there. Beyond the
    /// table the CDF is within Φ(−7) ≈ 1.3e-12 of 0 or 1, below the discrepancy's
    /// clamp of u to [1e-12, 1 − 1e-12]: no special function needed.
    #[inline(always)]
    fn table_at(&self, x: f64, k: &mut usize) -> f64 {
        let (xs, n) = (&self.xs[..], self.xs.len());
        if x < xs[0] {
            return 0.0;
        }
        if x >= xs[n - 1] {
            return 1.0;
        }
        // Advance by counting the next four table points at or below x (values
        // and table interleave at random, so a step-by-step loop mispredicts on
        // most values).
        loop {
            if *k + 5 < n {
                let w = &xs[*k + 1..*k + 5];
                let a = (w[0] <= x) as usize
                    + (w[1] <= x) as usize
                    + (w[2] <= x) as usize
                    + (w[3] <= x) as usize;
                *k += a;
                if a < 4 {
                    break;
                }
            } else {
                while *k + 2 < n && xs[*k + 1] <= x {
                    *k += 1;
                }
                break;
            }
        }
        self.ps[*k] + (x - xs[*k]) * self.slopes[*k]
    }

    /// Visit the events of sorted values `q` (ascending, NaN-free) in order.
    #[inline]
    pub fn walk(&self, q: &[f64], mut visit: impl FnMut(Event)) {
        let cm = self.dist.cont_mass();
        let atoms = &self.dist.atoms;
        let mut k = 0usize; // table index hint
        let mut j = 0usize; // atoms strictly below the current value
        let mut below = 0.0; // their mass
        let mut i = 0usize;
        while i < q.len() {
            let x = q[i];
            while j < atoms.len() && atoms[j].at < x {
                below += atoms[j].mass;
                j += 1;
            }
            if j < atoms.len() && atoms[j].at == x {
                let mut count = 0;
                while i < q.len() && q[i] == x {
                    count += 1;
                    i += 1;
                }
                let lo = below + cm * self.fc_walk(x, &mut k);
                visit(Event::Span {
                    lo,
                    hi: (lo + atoms[j].mass).min(1.0),
                    count,
                });
                continue;
            }
            visit(Event::Point(
                (below + cm * self.fc_walk(x, &mut k)).min(1.0),
            ));
            i += 1;
        }
    }

    /// Believed quantiles at the given probabilities.
    pub fn quantiles(&self, ps: &[f64]) -> Vec<f64> {
        ps.iter().map(|p| self.quantile(*p)).collect()
    }
}

/// Pool experts linearly: F = Σ w_e F_e, atoms included (the linear opinion pool;
/// Stone 1961, Ann. Math. Statist. 32; O'Hagan et al. 2006, Uncertain Judgements, ch. 9).
pub use pool::linear_pool;

/// The probit grid used for tabulation, exposed for tests.
pub fn grid_probabilities() -> Vec<f64> {
    (0..GRID)
        .map(|k| norm_cdf(-Z_MAX + 2.0 * Z_MAX * k as f64 / (GRID - 1) as f64))
        .collect()
}

#[doc(hidden)]
pub fn _probit(p: f64) -> f64 {
    norm_quantile(p)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::dist::beta::Beta;
    use std::sync::Arc;

    /// The four-lane walk of `fc_run` gives exactly the values of one sequential
    /// walk, values beyond both ends of the table included, and leaves the hint
    /// where the sequential walk does.
    #[test]
    fn lanes_equal_one_walk() {
        let t = Target::continuous(Arc::new(Beta::new(12.0, 18.0).unwrap()));
        for m in [1usize, 63, 64, 65, 1001, 10_000] {
            let mut q: Vec<f64> = (0..m)
                .map(|i| -0.05 + 1.1 * ((i as f64 * 0.618_034) % 1.0))
                .collect();
            q.sort_by(f64::total_cmp);
            let (mut k1, mut k2) = (0, 0);
            let one: Vec<f64> = q
                .iter()
                .map(|&x| 0.1 + 0.8 * t.fc_walk(x, &mut k1))
                .collect();
            let mut u = Vec::new();
            t.fc_run(&q, 0.1, 0.8, &mut k2, &mut u);
            assert_eq!(u, one, "m = {m}");
            assert_eq!(k1, k2, "hint, m = {m}");
        }
    }

    #[test]
    fn tabulated_cdf_matches_exact() {
        let t = Target::continuous(Arc::new(Beta::new(12.0, 18.0).unwrap()));
        let mut q: Vec<f64> = (1..2000).map(|i| i as f64 / 2000.0).collect();
        q.sort_by(f64::total_cmp);
        let mut us = Vec::new();
        t.walk(&q, |e| {
            if let Event::Point(u) = e {
                us.push(u)
            }
        });
        for (x, u) in q.iter().zip(&us) {
            assert!((t.cdf(*x) - u).abs() < 2e-6, "x {x}: {u} vs {}", t.cdf(*x));
        }
    }

    #[test]
    fn atoms_become_spans() {
        let d = Mixed::new(
            vec![Atom {
                at: f64::INFINITY,
                mass: 0.25,
            }],
            Some(Arc::new(
                crate::dist::lognormal::LogNormal::new(0.0, 1.0).unwrap(),
            )),
        )
        .unwrap();
        let t = Target::new(d);
        let q = [0.5, 1.0, f64::INFINITY, f64::INFINITY];
        let mut ev = Vec::new();
        t.walk(&q, |e| ev.push(e));
        assert_eq!(ev.len(), 3);
        assert_eq!(
            ev[2],
            Event::Span {
                lo: 0.75,
                hi: 1.0,
                count: 2
            }
        );
        match ev[1] {
            Event::Point(u) => assert!((u - 0.375).abs() < 1e-6),
            _ => panic!("expected a point"),
        }
    }
}

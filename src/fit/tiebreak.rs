//! The tie-break, solved directly: among priors the beliefs cannot tell apart,
//! the widest.
//!
//! For every direction v the profile ([`super::profile`]) calls undetermined or
//! borderline, the prior moves along the **valley floor** of D in the direction
//! in which the secondary objective S falls (the wider prior; see
//! `Objective::secondary`) until D has risen by the reference floor above its
//! optimum: at each trial point the determined directions (eigenvectors of the
//! Hessian at the optimum, curvature μ) are re-minimised by a Newton step
//! a = −g/μ, so the end point lies on the curve of best fits along v, not on a
//! straight line through wherever the optimiser happened to stop. That curve and
//! the floor do not depend on the seed beyond Monte Carlo error, so neither does
//! the chosen prior: a constrained solve (the widest prior on the valley floor
//! whose discrepancy is within one reference floor of the best) with no front of
//! κ values to trace. When the one flat direction is led by one hyperparameter
//! (component ≥ 0.9), the walk follows that hyperparameter's profile instead
//! (it held, the others re-minimised over the Hessian without its row and
//! column): the eigenvector's tilt depends on where along the valley the
//! optimiser stopped, the profile does not. The edge is bracketed by doubling
//! steps and found by the Illinois variant of regula falsi, the end chosen on the
//! true residuals. With k > 1 flat directions they are settled one after
//! another, each with a budget of 1/k reference floor.

use super::objective::Objective;
use super::profile::ETA_LIMIT;
use nalgebra::{DMatrix, SymmetricEigen};
use rayon::prelude::*;
use serde::Serialize;

/// One move of the tie-break along a flat direction.
#[derive(Debug, Clone, Serialize)]
pub struct Move {
    /// Start of the move (η).
    pub from: Vec<f64>,
    /// End of the move (η).
    pub to: Vec<f64>,
    /// Unit tangent of the valley floor at the end, towards where it went.
    pub tangent: Vec<f64>,
    /// The flat direction (unit) the distance is measured along.
    pub direction: Vec<f64>,
    /// Distance moved along the flat direction, η units (0 when it stayed).
    pub distance: f64,
    /// The end is the edge of the range, not where D rose by the budget.
    pub open: bool,
    /// dD/ds along the valley floor at the end (0 when open or when it stayed).
    pub slope: f64,
}

/// A determined eigen-direction: unit vector, curvature, difference step.
pub struct Stiff {
    u: Vec<f64>,
    mu: f64,
    h: f64,
}

/// The determined eigen-directions of the Hessian `hess` (over the free
/// hyperparameters inside the range at `eta0`): curvature above two floors and
/// not along any of `exclude`.
pub fn stiff_directions(
    obj: &Objective,
    eta0: &[f64],
    hess: &DMatrix<f64>,
    exclude: &[&[f64]],
) -> Vec<Stiff> {
    let d = eta0.len();
    let inner: Vec<usize> = (0..d).filter(|&a| eta0[a].abs() <= ETA_LIMIT).collect();
    let m = inner.len();
    let mut stiff = Vec::new();
    let floor = obj.floor();
    if m > 0 && hess.nrows() == d {
        let hi = DMatrix::from_fn(m, m, |a, b| hess[(inner[a], inner[b])]);
        if hi.iter().all(|v| v.is_finite()) {
            let eig = SymmetricEigen::new(hi);
            for j in 0..m {
                let mut u = vec![0.0; d];
                for a in 0..m {
                    u[inner[a]] = eig.eigenvectors[(a, j)];
                }
                let mu = eig.eigenvalues[j];
                let along = exclude.iter().any(|v| {
                    let dot: f64 = u.iter().zip(v.iter()).map(|(p, q)| p * q).sum();
                    dot.abs() > 0.7
                });
                if mu > 2.0 * floor && !along {
                    let h = (8.0 * floor / mu)
                        .sqrt()
                        .clamp(1e-3, super::diagnostics::STEP);
                    stiff.push(Stiff { u, mu, h });
                }
            }
        }
    }
    stiff
}

/// The coordinate leading the unit vector `v` and its component, when it
/// leads clearly (|component| ≥ 0.9).
fn leading(v: &[f64]) -> Option<(usize, f64)> {
    let (j, c) = v
        .iter()
        .copied()
        .enumerate()
        .max_by(|a, b| a.1.abs().total_cmp(&b.1.abs()))?;
    (c.abs() >= 0.9).then_some((j, c))
}

/// The determined directions of the profile over coordinate `j`: eigenvectors
/// of the Hessian without row and column `j` (over the free hyperparameters
/// inside the range), embedded with a zero at `j`, with curvature above two
/// floors.
fn profile_directions(obj: &Objective, eta0: &[f64], hess: &DMatrix<f64>, j: usize) -> Vec<Stiff> {
    let d = eta0.len();
    let inner: Vec<usize> = (0..d)
        .filter(|&a| a != j && eta0[a].abs() <= ETA_LIMIT)
        .collect();
    let m = inner.len();
    let floor = obj.floor();
    let mut stiff = Vec::new();
    if m == 0 || hess.nrows() != d {
        return stiff;
    }
    let hi = DMatrix::from_fn(m, m, |a, b| hess[(inner[a], inner[b])]);
    if !hi.iter().all(|v| v.is_finite()) {
        return stiff;
    }
    let eig = SymmetricEigen::new(hi);
    for c in 0..m {
        let mu = eig.eigenvalues[c];
        if mu > 2.0 * floor {
            let mut u = vec![0.0; d];
            for a in 0..m {
                u[inner[a]] = eig.eigenvectors[(a, c)];
            }
            let h = (8.0 * floor / mu)
                .sqrt()
                .clamp(1e-3, super::diagnostics::STEP);
            stiff.push(Stiff { u, mu, h });
        }
    }
    stiff
}

/// Settle the flat lines of `lines` from the optimum `eta0`, with `hess` the
/// Hessian of D over the free hyperparameters there; returns the new η and the
/// moves made.
pub fn widest(
    obj: &Objective,
    coarse: &Objective,
    eta0: &[f64],
    hess: &DMatrix<f64>,
    lines: &[super::profile::Line],
    f_ref: f64,
) -> (Vec<f64>, Vec<Move>) {
    let flat: Vec<&super::profile::Line> = lines.iter().filter(|l| l.call.is_flat()).collect();
    let k = flat.len();
    let dirs: Vec<&[f64]> = flat.iter().map(|l| &l.direction[..]).collect();
    let mut stiff = stiff_directions(obj, eta0, hess, &dirs);
    let mut x = eta0.to_vec();
    let mut moves = Vec::new();
    for l in flat {
        let mut v = l.direction.clone();
        // One flat direction led by one hyperparameter: walk that hyperparameter's
        // profile (it held, every other free one re-minimised) instead of the
        // eigenvector, whose tilt at the optimum depends on where along the
        // valley the optimiser stopped; the profile curve does not.
        let mut scale = 1.0;
        if k == 1 {
            if let Some((j, c)) = leading(&v) {
                stiff = profile_directions(obj, eta0, hess, j);
                v = vec![0.0; v.len()];
                v[j] = c.signum();
                scale = c.abs();
            }
        }
        // Newton leaves flat directions alone, so the optimum may sit anywhere
        // in the flat interval: first find the lowest point of the valley floor
        // along v, so that "within one floor of the best" is measured from the
        // best, not from wherever the optimiser stopped.
        x = if k == 1 {
            correct(obj, &l.valley_min, &stiff, FINAL_CORRECTIONS).0
        } else {
            let lim = |w: &[f64]| limit(&x, w).min(MIN_SEARCH);
            let neg: Vec<f64> = v.iter().map(|c| -c).collect();
            valley_min(obj, coarse, &x, &v, &stiff, -lim(&neg), lim(&v))
        };
        // Where in the flat interval is S least? S needs no simulation, so it
        // is minimised along the straight line over the interval the profile
        // found (measured from the valley's lowest point); when the minimum is
        // at an end (the usual case: a wider prior), that end is located on the
        // full draws along the valley floor; inside (the pull towards the
        // reference wins), the prior moves there.
        let sec = |s: f64| {
            let y: Vec<f64> = x.iter().zip(&v).map(|(a, c)| a + s * c).collect();
            obj.secondary(&obj.full(&y))
        };
        let (lo, hi) = if k == 1 {
            (-l.minus.distance * scale, l.plus.distance * scale)
        } else {
            let neg: Vec<f64> = v.iter().map(|c| -c).collect();
            (
                -limit(&x, &neg).min(MIN_SEARCH),
                limit(&x, &v).min(MIN_SEARCH),
            )
        };
        let (s_star, _) = super::simplex::brent_min(&sec, lo, hi, 2e-3, 40);
        let near_end = |e: f64| e.abs() > 0.0 && (s_star - e).abs() <= 0.02 * e.abs();
        if !near_end(hi) && !near_end(lo) {
            let y: Vec<f64> = x.iter().zip(&v).map(|(a, c)| a + s_star * c).collect();
            let to = correct(obj, &y, &stiff, FINAL_CORRECTIONS).0;
            moves.push(Move {
                from: x.clone(),
                to: to.clone(),
                tangent: v.clone(),
                direction: v,
                distance: s_star.abs(),
                // Set by the secondary objective, not by an edge: no edge error.
                open: true,
                slope: 0.0,
            });
            x = to;
            continue;
        }
        if near_end(lo) {
            v.iter_mut().for_each(|c| *c = -*c);
        }
        let mv = valley_edge(obj, &x, &v, &stiff, f_ref / k as f64);
        if obj.secondary(&obj.full(&mv.to)) < obj.secondary(&obj.full(&x)) {
            x = mv.to.clone();
            moves.push(mv);
        } else {
            moves.push(Move {
                from: x.clone(),
                to: x.clone(),
                tangent: v.clone(),
                direction: v,
                distance: 0.0,
                open: false,
                slope: 0.0,
            });
        }
    }
    (x, moves)
}

/// The lowest point of the valley floor through `x` along `v`, over
/// s ∈ [lo, hi]: Brent's method on the corrected D of the `coarse` objective (the
/// first quarter of the draws: only D's minimum value matters, and it is
/// insensitive to the location), to 0.05 η units, then corrected on the full
/// draws.
pub fn valley_min(
    obj: &Objective,
    coarse: &Objective,
    x: &[f64],
    v: &[f64],
    stiff: &[Stiff],
    lo: f64,
    hi: f64,
) -> Vec<f64> {
    if hi - lo < 1e-6 {
        return x.to_vec();
    }
    let at = |s: f64| -> Vec<f64> { x.iter().zip(v).map(|(a, c)| a + s * c).collect() };
    let f = |s: f64| correct(coarse, &at(s), stiff, CORRECTIONS).1;
    let (s, fs) = super::simplex::brent_min(&f, lo, hi, 0.05, 30);
    if fs < obj.d_at(x) {
        correct(obj, &at(s), stiff, FINAL_CORRECTIONS).0
    } else {
        x.to_vec()
    }
}

/// Newton iterations of [`correct`] while searching, and at the chosen end.
const CORRECTIONS: usize = 1;
const FINAL_CORRECTIONS: usize = 2;
const EDGE_CORRECTIONS: usize = 2;

/// Re-minimise D over the determined directions from `y`: Newton steps a = −g/μ
/// on differenced gradients (in parallel), solving ∇D = 0 there as the fit's
/// polish does (a decrease test would stall on the empirical objective's small
/// kinks); keeps `y` when the result is worse by more than a tenth of a floor.
fn correct(obj: &Objective, y: &[f64], stiff: &[Stiff], iterations: usize) -> (Vec<f64>, f64) {
    let fy = obj.d_at(y);
    if stiff.is_empty() {
        return (y.to_vec(), fy);
    }
    let mut z = y.to_vec();
    for _ in 0..iterations {
        let at =
            |u: &[f64], s: f64| -> Vec<f64> { z.iter().zip(u).map(|(a, c)| a + s * c).collect() };
        let steps: Vec<f64> = stiff
            .par_iter()
            .map(|st| {
                let g = (obj.d_at(&at(&st.u, st.h)) - obj.d_at(&at(&st.u, -st.h))) / (2.0 * st.h);
                (-g / st.mu).clamp(-0.5, 0.5)
            })
            .collect();
        for (st, a) in stiff.iter().zip(&steps) {
            for (zi, ui) in z.iter_mut().zip(&st.u) {
                *zi += a * ui;
            }
        }
        if z.iter().any(|e| e.abs() > ETA_LIMIT) {
            return (y.to_vec(), fy);
        }
    }
    let fz = obj.d_at(&z);
    if fz <= fy + 0.1 * obj.floor() {
        (z, fz)
    } else {
        (y.to_vec(), fy)
    }
}

/// Follow the valley floor from `x0` along `v` until D rises by `budget` above
/// D(x0), or to the edge of the range.
pub fn valley_edge(obj: &Objective, x0: &[f64], v: &[f64], stiff: &[Stiff], budget: f64) -> Move {
    let d0 = obj.d_at(x0);
    let limit = limit(x0, v);
    // A probe at distance s, starting from the corrected point `base` at `s_base`.
    let probe = |base: &[f64], s_base: f64, s: f64| -> (Vec<f64>, f64) {
        let y: Vec<f64> = base
            .iter()
            .zip(v)
            .map(|(a, c)| a + (s - s_base) * c)
            .collect();
        let (z, fz) = correct(obj, &y, stiff, EDGE_CORRECTIONS);
        (z, fz - d0 - budget)
    };
    let stay = Move {
        from: x0.to_vec(),
        to: x0.to_vec(),
        tangent: v.to_vec(),
        direction: v.to_vec(),
        distance: 0.0,
        open: false,
        slope: 0.0,
    };
    if limit <= 1e-9 {
        return stay;
    }
    // Bracket: doubling steps along the floor.
    let (mut s_lo, mut p_lo, mut r_lo) = (0.0, x0.to_vec(), -budget);
    let mut s = 0.1f64.min(limit);
    let (mut s_hi, mut p_hi, mut r_hi);
    loop {
        let (p, r) = probe(&p_lo, s_lo, s);
        if r > 0.0 {
            (s_hi, p_hi, r_hi) = (s, p, r);
            break;
        }
        (s_lo, p_lo, r_lo) = (s, p, r);
        if s >= limit {
            let tangent = unit_between(x0, &p_lo, v);
            return Move {
                from: x0.to_vec(),
                to: p_lo,
                tangent,
                direction: v.to_vec(),
                distance: s,
                open: true,
                slope: 0.0,
            };
        }
        s = (2.0 * s).min(limit);
    }
    // Illinois regula falsi on r(s) = rise − budget (its halvings change the
    // weights only: the end is chosen on the true residuals).
    let (mut t_lo, mut t_hi) = (r_lo, r_hi);
    let mut side = 0i8;
    for _ in 0..30 {
        if s_hi - s_lo <= 5e-3 * s_hi {
            break;
        }
        let t = (s_lo - r_lo * (s_hi - s_lo) / (r_hi - r_lo))
            .clamp(s_lo + 0.05 * (s_hi - s_lo), s_hi - 0.05 * (s_hi - s_lo));
        let (p, r) = probe(&p_lo, s_lo, t);
        if r > 0.0 {
            (s_hi, p_hi, r_hi, t_hi) = (t, p, r, r);
            if side == 1 {
                r_lo *= 0.5;
            }
            side = 1;
        } else {
            (s_lo, p_lo, r_lo, t_lo) = (t, p, r, r);
            if side == -1 {
                r_hi *= 0.5;
            }
            side = -1;
        }
        if r.abs() < 1e-3 * budget {
            break;
        }
    }
    // The end: the last point within budget; the slope over a tenth of the way.
    let (s_e, p_e) = if t_lo.abs() <= t_hi.abs() || side == 0 {
        (s_lo, p_lo)
    } else {
        (s_hi, p_hi)
    };
    // A last correction: the end lies on the valley floor as exactly as the
    // optimum does.
    let p_e = correct(obj, &p_e, stiff, FINAL_CORRECTIONS + 1 - EDGE_CORRECTIONS).0;
    let back = (0.1 * s_e).max(0.01);
    let (p_b, r_b) = probe(&p_e, s_e, s_e - back);
    let r_e = obj.d_at(&p_e) - d0 - budget;
    Move {
        from: x0.to_vec(),
        tangent: unit_between(&p_b, &p_e, v),
        direction: v.to_vec(),
        to: p_e,
        distance: s_e,
        open: false,
        slope: ((r_e - r_b) / back).max(0.0),
    }
}

/// Half-width (η units) of the search for the valley's lowest point.
pub const MIN_SEARCH: f64 = 3.0;

/// Largest s ≥ 0 keeping x + s·v inside ±[`ETA_LIMIT`].
pub fn limit(x: &[f64], v: &[f64]) -> f64 {
    v.iter()
        .zip(x)
        .filter(|(c, _)| c.abs() > 1e-12)
        .map(|(c, e)| {
            if *c > 0.0 {
                (ETA_LIMIT - e) / c
            } else {
                (-ETA_LIMIT - e) / c
            }
        })
        .fold(f64::INFINITY, f64::min)
        .max(0.0)
}

/// Unit vector from `a` to `b` (or `fallback` when they coincide).
fn unit_between(a: &[f64], b: &[f64], fallback: &[f64]) -> Vec<f64> {
    let diff: Vec<f64> = b.iter().zip(a).map(|(p, q)| p - q).collect();
    let norm = diff.iter().map(|x| x * x).sum::<f64>().sqrt();
    if norm > 1e-12 {
        diff.iter().map(|x| x / norm).collect()
    } else {
        fallback.to_vec()
    }
}

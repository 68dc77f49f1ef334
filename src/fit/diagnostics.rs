//! Which hyperparameters do the beliefs determine?
//!
//! At the optimum η* (the optimiser's unbounded scale) we take a central
//! finite-difference Hessian of the objective D on the fitting draws (common random
//! numbers make D deterministic, so differences are not swamped by noise) and its
//! symmetric eigen-decomposition (nalgebra). Along an eigenvector v with eigenvalue
//! μ, moving δ units of η changes D by about μδ²/2, so D rises by one Monte Carlo
//! noise floor f only after δ* = √(2f/μ): priors closer than δ* cannot be told apart
//! by the beliefs. Here f is the reference floor (the independent-draw floor at
//! 10,000 draws), so δ* does not change with the draws. The eigenvector names the
//! combination of hyperparameters (for example log_scale.mean and shape.meanlog
//! moving together). The call — determined, borderline, undetermined, pushed to a
//! bound — is not taken from δ* but from a profile of D along every weak direction
//! and every hyperparameter at a bound (|η| > 6, within 0.25 % of the range): see
//! [`super::profile`].
//!
//! Profiles: D along each free hyperparameter over its bounds, the others held at
//! the optimum (not re-optimised: a held profile shows curvature, not the profile
//! likelihood's envelope).

use super::objective::{from_eta, Objective};
use nalgebra::{DMatrix, SymmetricEigen};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Direction {
    #[serde(with = "crate::numerics::ext::num")]
    pub eigenvalue: f64,
    /// eigenvalue / largest eigenvalue
    #[serde(with = "crate::numerics::ext::num")]
    pub ratio: f64,
    /// Change of D for one unit of η along the direction, in noise floors.
    #[serde(with = "crate::numerics::ext::num")]
    pub floors_per_unit: f64,
    /// δ*: how far (in η units) one can move before D rises by one noise floor.
    #[serde(with = "crate::numerics::ext::num")]
    pub indistinguishable_halfwidth: f64,
    pub undetermined: bool,
    /// The call from the profile along the direction (determined without a
    /// profile when δ* is below [`super::profile::CANDIDATE`]).
    pub call: super::profile::Call,
    /// Width of the flat interval on the t scale, when profiled.
    pub width: Option<f64>,
    /// Eigenvector components by hyperparameter (unit length).
    pub combination: BTreeMap<String, f64>,
    /// E.g. "0.71·log_scale.mean − 0.70·shape.meanlog".
    pub description: String,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Identifiability {
    pub directions: Vec<Direction>,
    pub at_bound: Vec<String>,
    /// Hyperparameters with a large share in an undetermined direction.
    pub undetermined: Vec<String>,
    /// Hyperparameters with a large share in a borderline direction.
    pub borderline: Vec<String>,
    /// The profiles behind the calls (weak directions and hyperparameters at a bound).
    pub lines: Vec<super::profile::Line>,
    /// The floor the calls are measured in (see [`super::profile`]).
    #[serde(with = "crate::numerics::ext::num")]
    pub reference_floor: f64,
    /// D along each free hyperparameter, others held at the optimum: (value, D).
    pub profiles: BTreeMap<String, Vec<(f64, f64)>>,
    pub profile_rule: String,
    /// The largest finite-difference step (η units); steep coordinates use shorter ones.
    #[serde(with = "crate::numerics::ext::num")]
    pub step: f64,
}

/// The largest finite-difference step, η units ([`steps_for`] shortens it on steep coordinates).
pub const STEP: f64 = 0.05;
const BOUND_ETA: f64 = super::profile::ETA_LIMIT;

/// Central finite differences of `f` at `x` (with f(x) = `f0`) along the
/// coordinates `coords`, with step `steps[a]` on coordinate `coords[a]`: the
/// Hessian (coords × coords) and the gradient. Diagonal terms and the gradient use
/// f(x ± h_a e_a); a cross term uses f(x ± (h_a e_a + h_b e_b)) with those:
/// H_ab = [f(x+h_a e_a+h_b e_b) + f(x−h_a e_a−h_b e_b) − f(x+h_a e_a) − f(x−h_a e_a)
/// − f(x+h_b e_b) − f(x−h_b e_b) + 2f(x)] / (2 h_a h_b), second-order accurate like
/// the four-point formula, from 2m + m(m − 1) evaluations (31 for five
/// hyperparameters, not 51). They run in parallel; each is a deterministic
/// function of its point, so the result does not depend on the number of threads.
pub fn fd_hessian(
    f: &(dyn Fn(&[f64]) -> f64 + Sync),
    x: &[f64],
    coords: &[usize],
    steps: &[f64],
    f0: f64,
) -> (DMatrix<f64>, Vec<f64>) {
    differences(f, x, coords, steps, f0, true)
}

/// As [`fd_hessian`] without the cross terms (left 0): the diagonal of the
/// Hessian and the gradient, from 2m evaluations.
pub fn fd_diagonal(
    f: &(dyn Fn(&[f64]) -> f64 + Sync),
    x: &[f64],
    coords: &[usize],
    steps: &[f64],
    f0: f64,
) -> (DMatrix<f64>, Vec<f64>) {
    differences(f, x, coords, steps, f0, false)
}

/// Steps for [`fd_hessian`] from curvatures `diag` (H_aa): √(8f/H_aa), over
/// which D changes by about four noise floors f, within [10⁻³, [`STEP`]]. Over a
/// longer step a steep coordinate's differences carry a third-order bias (the
/// gradient would vanish short of the optimum); a coordinate with δ* near the
/// undetermined threshold has H_aa ≤ 32f and keeps the full step.
pub fn steps_for(diag: &[f64], floor: f64) -> Vec<f64> {
    diag.iter()
        .map(|&c| {
            if c > 0.0 {
                (8.0 * floor / c).sqrt().clamp(1e-3, STEP)
            } else {
                STEP
            }
        })
        .collect()
}

fn differences(
    f: &(dyn Fn(&[f64]) -> f64 + Sync),
    x: &[f64],
    coords: &[usize],
    steps: &[f64],
    f0: f64,
    cross: bool,
) -> (DMatrix<f64>, Vec<f64>) {
    use rayon::prelude::*;
    let m = coords.len();
    // Displacements as (coordinate, offset) lists, in a fixed order: first the
    // axis points, then the diagonal pairs.
    let mut moves: Vec<Vec<(usize, f64)>> = Vec::new();
    for (&c, &h) in coords.iter().zip(steps) {
        moves.push(vec![(c, h)]);
        moves.push(vec![(c, -h)]);
    }
    if cross {
        for a in 0..m {
            for b in 0..a {
                for s in [1.0, -1.0] {
                    moves.push(vec![(coords[a], s * steps[a]), (coords[b], s * steps[b])]);
                }
            }
        }
    }
    let vals: Vec<f64> = moves
        .par_iter()
        .map(|mv| {
            let mut y = x.to_vec();
            for (k, d) in mv {
                y[*k] += d;
            }
            f(&y)
        })
        .collect();
    let mut h = DMatrix::<f64>::zeros(m, m);
    let mut g = vec![0.0; m];
    for a in 0..m {
        let (fp, fm) = (vals[2 * a], vals[2 * a + 1]);
        h[(a, a)] = (fp - 2.0 * f0 + fm) / (steps[a] * steps[a]);
        g[a] = (fp - fm) / (2.0 * steps[a]);
    }
    if cross {
        let mut k = 2 * m;
        for a in 0..m {
            for b in 0..a {
                let (pp, mm) = (vals[k], vals[k + 1]);
                k += 2;
                let axis = vals[2 * a] + vals[2 * a + 1] + vals[2 * b] + vals[2 * b + 1];
                let v = (pp + mm - axis + 2.0 * f0) / (2.0 * steps[a] * steps[b]);
                h[(a, b)] = v;
                h[(b, a)] = v;
            }
        }
    }
    (h, g)
}

/// Analyse the objective `obj` (κ ignored) around the optimum `eta`. `pre` is the
/// Hessian of D at `eta` over every free hyperparameter, when the optimiser has
/// already computed it there (by [`fd_hessian`] with steps from [`steps_for`]);
/// without it the analysis takes the same differences itself. `profiles`: trace
/// the held profiles.
pub fn analyse(
    obj: &Objective,
    eta: &[f64],
    pre: Option<&DMatrix<f64>>,
    profiles: bool,
) -> Identifiability {
    let hy = obj.spec.hypers();
    let names: Vec<String> = obj.free.iter().map(|&i| hy[i].name.clone()).collect();
    let f = |x: &[f64]| obj.d_at(x);
    let floor = obj.floor();
    let f_ref = obj.reference_floor();
    let d0 = f(eta);
    let mut lines: Vec<super::profile::Line> = Vec::new();
    let at_bound: Vec<usize> = (0..eta.len())
        .filter(|&k| eta[k].abs() > BOUND_ETA)
        .collect();
    let inner: Vec<usize> = (0..eta.len()).filter(|k| !at_bound.contains(k)).collect();
    let m = inner.len();
    let h = match pre {
        Some(full) if full.nrows() == eta.len() => {
            DMatrix::from_fn(m, m, |a, b| full[(inner[a], inner[b])])
        }
        _ => {
            let f0 = f(eta);
            let (d0, _) = fd_diagonal(&f, eta, &inner, &vec![STEP; m], f0);
            let diag: Vec<f64> = (0..m).map(|a| d0[(a, a)]).collect();
            fd_hessian(&f, eta, &inner, &steps_for(&diag, floor), f0).0
        }
    };
    // The same Hessian over every free hyperparameter (zero rows at a bound).
    let d = eta.len();
    let hfull = DMatrix::from_fn(d, d, |a, b| {
        match (
            inner.iter().position(|&k| k == a),
            inner.iter().position(|&k| k == b),
        ) {
            (Some(i), Some(j)) => h[(i, j)],
            _ => 0.0,
        }
    });
    let hfull = &hfull;
    // Profiles run on the first quarter of the draws (a whole net of the
    // scrambled sequence when N is a power of two): the calls are measured in
    // the fixed reference floor, which that many scrambled points resolve.
    let quarter = Objective::new(
        obj.spec,
        (obj.n() / 4).max(1000).min(obj.n()),
        &obj.plan,
        obj.kind,
    );
    let mut directions = Vec::new();
    let mut undetermined: Vec<String> = Vec::new();
    let mut borderline: Vec<String> = Vec::new();
    if m > 0 && h.iter().all(|v| v.is_finite()) {
        let eig = SymmetricEigen::new(h);
        let max = eig
            .eigenvalues
            .iter()
            .cloned()
            .fold(0.0f64, f64::max)
            .max(1e-300);
        let mut order: Vec<usize> = (0..m).collect();
        order.sort_by(|a, b| eig.eigenvalues[*a].total_cmp(&eig.eigenvalues[*b]));
        for j in order {
            let mu = eig.eigenvalues[j];
            let v = eig.eigenvectors.column(j);
            // Sign convention: largest component positive.
            let big = (0..m)
                .max_by(|a, b| v[*a].abs().total_cmp(&v[*b].abs()))
                .unwrap_or(0);
            let sign = if v[big] < 0.0 { -1.0 } else { 1.0 };
            let mut combination = BTreeMap::new();
            let mut parts = Vec::new();
            let mut comps: Vec<(usize, f64)> = (0..m).map(|a| (a, sign * v[a])).collect();
            comps.sort_by(|x, y| y.1.abs().total_cmp(&x.1.abs()));
            for (a, c) in &comps {
                combination.insert(names[inner[*a]].clone(), *c);
                if c.abs() >= 0.2 {
                    let s = if parts.is_empty() {
                        format!("{:.2}·{}", c, names[inner[*a]])
                    } else {
                        format!(
                            "{} {:.2}·{}",
                            if *c < 0.0 { "−" } else { "+" },
                            c.abs(),
                            names[inner[*a]]
                        )
                    };
                    parts.push(s);
                }
            }
            let floors_per_unit = 0.5 * mu.max(0.0) / f_ref;
            let halfwidth = 1.0 / floors_per_unit.max(1e-300).sqrt();
            let description = parts.join(" ");
            let (call, width) = if halfwidth > super::profile::CANDIDATE {
                let mut dir = vec![0.0; eta.len()];
                for a in 0..m {
                    dir[inner[a]] = sign * v[a];
                }
                let stiff = super::tiebreak::stiff_directions(obj, eta, hfull, &[&dir]);
                let mut l = super::profile::line(
                    &quarter,
                    eta,
                    dir,
                    &stiff,
                    f_ref,
                    super::tiebreak::MIN_SEARCH,
                );
                l.description = description.clone();
                let out = (l.call, Some(l.width));
                lines.push(l);
                out
            } else {
                (super::profile::Call::Determined, None)
            };
            let list = match call {
                super::profile::Call::Undetermined => Some(&mut undetermined),
                super::profile::Call::Borderline => Some(&mut borderline),
                _ => None,
            };
            if let Some(list) = list {
                for (a, c) in &comps {
                    let n = &names[inner[*a]];
                    if c.abs() >= 0.3 && !list.contains(n) {
                        list.push(n.clone());
                    }
                }
            }
            directions.push(Direction {
                eigenvalue: mu,
                ratio: mu / max,
                floors_per_unit,
                indistinguishable_halfwidth: halfwidth,
                undetermined: call == super::profile::Call::Undetermined,
                call,
                width,
                combination,
                description,
            });
        }
    }
    // Hyperparameters at a bound: flat inwards (undetermined) or pushed there.
    let mut pushed = Vec::new();
    for &k in &at_bound {
        let mut l = super::profile::bound_line(obj, eta, k, d0, f_ref);
        if l.call.is_flat() {
            // Flat inwards: D may be lower further in, so measure the flat
            // interval from the valley's lowest point along the axis, as for an
            // interior direction (the whole range is searched).
            let dir = l.direction.clone();
            let stiff = super::tiebreak::stiff_directions(obj, eta, hfull, &[&dir]);
            let reach = super::tiebreak::limit(eta, &dir);
            let mut v = super::profile::line(&quarter, eta, dir, &stiff, f_ref, reach);
            let still = v.valley_min[k].abs() > super::profile::ETA_LIMIT - 1e-9;
            v.call = super::profile::call_for(v.width, still);
            v.at_bound = Some(k);
            l = v;
        }
        l.description = format!(
            "{} at its {} bound",
            names[k],
            if eta[k] > 0.0 { "upper" } else { "lower" }
        );
        match l.call {
            super::profile::Call::PushedToBound => pushed.push(names[k].clone()),
            super::profile::Call::Undetermined => undetermined.push(names[k].clone()),
            _ => borderline.push(names[k].clone()),
        }
        lines.push(l);
    }
    // Held profiles across the bounds.
    let mut held = BTreeMap::new();
    if profiles {
        use rayon::prelude::*;
        // On the quarter of the draws: the profiles are a picture of D across
        // the range, and cost 25 evaluations per hyperparameter.
        let f = |x: &[f64]| quarter.d_at(x);
        let traced: Vec<(String, Vec<(f64, f64)>)> = obj
            .free
            .par_iter()
            .enumerate()
            .map(|(k, &i)| {
                let pts = (0..25)
                    .map(|g| {
                        let t = 0.01 + 0.98 * g as f64 / 24.0;
                        let e = crate::numerics::logit(t);
                        let mut x = eta.to_vec();
                        x[k] = e;
                        (from_eta(&hy[i], e), f(&x))
                    })
                    .collect();
                (hy[i].name.clone(), pts)
            })
            .collect();
        held.extend(traced);
    }
    Identifiability {
        directions,
        at_bound: pushed,
        undetermined,
        borderline,
        lines,
        reference_floor: f_ref,
        profiles: held,
        profile_rule: if profiles {
            "other hyperparameters held at the optimum; a quarter of the draws"
        } else {
            "not traced (batch model folder; `fit` on the row's spec.toml traces them)"
        }
        .to_string(),
        step: STEP,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// On a quadratic f(x) = ½xᵀAx + bᵀx + c central differences are exact, so the
    /// Hessian is A and the gradient Ax + b to rounding, cross terms included
    /// (the diagonal-pair formula is exact for quadratics).
    #[test]
    fn differences_are_exact_on_a_quadratic() {
        let a = [[4.0, 1.5, -0.5], [1.5, 3.0, 0.25], [-0.5, 0.25, 2.0]];
        let b = [0.3, -1.0, 2.0];
        let f = |x: &[f64]| {
            let mut s = 0.7;
            for i in 0..3 {
                s += b[i] * x[i];
                for j in 0..3 {
                    s += 0.5 * x[i] * a[i][j] * x[j];
                }
            }
            s
        };
        let x = [0.2, -0.4, 1.1];
        let (h, g) = fd_hessian(&f, &x, &[0, 1, 2], &[0.05, 0.01, 0.03], f(&x));
        for i in 0..3 {
            let gi: f64 = b[i] + (0..3).map(|j| a[i][j] * x[j]).sum::<f64>();
            assert!((g[i] - gi).abs() < 1e-10, "gradient {i}: {} vs {gi}", g[i]);
            for j in 0..3 {
                assert!(
                    (h[(i, j)] - a[i][j]).abs() < 1e-8,
                    "H[{i},{j}] = {}",
                    h[(i, j)]
                );
            }
        }
        // A subset of coordinates gives the sub-matrix; the diagonal-only form
        // leaves cross terms at zero.
        let (h2, _) = fd_hessian(&f, &x, &[2, 0], &[0.05, 0.05], f(&x));
        assert!((h2[(0, 1)] - a[2][0]).abs() < 1e-8);
        let (hd, gd) = fd_diagonal(&f, &x, &[0, 1, 2], &[0.05, 0.01, 0.03], f(&x));
        assert_eq!(hd[(0, 1)], 0.0);
        for a in 0..3 {
            assert!((gd[a] - g[a]).abs() < 1e-10);
        }
        assert_eq!(hd[(1, 1)], h[(1, 1)]);
    }
}

//! The Monte Carlo error of every fitted hyperparameter.
//!
//! The fitted η̂ minimises a sample-average objective D_N, so it carries an error
//! of its own. For the directions the beliefs determine, the sandwich form of a
//! sample-average optimum (Shapiro, Dentcheva & Ruszczyński, Lectures on
//! Stochastic Programming, 2009, ch. 5) gives Var(η̂) ≈ H⁺ Var(∇D_N) H⁺, with H
//! the Hessian of D at the optimum (its pseudo-inverse over the determined
//! eigen-directions) and Var(∇D_N) the covariance of the gradient over R
//! independent replicates of the whole draw set at the same N (independent
//! scrambles: batches of one scrambled sequence are not independent). A move of
//! the tie-break ends where D has risen by the reference floor; its distance s
//! moves by δ(D(end) − D(start))/D′(end) along the valley floor's tangent, so
//! its variance is the replicates' variance of that rise over the squared slope
//! (the delta method). Moves that end at the edge of the range carry no error
//! along the move. The gradients are taken at the final point (after the
//! tie-break), where D is stationary in the determined directions. The result is on the optimiser's
//! scale; `super::assemble` maps it to each hyperparameter's own scale.

use super::diagnostics::fd_diagonal;
use super::objective::Objective;
use super::tiebreak::Move;
use crate::rng::Plan;
use crate::spec::Spec;
use nalgebra::{DMatrix, SymmetricEigen};
use rayon::prelude::*;

/// Independent replicates for the gradient covariance.
pub const REPLICATES: u64 = 8;

/// Standard errors on the η scale for every free hyperparameter: `None` where the
/// beliefs leave it undetermined and no tie-break settled it. `eta0` is the fitted
/// point, `h` the Hessian of D over the free hyperparameters at the optimum,
/// `steps` its difference steps;
/// `inner` the free indices not at a bound; `flat` the unit directions left flat
/// (settled by `moves` when the tie-break ran).
#[allow(clippy::too_many_arguments)]
pub fn errors(
    spec: &Spec,
    n: usize,
    eta0: &[f64],
    h: &DMatrix<f64>,
    steps: &[f64],
    inner: &[usize],
    flat: &[Vec<f64>],
    moves: &[Move],
) -> Vec<Option<f64>> {
    let d = eta0.len();
    let m = inner.len();
    let kind = spec.fit.discrepancy;
    // Replicates: gradient over the inner coordinates at η0, and each move's rise.
    let reps: Vec<(Vec<f64>, Vec<f64>)> = (1..=REPLICATES)
        .into_par_iter()
        .map(|r| {
            let obj = Objective::new(spec, n, &Plan::replicate(spec.seed, r, spec.points), kind);
            let f = |x: &[f64]| obj.d_at(x);
            let st: Vec<f64> = inner.iter().map(|&a| steps[a]).collect();
            let (_, g) = fd_diagonal(&f, eta0, inner, &st, 0.0);
            let rises = moves
                .iter()
                .filter(|mv| mv.distance > 0.0 && !mv.open)
                .map(|mv| f(&mv.to) - f(&mv.from))
                .collect();
            (g, rises)
        })
        .collect();
    let r = reps.len() as f64;
    let mut cov = DMatrix::<f64>::zeros(m, m);
    let mean: Vec<f64> = (0..m)
        .map(|a| reps.iter().map(|(g, _)| g[a]).sum::<f64>() / r)
        .collect();
    for (g, _) in &reps {
        for a in 0..m {
            for b in 0..m {
                cov[(a, b)] += (g[a] - mean[a]) * (g[b] - mean[b]) / (r - 1.0);
            }
        }
    }
    // Pseudo-inverse of H over the determined eigen-directions.
    let hi = DMatrix::from_fn(m, m, |a, b| h[(inner[a], inner[b])]);
    let mut pinv = DMatrix::<f64>::zeros(m, m);
    let mut known = vec![true; d];
    if m > 0 && hi.iter().all(|v| v.is_finite()) {
        let eig = SymmetricEigen::new(hi);
        for j in 0..m {
            let u = eig.eigenvectors.column(j);
            let is_flat = flat.iter().any(|v| {
                let dot: f64 = (0..m).map(|a| u[a] * v[inner[a]]).sum();
                dot.abs() > 0.7
            });
            let mu = eig.eigenvalues[j];
            // A flat direction the tie-break settled carries the error of its
            // move (below); left unsettled, or any other direction without
            // positive curvature, it has none to report.
            let settled = is_flat && !moves.is_empty();
            if is_flat || mu <= 0.0 {
                if !settled {
                    for a in 0..m {
                        if u[a].abs() >= 0.3 {
                            known[inner[a]] = false;
                        }
                    }
                }
                continue;
            }
            pinv += (u * u.transpose()) / mu;
        }
    }
    let sand = &pinv * cov * &pinv;
    let mut var = vec![0.0; d];
    for a in 0..m {
        var[inner[a]] = sand[(a, a)].max(0.0);
    }
    let closed = moves.iter().filter(|mv| mv.distance > 0.0 && !mv.open);
    for (k, mv) in closed.enumerate() {
        let rises: Vec<f64> = reps.iter().map(|(_, e)| e[k]).collect();
        let mean = rises.iter().sum::<f64>() / r;
        let vr = rises.iter().map(|e| (e - mean).powi(2)).sum::<f64>() / (r - 1.0);
        // δs along the flat direction moves the end along the valley's tangent
        // by δs / (v·t).
        let along: f64 = mv
            .direction
            .iter()
            .zip(&mv.tangent)
            .map(|(p, q)| p * q)
            .sum();
        if mv.slope > 0.0 && along.abs() > 1e-3 {
            let vs = vr / (mv.slope * mv.slope * along * along);
            for (a, c) in mv.tangent.iter().enumerate() {
                var[a] += vs * c * c;
            }
        }
    }
    (0..d).map(|a| known[a].then(|| var[a].sqrt())).collect()
}

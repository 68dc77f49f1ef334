//! Everything after the optimum: the polish, identifiability, the tie-break,
//! what set each hyperparameter, and the Monte Carlo errors.

use super::tuning::TUNING;
use super::*;
use crate::error::Result;
use crate::fit::objective::Objective;
use crate::spec::Spec;

/// What a single fit produces before judgement.
pub struct Point {
    pub h: Vec<f64>,
    /// The optimum before the tie-break (full vector), for warm starts.
    pub optimum: Vec<f64>,
    pub opt: OptimiserRecord,
    pub ident: diagnostics::Identifiability,
    pub front: Option<pareto::Front>,
    pub tie_break: TieBreakUsed,
    /// Per free hyperparameter: what set it, and its Monte Carlo standard error
    /// on the optimiser's scale (None: not determined, or not estimated).
    pub set_by: Vec<SetBy>,
    pub mc_eta: Vec<Option<f64>>,
    /// Largest ratio of a determined hyperparameter's Monte Carlo error to its
    /// precision target (0 when none was estimated).
    pub worst: f64,
}

/// Solve ∇D = 0 at the optimum, with the gradient from central differences over
/// the steps `steps` and the fixed Hessian `hess`: η ← η − H⁺g over the directions
/// with curvature above two floors. An empirical objective has small kinks (the
/// order of the draws changes), on which a line search can stall short of the
/// optimum of the smooth part; the root of the differenced gradient is defined
/// by the smooth part, moves with the draws as the sandwich estimate of
/// [`mc_error`] assumes, and halved the seed-to-seed spread of the relapse-free
/// starter's hyperparameters. A polish that raises D by more than a tenth of a
/// floor (an objective far from smooth) is not taken.
fn polish(
    obj: &Objective,
    eta: Vec<f64>,
    hess: &nalgebra::DMatrix<f64>,
    steps: &[f64],
) -> Vec<f64> {
    let d = eta.len();
    let inner: Vec<usize> = (0..d)
        .filter(|&k| eta[k].abs() <= profile::ETA_LIMIT)
        .collect();
    let m = inner.len();
    if m == 0 || !hess.iter().all(|v| v.is_finite()) {
        return eta;
    }
    let floor = obj.floor();
    let hi = nalgebra::DMatrix::from_fn(m, m, |a, b| hess[(inner[a], inner[b])]);
    let eig = nalgebra::SymmetricEigen::new(hi);
    let f = |x: &[f64]| obj.d_at(x);
    let st: Vec<f64> = inner.iter().map(|&a| steps[a]).collect();
    let start = f(&eta);
    let mut x = eta.clone();
    for _ in 0..TUNING.polish_iterations {
        let (_, g) = diagnostics::fd_diagonal(&f, &x, &inner, &st, 0.0);
        let mut step = vec![0.0; m];
        for j in 0..m {
            let mu = eig.eigenvalues[j];
            if mu > 2.0 * floor {
                let u = eig.eigenvectors.column(j);
                let proj: f64 = (0..m).map(|a| u[a] * g[a]).sum();
                for a in 0..m {
                    step[a] -= proj / mu * u[a];
                }
            }
        }
        let big = step.iter().fold(0.0f64, |b, s| b.max(s.abs()));
        let t = if big > TUNING.newton_max_step {
            TUNING.newton_max_step / big
        } else {
            1.0
        };
        for a in 0..m {
            x[inner[a]] += t * step[a];
        }
        if big < 1e-7 {
            break;
        }
    }
    if f(&x) <= start + 0.1 * floor {
        x
    } else {
        eta
    }
}

/// Everything after the optimum: identifiability, tie-break, Monte Carlo errors.
pub(super) fn settle(spec: &Spec, o: Optimum) -> Result<Point> {
    // A cancelled search ends here, before the analysis.
    spec.fit.cancel.check()?;
    use crate::spec::TieBreak;
    let Optimum {
        eta: eta0,
        hessian,
        record: mut opt,
        ..
    } = o;
    let mut obj = Objective::fitting(spec);
    let d = eta0.len();
    // The Hessian at the optimum: Newton's last, or computed here.
    let (hess, steps) = match hessian {
        Some(x) => x,
        None => {
            let f = |x: &[f64]| obj.d_at(x);
            let coords: Vec<usize> = (0..d).collect();
            let f0 = f(&eta0);
            let (d0, _) =
                diagnostics::fd_diagonal(&f, &eta0, &coords, &vec![diagnostics::STEP; d], f0);
            let diag: Vec<f64> = (0..d).map(|a| d0[(a, a)]).collect();
            let steps = diagnostics::steps_for(&diag, obj.floor());
            (
                diagnostics::fd_hessian(&f, &eta0, &coords, &steps, f0).0,
                steps,
            )
        }
    };
    let eta0 = polish(&obj, eta0, &hess, &steps);
    let h0 = obj.full(&eta0);
    let ident = diagnostics::analyse(&obj, &eta0, Some(&hess), spec.fit.profiles);
    let f_ref = ident.reference_floor;
    let mut moves = Vec::new();
    let any_flat = ident.lines.iter().any(|l| l.call.is_flat());
    let (eta, front, how) = match spec.fit.tie_break {
        TieBreak::Off => (eta0.clone(), None, TieBreakUsed::Off),
        TieBreak::Auto | TieBreak::Widest if !any_flat => (eta0.clone(), None, TieBreakUsed::Off),
        TieBreak::Auto | TieBreak::Widest => {
            let quarter = Objective::new(
                spec,
                (spec.draws / 4).max(1000).min(spec.draws),
                &spec.plan(),
                spec.fit.discrepancy,
            );
            let (x, mv) = tiebreak::widest(&obj, &quarter, &eta0, &hess, &ident.lines, f_ref);
            moves = mv;
            let front = spec
                .fit
                .trace_front
                .then(|| pareto::trace(&mut obj, &eta0, "widest"));
            (x, front, TieBreakUsed::Widest)
        }
        TieBreak::Kappa(k) => {
            obj.kappa = k * obj.floor();
            let dd = d as u64;
            let r = simplex::local(
                &|e: &[f64]| obj.cost(e),
                &eta0,
                0.3,
                120 * dd + 60,
                1e-3 * obj.floor(),
            );
            obj.kappa = 0.0;
            (r.x, None, TieBreakUsed::Kappa(k))
        }
        TieBreak::Knee => {
            let f = pareto::trace(&mut obj, &eta0, "knee");
            let x = obj.eta(&f.points[f.chosen].hyperparameters);
            (x, Some(f), TieBreakUsed::Knee)
        }
    };
    opt.evaluations += obj.evaluations();
    // What set each free hyperparameter.
    let hy = spec.hypers();
    let names: Vec<&str> = obj.free.iter().map(|&i| hy[i].name.as_str()).collect();
    let tie_ran = how != TieBreakUsed::Off;
    let set_by: Vec<SetBy> = (0..d)
        .map(|k| {
            let flat = ident
                .lines
                .iter()
                .any(|l| l.call.is_flat() && l.direction[k].abs() >= 0.3);
            if ident.at_bound.iter().any(|n| n == names[k]) {
                SetBy::Bound
            } else if flat && tie_ran {
                if eta[k].abs() >= profile::ETA_LIMIT - 1e-9 {
                    SetBy::Bound
                } else {
                    SetBy::TieBreak
                }
            } else if flat {
                SetBy::Undetermined
            } else {
                SetBy::Beliefs
            }
        })
        .collect();
    // Monte Carlo errors (the tie-break's only for the direct solve).
    let inner: Vec<usize> = (0..d)
        .filter(|&k| eta0[k].abs() <= profile::ETA_LIMIT)
        .collect();
    let flat_dirs: Vec<Vec<f64>> = ident
        .lines
        .iter()
        .filter(|l| l.call.is_flat() && l.at_bound.is_none())
        .map(|l| l.direction.clone())
        .collect();
    let mc_eta = if spec.fit.mc_errors && d > 0 {
        let mv: &[tiebreak::Move] = if how == TieBreakUsed::Widest {
            &moves
        } else {
            &[]
        };
        let mut e = mc_error::errors(
            spec, spec.draws, &eta, &hess, &steps, &inner, &flat_dirs, mv,
        );
        for (k, s) in set_by.iter().enumerate() {
            if *s == SetBy::Bound {
                e[k] = Some(0.0);
            } else if *s == SetBy::TieBreak && how != TieBreakUsed::Widest {
                e[k] = None;
            }
        }
        e
    } else {
        vec![None; d]
    };
    // Precision: each determined hyperparameter's error against its target.
    let rel = spec
        .precision
        .map_or(crate::spec::DEFAULT_PRECISION, |p| p.relative);
    let mut worst: f64 = 0.0;
    for k in 0..d {
        if set_by[k] != SetBy::Beliefs {
            continue;
        }
        let Some(se) = mc_eta[k] else { continue };
        let i = obj.free[k];
        let target = match hy[i].value {
            crate::templates::HyperValue::Free { lo, .. } if lo > 0.0 => {
                let v = objective::from_eta(&hy[i], eta[k]);
                rel * v / objective::lambda_per_eta(&hy[i], eta[k])
            }
            _ => {
                let dstar = (2.0 * f_ref / hess[(k, k)].max(1e-300)).sqrt();
                (0.1 * dstar).min(LOCATION_TARGET)
            }
        };
        worst = worst.max(se / target);
    }
    Ok(Point {
        h: obj.full(&eta),
        optimum: h0,
        opt,
        ident,
        front,
        tie_break: how,
        set_by,
        mc_eta,
        worst,
    })
}

/// Largest Monte Carlo error of a determined location hyperparameter (means,
/// meanlogs), on the optimiser's scale, in precision mode.
pub const LOCATION_TARGET: f64 = 0.005;

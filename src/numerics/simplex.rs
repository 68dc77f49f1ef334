//! Nelder–Mead (argmin 0.11) around a plain closure, for the small inner problems
//! (fitting a family to quantiles) and the local stage of a fit.

use argmin::core::{CostFunction, Executor, State, TerminationReason, TerminationStatus};
use argmin::solver::neldermead::NelderMead;

struct Closure<'a, F: Fn(&[f64]) -> f64>(&'a F);

impl<F: Fn(&[f64]) -> f64> CostFunction for Closure<'_, F> {
    type Param = Vec<f64>;
    type Output = f64;
    fn cost(&self, p: &Vec<f64>) -> Result<f64, argmin::core::Error> {
        let v = (self.0)(p);
        // The simplex copes with +inf (a rejected point) but not with NaN.
        Ok(if v.is_nan() { f64::INFINITY } else { v })
    }
}

/// Why a local search stopped.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Stop {
    Converged,
    MaxIterations,
    Other(String),
}

/// Outcome of one local search.
#[derive(Debug, Clone)]
pub struct Local {
    pub x: Vec<f64>,
    pub f: f64,
    pub iterations: u64,
    pub stop: Stop,
}

/// Minimise `f` from `x0` with an axis-aligned initial simplex of size `step`,
/// stopping when the simplex's function values have sd below `sd_tol`.
pub fn local(
    f: &impl Fn(&[f64]) -> f64,
    x0: &[f64],
    step: f64,
    max_iters: u64,
    sd_tol: f64,
) -> Local {
    let mut simplex = vec![x0.to_vec()];
    for i in 0..x0.len() {
        let mut p = x0.to_vec();
        p[i] += step;
        simplex.push(p);
    }
    let solver = match NelderMead::new(simplex).with_sd_tolerance(sd_tol.max(0.0)) {
        Ok(s) => s,
        Err(e) => {
            return Local {
                x: x0.to_vec(),
                f: f(x0),
                iterations: 0,
                stop: Stop::Other(e.to_string()),
            }
        }
    };
    let run = Executor::new(Closure(f), solver)
        .configure(|s| s.max_iters(max_iters))
        .run();
    match run {
        Ok(res) => {
            let st = res.state();
            let x = st.get_best_param().cloned().unwrap_or_else(|| x0.to_vec());
            let stop = match st.get_termination_status() {
                TerminationStatus::Terminated(TerminationReason::SolverConverged) => {
                    Stop::Converged
                }
                TerminationStatus::Terminated(TerminationReason::MaxItersReached) => {
                    Stop::MaxIterations
                }
                other => Stop::Other(format!("{other:?}")),
            };
            Local {
                f: st.get_best_cost(),
                iterations: st.get_iter(),
                x,
                stop,
            }
        }
        Err(e) => Local {
            x: x0.to_vec(),
            f: f(x0),
            iterations: 0,
            stop: Stop::Other(e.to_string()),
        },
    }
}

/// Nelder–Mead from `x0` with an initial simplex of size `wide.0` (at most
/// `wide.1` iterations), restarted from its best point with size `narrow.0` (at
/// most `narrow.1`): a restart guards against a simplex that collapsed early.
/// Returns the better of the two searches.
pub fn restarted(
    f: &impl Fn(&[f64]) -> f64,
    x0: &[f64],
    wide: (f64, u64),
    narrow: (f64, u64),
    sd_tol: f64,
) -> Local {
    let a = local(f, x0, wide.0, wide.1, sd_tol);
    let b = local(f, &a.x, narrow.0, narrow.1, sd_tol);
    if b.f <= a.f {
        b
    } else {
        a
    }
}

/// Convenience: best point and value.
pub fn minimise(
    f: &impl Fn(&[f64]) -> f64,
    x0: &[f64],
    step: f64,
    max_iters: u64,
    sd_tol: f64,
) -> (Vec<f64>, f64) {
    let r = local(f, x0, step, max_iters, sd_tol);
    (r.x, r.f)
}

/// A one-dimensional closure for argmin's Brent minimiser.
struct Scalar<'a, F: Fn(f64) -> f64>(&'a F);

impl<F: Fn(f64) -> f64> CostFunction for Scalar<'_, F> {
    type Param = f64;
    type Output = f64;
    fn cost(&self, p: &f64) -> Result<f64, argmin::core::Error> {
        let v = (self.0)(*p);
        Ok(if v.is_nan() { f64::INFINITY } else { v })
    }
}

/// Minimise `f` on [lo, hi] with Brent's method (argmin 0.11 `BrentOpt`:
/// parabolic interpolation with golden-section safeguards), to an absolute
/// tolerance `tol` in x; returns (x, f(x)), or the better end when it fails.
pub fn brent_min(
    f: &impl Fn(f64) -> f64,
    lo: f64,
    hi: f64,
    tol: f64,
    max_iters: u64,
) -> (f64, f64) {
    use argmin::solver::brent::BrentOpt;
    let solver = BrentOpt::new(lo, hi).set_tolerance(1e-8, tol);
    let run = Executor::new(Scalar(f), solver)
        .configure(|s| s.max_iters(max_iters))
        .run();
    match run {
        Ok(r) => {
            let st = r.state();
            match (st.get_best_param(), st.get_best_cost()) {
                (Some(x), c) if c.is_finite() => (*x, c),
                _ => ends(f, lo, hi),
            }
        }
        Err(_) => ends(f, lo, hi),
    }
}

fn ends(f: &impl Fn(f64) -> f64, lo: f64, hi: f64) -> (f64, f64) {
    let (a, b) = (f(lo), f(hi));
    if a <= b {
        (lo, a)
    } else {
        (hi, b)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rosenbrock() {
        // Minimum at (1, 1) (Rosenbrock 1960; the standard test in argmin's examples).
        let f = |x: &[f64]| (1.0 - x[0]).powi(2) + 100.0 * (x[1] - x[0] * x[0]).powi(2);
        let r = local(&f, &[-1.2, 1.0], 0.5, 5000, 1e-14);
        assert!(
            (r.x[0] - 1.0).abs() < 1e-4 && (r.x[1] - 1.0).abs() < 1e-4,
            "{:?}",
            r
        );
        assert_eq!(r.stop, Stop::Converged);
    }
}

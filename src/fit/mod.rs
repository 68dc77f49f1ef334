//! Fitting: a global stage of space-filling starts on a coarse set of draws,
//! Nelder–Mead local searches from the best three of them (`[fit] searches`, in
//! parallel with rayon), Newton refinement at the full
//! number of draws (its last Hessian is the identifiability analysis's), then
//! judgement of the optimum on fresh, independent draws against the Monte Carlo
//! noise floor.
//!
//! Reproducibility: every random number comes from the seed (the Latin-hypercube
//! starts from a child seed), each local search is a deterministic function of
//! its start, and results are reduced in start order, so the fit is the same on
//! any number of threads.

mod assemble;
pub mod diagnostics;
pub mod mc_error;
pub mod objective;
mod optimise;
pub mod pareto;
pub mod profile;
pub mod record;
pub mod replicate;
mod result;
mod settle;
pub mod tuning;
pub use crate::numerics::simplex;
pub mod tiebreak;
pub mod verdict;

use crate::discrepancy::Kind;
use crate::error::{Error, Result};
use crate::rng;
use crate::spec::Spec;
use objective::Objective;
use std::time::Instant;

pub use assemble::assemble;
pub use optimise::{coarse_draws, optimise, Optimum};
pub use result::*;
pub use settle::{Point, LOCATION_TARGET};
use tuning::TUNING;
pub use verdict::{BeliefReport, Verdict};

/// Progress callback: (done, total) steps — the local searches of the fit, then
/// one step per replicate fit.
pub type Progress<'a> = &'a (dyn Fn(usize, usize) + Sync);

/// Optimise, analyse identifiability, apply the tie-break rule and estimate the
/// Monte Carlo errors. `warm`: a full hyperparameter vector to add as a start of
/// the global stage. See [`fit_point_from`] to skip the global stage.
pub fn fit_point(spec: &Spec, warm: Option<&[f64]>, progress: Option<Progress>) -> Result<Point> {
    let o = optimise(spec, 0.0, warm, progress)?;
    settle::settle(spec, o)
}

/// As [`fit_point`], refining from `start` (a full vector, e.g. the optimum at
/// fewer draws) by Newton at full draws, without the global stage.
pub fn fit_point_from(spec: &Spec, start: &[f64]) -> Result<Point> {
    let obj = Objective::fitting(spec);
    let d = obj.free.len();
    let x0 = obj.eta(start);
    let r = optimise::refine(&obj, &obj, &x0, TUNING.newton_tol * obj.floor(), d);
    let o = Optimum {
        h: obj.full(&r.x),
        eta: r.x,
        hessian: r.hessian,
        record: OptimiserRecord {
            evaluations: obj.evaluations(),
            starts: 1,
            coarse_draws: spec.draws,
            searches: vec![SearchRecord {
                stage: r.stage,
                start: 0,
                cost: r.f,
                iterations: r.iterations,
                stop: r.stop,
            }],
        },
    };
    settle::settle(spec, o)
}

/// The next number of draws in precision mode: assume the error falls like
/// N^(−3/4) (between plain Monte Carlo's N^(−1/2) and the N^(−1) that scrambled
/// Sobol points reach on smooth quantities), round up to a power of two, at
/// least double and at most ×16, within `max`.
pub fn next_draws(n: usize, worst: f64, max: usize) -> usize {
    let factor = worst.powf(4.0 / 3.0).clamp(2.0, 16.0);
    let next = (n as f64 * factor).log2().ceil().exp2() as usize;
    next.min(max)
}

/// Fit `spec` end to end (with replicate fits when `spec.fit.replicates > 0`).
/// In precision mode the draws are raised (each refit starting from the previous
/// optimum) until every determined hyperparameter meets its precision target or
/// the cap is reached.
pub fn fit(spec: &Spec, progress: Option<Progress>) -> Result<FitResult> {
    match fit_once(spec, progress) {
        // Cancelled evaluations return +∞, which a stage may report as its own
        // failure (say, no finite start): the cause is the cancellation.
        Err(_) if spec.fit.cancel.is_set() => Err(Error::Cancelled),
        other => other,
    }
}

fn fit_once(spec: &Spec, progress: Option<Progress>) -> Result<FitResult> {
    let started = Instant::now();
    use crate::spec::TieBreak;
    // Progress counts the local searches of the fit, then one step per
    // replicate fit, so a bar with replicates does not sit full while they run.
    let k = spec.fit.replicates;
    let searches = std::sync::atomic::AtomicUsize::new(0);
    let main = |done: usize, total: usize| {
        searches.store(total, std::sync::atomic::Ordering::Relaxed);
        if let Some(p) = progress {
            p(done, total + k);
        }
    };
    let mut point = fit_point(spec, None, Some(&main))?;
    let mut steps = vec![(spec.draws, point.worst)];
    let mut raised: Option<Spec> = None;
    if let Some(p) = spec.precision {
        let mut n = spec.draws;
        while point.worst > 1.0 && n < p.max_draws {
            let mut s = spec.clone();
            n = next_draws(n, point.worst, p.max_draws);
            s.draws = n;
            let evaluations = point.opt.evaluations;
            point = fit_point_from(&s, &point.optimum)?;
            point.opt.evaluations += evaluations;
            steps.push((n, point.worst));
            raised = Some(s);
        }
    }
    let spec = raised.as_ref().unwrap_or(spec);
    let applied = match (point.tie_break, spec.fit.tie_break) {
        (_, TieBreak::Kappa(k)) => TieBreak::Kappa(k),
        (TieBreakUsed::Knee, _) => TieBreak::Knee,
        (TieBreakUsed::Widest, _) => TieBreak::Widest,
        _ => TieBreak::Off,
    };
    let mut r = assemble(spec, point, started)?;
    r.draws_chosen.steps = steps;
    r.draws_chosen.reached =
        spec.precision.is_none() || r.draws_chosen.steps.last().is_some_and(|s| s.1 <= 1.0);
    if spec.fit.replicates > 0 {
        let m = searches.load(std::sync::atomic::Ordering::Relaxed);
        let tick = |done: usize| {
            if let Some(p) = progress {
                p(m + done, m + k);
            }
        };
        r.replicates = Some(replicate::run(spec, k, applied, Some(&tick))?);
        r.wall_time_s = started.elapsed().as_secs_f64();
    }
    Ok(r)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::Error;
    use crate::spec::{parse, Overrides};

    /// A cancelled fit returns `Error::Cancelled` (and so writes nothing).
    #[test]
    fn cancelled_fit_stops_with_an_error() {
        let mut s = demo_spec(3);
        s.fit.cancel = crate::cancel::Cancel::after(200);
        assert!(matches!(fit(&s, None), Err(Error::Cancelled)));
        // Cancelled before the first start is scored: every start is +∞, which
        // the global stage would call undefined; the cause is the cancellation.
        s.fit.cancel = crate::cancel::Cancel::after(1);
        assert!(matches!(fit(&s, None), Err(Error::Cancelled)));
    }

    /// The relapse-free demo at 4,096 draws with seed `seed`.
    fn demo_spec(seed: u64) -> crate::spec::Spec {
        let text = include_str!("../../demo-data/relapse-free-cure.toml");
        let ov = Overrides {
            seed: Some(seed),
            draws: Some(4096),
            ..Overrides::default()
        };
        parse(text, None, &ov).unwrap()
    }

    /// Newton stops at the optimum: a long Nelder–Mead search started there on the
    /// same objective lowers D by less than 5 % of a noise floor (relapse-free
    /// demo at 4,000 draws, three seeds).
    #[test]
    fn newton_stops_at_the_optimum() {
        for seed in [3, 4, 5] {
            let spec = demo_spec(seed);
            let o = optimise(&spec, 0.0, None, None).unwrap();
            let obj = Objective::fitting(&spec);
            let f = |x: &[f64]| obj.cost(x);
            let at = f(&o.eta);
            let nm = simplex::local(&f, &o.eta, 0.05, 2000, 1e-4 * obj.floor());
            let nm = simplex::local(&f, &nm.x, 0.01, 2000, 1e-4 * obj.floor());
            assert!(
                at - nm.f < 0.05 * obj.floor(),
                "seed {seed}: Newton {at:e}, Nelder–Mead {:e}, floor {:e}",
                nm.f,
                obj.floor()
            );
        }
    }

    /// Newton's last Hessian, which the identifiability analysis reuses, is the
    /// Hessian of the full-draw objective at the returned optimum: recomputing it
    /// there with the same steps on a freshly built objective gives the same
    /// numbers, and the analysis agrees with one that computes its own.
    #[test]
    fn reused_hessian_is_the_hessian_at_the_optimum() {
        let spec = demo_spec(11);
        let o = optimise(&spec, 0.0, None, None).unwrap();
        let (h, steps) = o
            .hessian
            .unwrap_or_else(|| panic!("Newton did not settle: {:?}", o.record.searches));
        let obj = Objective::fitting(&spec);
        let f = |x: &[f64]| obj.cost(x);
        let coords: Vec<usize> = (0..o.eta.len()).collect();
        let (again, _) = diagnostics::fd_hessian(&f, &o.eta, &coords, &steps, f(&o.eta));
        assert_eq!(h, again);
        let with = diagnostics::analyse(&obj, &o.eta, Some(&h), false);
        let without = diagnostics::analyse(&obj, &o.eta, None, false);
        let eig = |a: &diagnostics::Identifiability| -> Vec<f64> {
            a.directions.iter().map(|d| d.eigenvalue).collect()
        };
        // Recomputed from scratch the analysis chooses its steps from its own
        // diagonal, so the curvatures agree closely rather than exactly.
        for (a, b) in eig(&with).iter().zip(eig(&without)) {
            assert!((a - b).abs() <= 1e-3 * b.abs(), "eigenvalue {a} vs {b}");
        }
        assert_eq!(with.undetermined, without.undetermined);
    }
}

//! The optimiser: a global stage of space-filling starts on coarse draws,
//! Nelder–Mead local searches, and Newton refinement at full draws (with a
//! Nelder–Mead rescue). Tuning numbers are named in [`super::tuning`].

use super::tuning::TUNING;
use super::{diagnostics, simplex, OptimiserRecord, Progress, SearchRecord, Stage};
use crate::error::{Error, Result};
use crate::fit::objective::Objective;
use crate::rng;
use crate::spec::Spec;
use rayon::prelude::*;

/// Latin-hypercube points in the unit cube, seeded.
fn latin_hypercube(k: usize, d: usize, seed: u64) -> Vec<Vec<f64>> {
    let mut cols: Vec<Vec<f64>> = Vec::with_capacity(d);
    for j in 0..d {
        let u = rng::uniforms(seed, j as u64, 2 * k);
        let mut idx: Vec<usize> = (0..k).collect();
        // Fisher–Yates with the stream's second half.
        for i in (1..k).rev() {
            let r = (u[k + i] * (i + 1) as f64) as usize;
            idx.swap(i, r.min(i));
        }
        cols.push((0..k).map(|i| (idx[i] as f64 + u[i]) / k as f64).collect());
    }
    (0..k)
        .map(|i| (0..d).map(|j| cols[j][i]).collect())
        .collect()
}

/// Draws of the coarse stage: a fifth of the draws, at least 2,000; with
/// scrambled Sobol points the power of two at or above that (a whole net: a
/// prefix of 2,000 of 8,192 points is not balanced and misplaced the coarse
/// optimum on the relapse-free demo).
pub fn coarse_draws(spec: &Spec) -> usize {
    let n = spec.draws;
    let c = (n / 5).max(2000);
    match spec.points {
        crate::rng::Points::ScrambledSobol => c.next_power_of_two().min(n),
        crate::rng::Points::Independent => c.min(n),
    }
}

/// Find the free hyperparameters minimising the objective for `spec`.
/// Returns the optimum as a full hyperparameter vector and the search record.
pub fn optimise(
    spec: &Spec,
    kappa: f64,
    warm: Option<&[f64]>,
    progress: Option<Progress>,
) -> Result<Optimum> {
    let kind = spec.fit.discrepancy;
    let n = spec.draws;
    let mut full_obj = Objective::new(spec, n, &spec.plan(), kind);
    full_obj.kappa = kappa * full_obj.floor();
    let d = full_obj.free.len();
    if d == 0 {
        let h = full_obj.full0.clone();
        full_obj.total(&h)?;
        return Ok(Optimum {
            h,
            eta: Vec::new(),
            hessian: None,
            record: OptimiserRecord {
                evaluations: full_obj.evaluations(),
                starts: 0,
                coarse_draws: n,
                searches: Vec::new(),
            },
        });
    }
    let nc = coarse_draws(spec);
    let mut coarse = Objective::new(spec, nc, &spec.plan(), kind);
    coarse.kappa = kappa * coarse.floor();

    // Global stage: the default point, a warm start if given, then a Latin hypercube.
    let k = if spec.fit.starts > 0 {
        spec.fit.starts
    } else {
        (8 * d).max(16)
    };
    let mut starts: Vec<Vec<f64>> = vec![full_obj.eta(&full_obj.full0)];
    if let Some(w) = warm {
        starts.push(full_obj.eta(w));
    }
    for u in latin_hypercube(k, d, rng::child_seed(spec.seed, 0x5157_4152)) {
        starts.push(
            u.iter()
                .map(|t| crate::numerics::logit(0.02 + 0.96 * t))
                .collect(),
        );
    }
    let screened: Vec<(usize, f64)> = starts
        .par_iter()
        .enumerate()
        .map(|(i, s)| (i, coarse.cost(s)))
        .collect();
    let mut order: Vec<(usize, f64)> = screened
        .into_iter()
        .filter(|(_, c)| c.is_finite())
        .collect();
    if order.is_empty() {
        return Err(Error::Numeric(
            "the objective is undefined at every start: check the bounds of the free hyperparameters".into(),
        ));
    }
    order.sort_by(|a, b| a.1.total_cmp(&b.1).then(a.0.cmp(&b.0)));
    let m = order.len().min(spec.fit.searches);
    use std::sync::atomic::{AtomicUsize, Ordering};
    // Local searches: m coarse, then one or two refinements (known after the coarse stage).
    let total_searches = AtomicUsize::new(m + m.min(2));
    let done = AtomicUsize::new(0);
    let tick = || {
        let k = done.fetch_add(1, Ordering::Relaxed) + 1;
        if let Some(p) = progress {
            p(k, total_searches.load(Ordering::Relaxed))
        }
    };

    // Local stage on the coarse draws.
    // Stopping rules tied to the noise floor: the coarse stage only locates the
    // basin (simplex spread a tenth of a coarse floor; 0.05 and 0.2 gave the same
    // optima on the 60-row demo and 10 seeds of the relapse-free demo); the full
    // stage stops when the predicted gain is 1 % of a floor.
    let tol_c = TUNING.coarse_tol * coarse.floor();
    let locals: Vec<(usize, simplex::Local)> = order[..m]
        .par_iter()
        .map(|(i, _)| {
            let r = coarse_search(&coarse, &starts[*i], d, tol_c);
            tick();
            (*i, r)
        })
        .collect();
    // Nelder–Mead can collapse in a curved valley far above its floor. When even
    // the best coarse search ends more than `rough` coarse floors up, every
    // search gets fresh simplices from where it stopped, each kept only while
    // it gains a floor (a fit that lands well costs nothing more).
    let best_f = locals.iter().map(|l| l.1.f).fold(f64::INFINITY, f64::min);
    let locals: Vec<(usize, simplex::Local)> = if best_f > TUNING.rough * coarse.floor() {
        locals
            .into_par_iter()
            .map(|(i, mut r)| {
                for _ in 0..TUNING.coarse_restarts {
                    let again = coarse_search(&coarse, &r.x, d, tol_c);
                    let gained = again.f < r.f - coarse.floor();
                    if again.f < r.f {
                        r = simplex::Local {
                            iterations: r.iterations + again.iterations,
                            ..again
                        };
                    }
                    if !gained {
                        break;
                    }
                }
                (i, r)
            })
            .collect()
    } else {
        locals
    };
    let mut searches: Vec<SearchRecord> = locals
        .iter()
        .map(|(i, r)| SearchRecord {
            stage: Stage::Coarse,
            start: *i,
            cost: r.f,
            iterations: r.iterations,
            stop: r.stop.clone(),
        })
        .collect();
    let mut best_c: Vec<&(usize, simplex::Local)> = locals.iter().collect();
    best_c.sort_by(|a, b| a.1.f.total_cmp(&b.1.f).then(a.0.cmp(&b.0)));

    // Refinement at full draws: Newton steps on finite-difference curvature from
    // the best coarse optimum, and from the second best when it lies in another
    // basin and is within one coarse noise floor of the best; Nelder–Mead
    // takes over should Newton not settle.
    let tol_f = TUNING.newton_tol * full_obj.floor();
    let mut chosen: Vec<&(usize, simplex::Local)> = best_c.iter().take(1).copied().collect();
    if let Some(second) = best_c.get(1) {
        if second.1.f <= best_c[0].1.f + coarse.floor()
            && !same_basin(&coarse, &best_c[0].1, &second.1)
        {
            chosen.push(second);
        }
    }
    total_searches.store(m + chosen.len(), Ordering::Relaxed);
    let refined: Vec<(usize, Refined)> = chosen
        .par_iter()
        .map(|(i, r)| {
            let out = refine(&full_obj, &coarse, &r.x, tol_f, d);
            tick();
            (*i, out)
        })
        .collect();
    for (i, r) in &refined {
        searches.push(SearchRecord {
            stage: r.stage,
            start: *i,
            cost: r.f,
            iterations: r.iterations,
            stop: r.stop.clone(),
        });
    }
    let best = refined
        .into_iter()
        .min_by(|a, b| a.1.f.total_cmp(&b.1.f).then(a.0.cmp(&b.0)))
        .map(|(_, r)| r)
        .ok_or_else(|| Error::Numeric("no local search finished".into()))?;
    Ok(Optimum {
        h: full_obj.full(&best.x),
        eta: best.x,
        hessian: best.hessian,
        record: OptimiserRecord {
            evaluations: full_obj.evaluations() + coarse.evaluations(),
            starts: starts.len(),
            coarse_draws: nc,
            searches,
        },
    })
}

/// One coarse Nelder–Mead search from `x0`.
fn coarse_search(coarse: &Objective, x0: &[f64], d: usize, tol: f64) -> simplex::Local {
    simplex::local(
        &|x: &[f64]| coarse.cost(x),
        x0,
        TUNING.coarse_search.size,
        TUNING.coarse_search.with(d as u64).1,
        tol,
    )
}

/// Do two local optima share a basin? Yes when they are within [`TUNING.same_basin`]
/// in every η coordinate, or when the objective on the segment between them (at
/// a quarter, half and three quarters) never rises more than half a noise floor
/// above the higher of the two: no barrier separates them (a hill test, as in
/// clustering multistart methods).
fn same_basin(obj: &Objective, a: &simplex::Local, b: &simplex::Local) -> bool {
    let near =
        a.x.iter()
            .zip(&b.x)
            .all(|(p, q)| (p - q).abs() <= TUNING.same_basin);
    if near {
        return true;
    }
    let top = a.f.max(b.f) + 0.5 * obj.floor();
    [0.25, 0.5, 0.75].iter().all(|t| {
        let y: Vec<f64> = a.x.iter().zip(&b.x).map(|(p, q)| p + t * (q - p)).collect();
        obj.cost(&y) <= top
    })
}

/// The outcome of optimisation: the optimum (every hyperparameter), the Hessian
/// of D there over the free hyperparameters on the η scale when Newton's last
/// iteration computed it at that very point, and the record.
pub struct Optimum {
    pub h: Vec<f64>,
    /// The optimum on the optimiser's unbounded scale.
    pub eta: Vec<f64>,
    pub hessian: Option<(nalgebra::DMatrix<f64>, Vec<f64>)>,
    pub record: OptimiserRecord,
}

pub(super) struct Refined {
    pub(super) x: Vec<f64>,
    pub(super) f: f64,
    pub(super) hessian: Option<(nalgebra::DMatrix<f64>, Vec<f64>)>,
    pub(super) iterations: u64,
    pub(super) stage: Stage,
    pub(super) stop: simplex::Stop,
}

/// Refine a coarse optimum `x0` on the full-draw objective.
///
/// Newton's method on central-difference curvature (the same differences the
/// identifiability analysis takes): at x, with gradient g and Hessian H = Σ μ v vᵀ,
/// step along each direction whose curvature is clearly positive (μ > 2f, f the
/// noise floor; flatter directions are left to the tie-break), with at most
/// [`TUNING.newton_max_step`] in any coordinate, halving the step until D falls. The
/// gradient is taken with steps over which D changes by a few floors. It stops
/// at x when the predicted fall ½Σ(vᵀg)²/μ, or the achieved one, is below `tol`
/// (a hundredth of a floor), so the Hessian is exact at the returned point. On a
/// smooth basin this takes two Hessians; should it not settle, Nelder–Mead runs
/// from the best point found, as a fallback. When the optimum misses the beliefs
/// by more than [`TUNING.rough`] floors, a Nelder–Mead polish follows, wide then narrow
/// (measured on the demos: it lowers D by 0.1–0.25 floors there, and by nothing
/// on beliefs that are met, where it is skipped).
pub(super) fn refine(
    obj: &Objective,
    coarse: &Objective,
    x0: &[f64],
    tol: f64,
    d: usize,
) -> Refined {
    // Newton first on the coarse draws (a quarter of the cost per evaluation):
    // Nelder–Mead locates the basin but, in a curved valley whose curvatures
    // differ by 10⁵, often stops far from its floor; Newton walks the valley.
    // Should that end in a poor local minimum (more than TUNING.rough coarse floors),
    // the Nelder–Mead polish below runs there too, where it is cheap.
    let x0 = if coarse.n() < obj.n() {
        let tol_c = TUNING.newton_tol * coarse.floor();
        let mut x = x0.to_vec();
        let mut fx = coarse.cost(&x);
        let c = newton(coarse, coarse, &x, tol_c, d);
        if c.f < fx {
            (x, fx) = (c.x, c.f);
        }
        if fx > TUNING.rough * coarse.floor() {
            let f = |y: &[f64]| coarse.cost(y);
            let dd = d as u64;
            let p = simplex::restarted(
                &f,
                &x,
                TUNING.rescue_wide.with(dd),
                TUNING.rescue_narrow.with(dd),
                TUNING.simplex_tol * coarse.floor(),
            );
            if p.f < fx {
                let c = newton(coarse, coarse, &p.x, tol_c, d);
                x = if c.f < p.f { c.x } else { p.x };
            }
        }
        // Keep it only when the full draws agree that it is better.
        if obj.cost(&x) < obj.cost(x0) {
            x
        } else {
            x0.to_vec()
        }
    } else {
        x0.to_vec()
    };
    let x0 = &x0[..];
    let r = newton(obj, coarse, x0, tol, d);
    if r.stage != Stage::Newton || r.f <= TUNING.rough * obj.floor() {
        return r;
    }
    let f = |x: &[f64]| obj.cost(x);
    // A wide simplex (reaches optima at a bound), then a narrow restart.
    let d = d as u64;
    let p = simplex::restarted(
        &f,
        &r.x,
        TUNING.rescue_wide.with(d),
        TUNING.rescue_narrow.with(d),
        TUNING.simplex_tol * obj.floor(),
    );
    if p.f < r.f - tol {
        Refined {
            x: p.x,
            f: p.f,
            hessian: None,
            iterations: r.iterations + p.iterations,
            stage: Stage::NewtonSimplex,
            stop: p.stop,
        }
    } else {
        r
    }
}

fn newton(obj: &Objective, coarse: &Objective, x0: &[f64], tol: f64, d: usize) -> Refined {
    let f = |x: &[f64]| obj.cost(x);
    let coords: Vec<usize> = (0..d).collect();
    let floor = obj.floor();
    let mut x = x0.to_vec();
    let mut fx = f(&x);
    let mut iterations = 0;
    let mut steps = vec![diagnostics::STEP; d];
    while fx.is_finite() && iterations < TUNING.newton_iterations {
        iterations += 1;
        // The first step borrows the cross curvature from the coarse draws (the
        // noise floor is constant in λ, so both estimate the same curvature);
        // later ones use the full draws throughout, so the last is exact.
        let exact = iterations > 1;
        let (h, g) = if exact {
            diagnostics::fd_hessian(&f, &x, &coords, &steps, fx)
        } else {
            let fc = |y: &[f64]| coarse.cost(y);
            let wide = vec![diagnostics::STEP; d];
            let (mut hc, _) = diagnostics::fd_hessian(&fc, &x, &coords, &wide, fc(&x));
            let diag: Vec<f64> = (0..d).map(|a| hc[(a, a)]).collect();
            steps = diagnostics::steps_for(&diag, floor);
            let (hd, g) = diagnostics::fd_diagonal(&f, &x, &coords, &steps, fx);
            for a in 0..d {
                hc[(a, a)] = hd[(a, a)];
            }
            (hc, g)
        };
        if !h.iter().chain(&g).all(|v| v.is_finite()) {
            break;
        }
        // Steps for the next Hessian from this one's curvature.
        let next_steps =
            diagnostics::steps_for(&(0..d).map(|a| h[(a, a)]).collect::<Vec<_>>(), floor);
        let eig = nalgebra::SymmetricEigen::new(h.clone());
        let mut step = vec![0.0; d];
        let mut predicted = 0.0;
        for j in 0..d {
            let mu = eig.eigenvalues[j];
            let v = eig.eigenvectors.column(j);
            let proj: f64 = (0..d).map(|a| v[a] * g[a]).sum();
            if mu > 2.0 * floor {
                predicted += 0.5 * proj * proj / mu;
                for a in 0..d {
                    step[a] -= proj / mu * v[a];
                }
            } else if proj.abs() * TUNING.flat_step > floor {
                // Far from the optimum a direction can be flat or curve down while
                // D still falls along it: a plain descent step there (without it
                // Newton would call a slope a stationary point).
                predicted += proj.abs() * TUNING.flat_step;
                for a in 0..d {
                    step[a] -= proj.signum() * TUNING.flat_step * v[a];
                }
            }
        }
        let settled = |x: Vec<f64>, fx: f64, h: nalgebra::DMatrix<f64>, steps: Vec<f64>| Refined {
            x,
            f: fx,
            hessian: Some((h, steps)),
            iterations,
            stage: Stage::Newton,
            stop: simplex::Stop::Converged,
        };
        if predicted < tol {
            if exact {
                return settled(x, fx, h, steps);
            }
            continue;
        }
        let big = step.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let mut t = if big > TUNING.newton_max_step {
            TUNING.newton_max_step / big
        } else {
            1.0
        };
        let mut moved = false;
        for _ in 0..4 {
            let y: Vec<f64> = x.iter().zip(&step).map(|(a, s)| a + t * s).collect();
            let fy = f(&y);
            if fy < fx {
                if exact && fx - fy < tol {
                    // Nothing worth a move: x is the optimum and H is exact there.
                    return settled(x, fx, h, steps);
                }
                x = y;
                fx = fy;
                moved = true;
                break;
            }
            t *= 0.5;
        }
        if !moved && exact {
            // No decrease along the Newton step although little is left to gain:
            // the small kinks of the empirical objective, not a poor model. The
            // polish after the optimiser (`polish`) solves ∇D = 0 from here.
            if predicted < TUNING.stall * floor && fx < TUNING.rough * floor {
                return settled(x, fx, h, steps);
            }
            break;
        }
        steps = next_steps;
    }
    // Fallback: Nelder–Mead from the best point, then a restart of the simplex.
    let d = d as u64;
    let r = simplex::restarted(
        &f,
        &x,
        TUNING.rescue_wide.with(d),
        TUNING.fallback_narrow.with(d),
        TUNING.simplex_tol * floor,
    );
    Refined {
        x: r.x,
        f: r.f,
        hessian: None,
        iterations: iterations + r.iterations,
        stage: Stage::Full,
        stop: r.stop,
    }
}

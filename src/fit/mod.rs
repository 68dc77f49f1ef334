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

pub mod diagnostics;
pub mod mc_error;
pub mod objective;
pub mod pareto;
pub mod profile;
pub mod record;
pub mod replicate;
pub use crate::numerics::simplex;
pub mod tiebreak;
pub mod verdict;

use crate::discrepancy::Kind;
use crate::error::{Error, Result};
use crate::rng;
use crate::spec::Spec;
use objective::Objective;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::time::Instant;

pub use verdict::{BeliefReport, Verdict};

/// One local search, for the record.
/// A stage of the optimiser, for the record.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Stage {
    /// Nelder–Mead on the coarse draws.
    #[serde(rename = "coarse")]
    Coarse,
    /// Newton's method at full draws.
    #[serde(rename = "newton")]
    Newton,
    /// Newton, then Nelder–Mead at full draws.
    #[serde(rename = "newton+simplex")]
    NewtonSimplex,
    /// Nelder–Mead at full draws (warm starts).
    #[serde(rename = "full")]
    Full,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct SearchRecord {
    pub stage: Stage,
    pub start: usize,
    #[serde(with = "crate::numerics::ext::num")]
    pub cost: f64,
    pub iterations: u64,
    pub stop: simplex::Stop,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Totals {
    #[serde(with = "crate::numerics::ext::num")]
    pub in_sample: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub fresh: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub noise_floor: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct OptimiserRecord {
    pub evaluations: u64,
    pub starts: usize,
    pub coarse_draws: usize,
    pub searches: Vec<SearchRecord>,
}

/// The tie-break a fit applied.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum TieBreakUsed {
    /// None: no direction was flat, or `tie_break = "off"`.
    Off,
    /// The widest prior within one reference floor of the best.
    Widest,
    /// The knee of the Pareto front.
    Knee,
    /// A fixed weight κ on the secondary objective (noise floors).
    Kappa(f64),
}

impl TieBreakUsed {
    pub fn words(&self) -> String {
        match self {
            TieBreakUsed::Off => "off".into(),
            TieBreakUsed::Widest => "widest".into(),
            TieBreakUsed::Knee => "knee".into(),
            TieBreakUsed::Kappa(k) => format!("kappa {k}"),
        }
    }
}

/// The outcome of a fit: what the writers need, and nothing of the spec's raw
/// form. It is the fit record: `fit.json` is this struct, written and read only
/// through [`record`] (versioned by [`record::SCHEMA_VERSION`]).
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct FitResult {
    /// Version of the fit.json layout ([`record::SCHEMA_VERSION`]).
    pub schema_version: u32,
    pub title: String,
    pub template: String,
    pub spec_digest: String,
    pub seed: u64,
    pub draws: usize,
    pub discrepancy: Kind,
    /// Every hyperparameter (fixed ones too), keyed `<parameter>.<hyperparameter>`.
    pub hyperparameters: BTreeMap<String, f64>,
    /// Order of the hyperparameters as the template defines them.
    pub order: Vec<String>,
    pub free: Vec<String>,
    pub bounds: BTreeMap<String, (f64, f64)>,
    pub beliefs: Vec<BeliefReport>,
    pub total: Totals,
    pub verdict: Verdict,
    pub optimiser: OptimiserRecord,
    #[serde(with = "crate::numerics::ext::num")]
    pub wall_time_s: f64,
    pub prior: Vec<crate::templates::PriorStatement>,
    pub tool_version: String,
    /// Curvature analysis at the optimum: which hyperparameters the beliefs leave undetermined.
    pub identifiability: diagnostics::Identifiability,
    /// What the tie-break did.
    pub tie_break: TieBreakUsed,
    /// The Pareto front between discrepancy and spread, when traced.
    pub pareto: Option<pareto::Front>,
    /// Spread of the fitted hyperparameters across independent seeds, when asked.
    pub replicates: Option<replicate::Replicates>,
    /// What set each hyperparameter: beliefs, tie-break, bound, undetermined, fixed.
    pub set_by: BTreeMap<String, SetBy>,
    /// Monte Carlo standard error of each free hyperparameter on its own scale
    /// (null: undetermined and not settled by a tie-break).
    pub mc_error: BTreeMap<String, Option<f64>>,
    /// How the number of draws was chosen.
    pub draws_chosen: DrawsRecord,
    /// Fresh draws of each belief's quantity at the fitted prior (not serialised).
    #[serde(skip)]
    pub draws_fresh: Vec<Vec<f64>>,
    #[serde(skip)]
    pub full: Vec<f64>,
}

/// How the number of draws was chosen: fixed by the file or the command line, or
/// raised by precision mode until every determined hyperparameter's Monte Carlo
/// error met its target.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct DrawsRecord {
    pub mode: DrawsMode,
    /// The fitting draws' points.
    pub points: rng::Points,
    /// Precision mode's relative target (its location target is
    /// min(0.1·δ*, 0.005) on the optimiser's scale).
    pub target: Option<f64>,
    /// Each fit made: (draws, largest error / target).
    pub steps: Vec<(usize, f64)>,
    /// Whether the last fit met the target (always true in fixed mode).
    pub reached: bool,
}

/// How the number of draws was set.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum DrawsMode {
    /// By `draws` in the file or on the command line.
    Fixed,
    /// Raised by precision mode.
    Precision,
}

/// Progress callback: (done, total) local searches.
pub type Progress<'a> = &'a (dyn Fn(usize, usize) + Sync);

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
    let tol_c = 0.1 * coarse.floor();
    let locals: Vec<(usize, simplex::Local)> = order[..m]
        .par_iter()
        .map(|(i, _)| {
            let r = simplex::local(
                &|x: &[f64]| coarse.cost(x),
                &starts[*i],
                0.6,
                150 * d as u64 + 100,
                tol_c,
            );
            tick();
            (*i, r)
        })
        .collect();
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
    let tol_f = NEWTON_TOL * full_obj.floor();
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

/// Do two local optima share a basin? Yes when they are within [`SAME_BASIN`]
/// in every η coordinate, or when the objective on the segment between them (at
/// a quarter, half and three quarters) never rises more than half a noise floor
/// above the higher of the two: no barrier separates them (a hill test, as in
/// clustering multistart methods).
fn same_basin(obj: &Objective, a: &simplex::Local, b: &simplex::Local) -> bool {
    let near =
        a.x.iter()
            .zip(&b.x)
            .all(|(p, q)| (p - q).abs() <= SAME_BASIN);
    if near {
        return true;
    }
    let top = a.f.max(b.f) + 0.5 * obj.floor();
    [0.25, 0.5, 0.75].iter().all(|t| {
        let y: Vec<f64> = a.x.iter().zip(&b.x).map(|(p, q)| p + t * (q - p)).collect();
        obj.cost(&y) <= top
    })
}

/// Newton stops when the predicted fall is below this many noise floors. With
/// scrambled Sobol draws the seed-to-seed error of a determined hyperparameter
/// is a few hundredths of δ*, so the optimum is located to 1.4 % of δ*
/// (√(2·10⁻⁴)); a hundredth of a floor (δ/δ* = 0.14) would let the stopping
/// rule, not the draws, set the spread.
const NEWTON_TOL: f64 = 1e-4;

/// Nelder–Mead stages inside the refinement (rescue, polish, fallback) stop
/// when the simplex's values differ by this many floors: they find the basin,
/// and `polish` after them solves ∇D = 0.
const SIMPLEX_TOL: f64 = 0.01;

/// Length (η units) of a descent step along a direction without positive
/// curvature in `newton`.
const FLAT_STEP: f64 = 0.25;

/// A Newton step that finds no decrease when the predicted fall is below this
/// many floors ends Newton there (see `newton`).
const STALL: f64 = 0.5;

/// Coarse optima closer than this in every η coordinate share a basin.
const SAME_BASIN: f64 = 0.3;
/// Newton iterations before Nelder–Mead takes over.
const NEWTON_ITERATIONS: u64 = 8;
/// Largest Newton step in any η coordinate (a trust region).
const NEWTON_MAX_STEP: f64 = 0.5;

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

struct Refined {
    x: Vec<f64>,
    f: f64,
    hessian: Option<(nalgebra::DMatrix<f64>, Vec<f64>)>,
    iterations: u64,
    stage: Stage,
    stop: simplex::Stop,
}

/// Refine a coarse optimum `x0` on the full-draw objective.
///
/// Newton's method on central-difference curvature (the same differences the
/// identifiability analysis takes): at x, with gradient g and Hessian H = Σ μ v vᵀ,
/// step along each direction whose curvature is clearly positive (μ > 2f, f the
/// noise floor; flatter directions are left to the tie-break), with at most
/// [`NEWTON_MAX_STEP`] in any coordinate, halving the step until D falls. The
/// gradient is taken with steps over which D changes by a few floors. It stops
/// at x when the predicted fall ½Σ(vᵀg)²/μ, or the achieved one, is below `tol`
/// (a hundredth of a floor), so the Hessian is exact at the returned point. On a
/// smooth basin this takes two Hessians; should it not settle, Nelder–Mead runs
/// from the best point found, as a fallback. When the optimum misses the beliefs
/// by more than [`ROUGH`] floors, a Nelder–Mead polish follows, wide then narrow
/// (measured on the demos: it lowers D by 0.1–0.25 floors there, and by nothing
/// on beliefs that are met, where it is skipped).
fn refine(obj: &Objective, coarse: &Objective, x0: &[f64], tol: f64, d: usize) -> Refined {
    // Newton first on the coarse draws (a quarter of the cost per evaluation):
    // Nelder–Mead locates the basin but, in a curved valley whose curvatures
    // differ by 10⁵, often stops far from its floor; Newton walks the valley.
    // Should that end in a poor local minimum (more than ROUGH coarse floors),
    // the Nelder–Mead polish below runs there too, where it is cheap.
    let x0 = if coarse.n() < obj.n() {
        let tol_c = NEWTON_TOL * coarse.floor();
        let mut x = x0.to_vec();
        let mut fx = coarse.cost(&x);
        let c = newton(coarse, coarse, &x, tol_c, d);
        if c.f < fx {
            (x, fx) = (c.x, c.f);
        }
        if fx > ROUGH * coarse.floor() {
            let f = |y: &[f64]| coarse.cost(y);
            let dd = d as u64;
            let p = simplex::restarted(
                &f,
                &x,
                (0.2, 150 * dd + 100),
                (0.02, 100 * dd + 50),
                SIMPLEX_TOL * coarse.floor(),
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
    if r.stage != Stage::Newton || r.f <= ROUGH * obj.floor() {
        return r;
    }
    let f = |x: &[f64]| obj.cost(x);
    // A wide simplex (reaches optima at a bound), then a narrow restart.
    let d = d as u64;
    let p = simplex::restarted(
        &f,
        &r.x,
        (0.2, 150 * d + 100),
        (0.02, 100 * d + 50),
        SIMPLEX_TOL * obj.floor(),
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

/// Discrepancy, in noise floors, above which the Newton optimum is polished by
/// Nelder–Mead: far from the beliefs the objective is rough on scales finer than
/// the finite differences see.
const ROUGH: f64 = 10.0;

fn newton(obj: &Objective, coarse: &Objective, x0: &[f64], tol: f64, d: usize) -> Refined {
    let f = |x: &[f64]| obj.cost(x);
    let coords: Vec<usize> = (0..d).collect();
    let floor = obj.floor();
    let mut x = x0.to_vec();
    let mut fx = f(&x);
    let mut iterations = 0;
    let mut steps = vec![diagnostics::STEP; d];
    while fx.is_finite() && iterations < NEWTON_ITERATIONS {
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
            } else if proj.abs() * FLAT_STEP > floor {
                // Far from the optimum a direction can be flat or curve down while
                // D still falls along it: a plain descent step there (without it
                // Newton would call a slope a stationary point).
                predicted += proj.abs() * FLAT_STEP;
                for a in 0..d {
                    step[a] -= proj.signum() * FLAT_STEP * v[a];
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
        let mut t = if big > NEWTON_MAX_STEP {
            NEWTON_MAX_STEP / big
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
            if predicted < STALL * floor && fx < ROUGH * floor {
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
        (0.2, 150 * d + 100),
        (0.05, 100 * d + 50),
        SIMPLEX_TOL * floor,
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

/// What set a hyperparameter's value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum SetBy {
    /// The beliefs determine it (the optimum).
    Beliefs,
    /// The beliefs leave it (nearly) undetermined; the tie-break chose it.
    TieBreak,
    /// It sits at a bound: the beliefs push it there, or the tie-break ran to it.
    Bound,
    /// Undetermined, and no tie-break ran (`tie_break = "off"`): arbitrary.
    Undetermined,
    /// Fixed in the belief file.
    Fixed,
}

impl SetBy {
    pub fn words(&self) -> &'static str {
        match self {
            SetBy::Beliefs => "beliefs",
            SetBy::TieBreak => "tie-break",
            SetBy::Bound => "bound",
            SetBy::Undetermined => "undetermined",
            SetBy::Fixed => "fixed",
        }
    }
}

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

/// Optimise, analyse identifiability, apply the tie-break rule and estimate the
/// Monte Carlo errors. `warm`: a full hyperparameter vector to add as a start of
/// the global stage. See [`fit_point_from`] to skip the global stage.
pub fn fit_point(spec: &Spec, warm: Option<&[f64]>, progress: Option<Progress>) -> Result<Point> {
    let o = optimise(spec, 0.0, warm, progress)?;
    settle(spec, o)
}

/// As [`fit_point`], refining from `start` (a full vector, e.g. the optimum at
/// fewer draws) by Newton at full draws, without the global stage.
pub fn fit_point_from(spec: &Spec, start: &[f64]) -> Result<Point> {
    let obj = Objective::fitting(spec);
    let d = obj.free.len();
    let x0 = obj.eta(start);
    let r = refine(&obj, &obj, &x0, NEWTON_TOL * obj.floor(), d);
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
    settle(spec, o)
}

/// Iterations of [`polish`].
const POLISH_ITERATIONS: usize = 3;

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
    for _ in 0..POLISH_ITERATIONS {
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
        let t = if big > NEWTON_MAX_STEP {
            NEWTON_MAX_STEP / big
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
fn settle(spec: &Spec, o: Optimum) -> Result<Point> {
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
        let mv: &[tiebreak::Move] = if how == TieBreakUsed::Widest { &moves } else { &[] };
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

/// Judge hyperparameters `h` on fresh draws and assemble the result.
pub fn assemble(spec: &Spec, p: Point, started: Instant) -> Result<FitResult> {
    spec.fit.cancel.check()?;
    let Point {
        h,
        opt,
        ident,
        front,
        tie_break,
        set_by,
        mc_eta,
        worst,
        ..
    } = p;
    let kind = spec.fit.discrepancy;
    let n = spec.draws;
    let fit_obj = Objective::new(spec, n, &spec.plan(), kind);
    let fresh = Objective::new(spec, n, &rng::Plan::fresh(spec.seed), kind);
    let d_in = fit_obj.per_belief(&h, kind)?;
    let sorted = fresh.sorted_draws(&h)?;
    let cvm_floor: Vec<f64> = spec
        .beliefs
        .iter()
        .map(|b| crate::discrepancy::noise_floor(Kind::CramerVonMises, &b.target, n))
        .collect();
    let mut beliefs = Vec::new();
    for (r, b) in spec.beliefs.iter().enumerate() {
        beliefs.push(verdict::judge(
            b,
            kind,
            &sorted[r],
            d_in[r],
            fit_obj.floors[r],
            cvm_floor[r],
            fit_obj.weights()[r],
            spec.fit.tolerance,
        ));
    }
    let w = fit_obj.weights();
    let total = Totals {
        in_sample: d_in.iter().zip(w).map(|(d, w)| d * w).sum(),
        fresh: beliefs.iter().zip(w).map(|(b, w)| b.fresh * w).sum(),
        noise_floor: fit_obj.floor(),
    };
    let verdict = verdict::overall(&beliefs);
    // Unsorted fresh draws for draws.csv (draw i of every quantity from the same θ_i).
    let draws_fresh = {
        let reqs: Vec<&crate::templates::Request> =
            spec.beliefs.iter().map(|b| &b.request).collect();
        let mut out = vec![Vec::new(); reqs.len()];
        spec.model.simulate(&h, &fresh.base, &reqs, &mut out)?;
        out
    };
    let hy = spec.hypers();
    Ok(FitResult {
        schema_version: record::SCHEMA_VERSION,
        title: spec.title.clone(),
        template: spec.model.template().to_string(),
        spec_digest: spec.digest.clone(),
        seed: spec.seed,
        draws: n,
        discrepancy: kind,
        hyperparameters: hy
            .iter()
            .zip(&h)
            .map(|(x, v)| (x.name.clone(), *v))
            .collect(),
        order: hy.iter().map(|x| x.name.clone()).collect(),
        free: hy
            .iter()
            .filter(|x| x.is_free())
            .map(|x| x.name.clone())
            .collect(),
        bounds: hy
            .iter()
            .filter_map(|x| match x.value {
                crate::templates::HyperValue::Free { lo, hi, .. } => {
                    Some((x.name.clone(), (lo, hi)))
                }
                _ => None,
            })
            .collect(),
        beliefs,
        total,
        verdict,
        optimiser: opt,
        wall_time_s: started.elapsed().as_secs_f64(),
        prior: spec.model.priors(&h),
        tool_version: env!("CARGO_PKG_VERSION").to_string(),
        set_by: hy
            .iter()
            .map(|x| {
                let s = match free_pos(&fit_obj.free, hy, &x.name) {
                    Some(k) => set_by[k],
                    None => SetBy::Fixed,
                };
                (x.name.clone(), s)
            })
            .collect(),
        mc_error: fit_obj
            .free
            .iter()
            .enumerate()
            .map(|(k, &i)| {
                let e = objective::to_eta(&hy[i], h[i]);
                let se = mc_eta[k].map(|s| s * objective::lambda_per_eta(&hy[i], e));
                (hy[i].name.clone(), se)
            })
            .collect(),
        draws_chosen: DrawsRecord {
            mode: if spec.precision.is_some() {
                DrawsMode::Precision
            } else {
                DrawsMode::Fixed
            },
            points: spec.points,
            target: spec.precision.map(|p| p.relative),
            steps: vec![(n, worst)],
            reached: spec.precision.is_none() || worst <= 1.0,
        },
        identifiability: ident,
        tie_break,
        pareto: front,
        replicates: None,
        draws_fresh,
        full: h,
    })
}

/// Index among the free hyperparameters of `name`.
fn free_pos(free: &[usize], hy: &[crate::templates::Hyper], name: &str) -> Option<usize> {
    free.iter().position(|&i| hy[i].name == name)
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
    let started = Instant::now();
    use crate::spec::TieBreak;
    let mut point = fit_point(spec, None, progress)?;
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
        r.replicates = Some(replicate::run(spec, spec.fit.replicates, applied)?);
        r.wall_time_s = started.elapsed().as_secs_f64();
    }
    Ok(r)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spec::{parse, Overrides};

    /// A cancelled fit returns `Error::Cancelled` (and so writes nothing).
    #[test]
    fn cancelled_fit_stops_with_an_error() {
        let mut s = demo_spec(3);
        s.fit.cancel = crate::cancel::Cancel::after(200);
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

//! Fitting: a global stage of space-filling starts on a coarse set of draws,
//! Nelder–Mead local searches from the best of them (in parallel with rayon),
//! refinement at the full number of draws, then judgement of the optimum on
//! fresh, independent draws against the Monte Carlo noise floor.
//!
//! Reproducibility: every random number comes from the seed (the Latin-hypercube
//! starts from a child seed), each local search is a deterministic function of
//! its start, and results are reduced in start order, so the fit is the same on
//! any number of threads.

pub mod diagnostics;
pub mod objective;
pub mod pareto;
pub mod replicate;
pub mod simplex;
pub mod verdict;

use crate::discrepancy::Kind;
use crate::error::{Error, Result};
use crate::rng;
use crate::spec::Spec;
use objective::Objective;
use rayon::prelude::*;
use serde::Serialize;
use std::collections::BTreeMap;
use std::time::Instant;

pub use verdict::{BeliefReport, Verdict};

/// One local search, for the record.
#[derive(Debug, Clone, Serialize)]
pub struct SearchRecord {
    pub stage: &'static str,
    pub start: usize,
    pub cost: f64,
    pub iterations: u64,
    pub stop: simplex::Stop,
}

#[derive(Debug, Clone, Serialize)]
pub struct Totals {
    pub in_sample: f64,
    pub fresh: f64,
    pub noise_floor: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct OptimiserRecord {
    pub evaluations: u64,
    pub starts: usize,
    pub coarse_draws: usize,
    pub searches: Vec<SearchRecord>,
}

/// The outcome of a fit: what the writers need, and nothing of the spec's raw form.
#[derive(Debug, Clone, Serialize)]
pub struct FitResult {
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
    pub wall_time_s: f64,
    pub prior: Vec<crate::templates::PriorStatement>,
    pub tool_version: String,
    /// Curvature analysis at the optimum: which hyperparameters the beliefs leave undetermined.
    pub identifiability: diagnostics::Identifiability,
    /// What the tie-break did: "off", "kappa", "widest" or "knee".
    pub tie_break: String,
    /// The Pareto front between discrepancy and spread, when traced.
    pub pareto: Option<pareto::Front>,
    /// Spread of the fitted hyperparameters across independent seeds, when asked.
    pub replicates: Option<replicate::Replicates>,
    /// Fresh draws of each belief's quantity at the fitted prior (not serialised).
    #[serde(skip)]
    pub draws_fresh: Vec<Vec<f64>>,
    #[serde(skip)]
    pub full: Vec<f64>,
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

/// Find the free hyperparameters minimising the objective for `spec`.
/// Returns the optimum as a full hyperparameter vector and the search record.
pub fn optimise(
    spec: &Spec,
    kappa: f64,
    warm: Option<&[f64]>,
    progress: Option<Progress>,
) -> Result<(Vec<f64>, OptimiserRecord)> {
    let kind = spec.fit.discrepancy;
    let n = spec.draws;
    let mut full_obj = Objective::new(spec, n, spec.seed, rng::FIT_STREAMS, kind);
    full_obj.kappa = kappa * full_obj.floor();
    let d = full_obj.free.len();
    if d == 0 {
        let h = full_obj.full0.clone();
        full_obj.total(&h)?;
        return Ok((
            h,
            OptimiserRecord {
                evaluations: full_obj.evaluations(),
                starts: 0,
                coarse_draws: n,
                searches: Vec::new(),
            },
        ));
    }
    let nc = n.min((n / 5).max(2000));
    let mut coarse = Objective::new(spec, nc, spec.seed, rng::FIT_STREAMS, kind);
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
    let m = order.len().min(4);
    let total_searches = m + m.min(2);
    let done = std::sync::atomic::AtomicUsize::new(0);
    let tick = || {
        let k = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
        if let Some(p) = progress {
            p(k, total_searches)
        }
    };

    // Local stage on the coarse draws.
    // Stopping rules tied to the noise floor: the coarse stage only locates the
    // basin; the full stage stops when the simplex spread is 1 % of a floor.
    let tol_c = 0.05 * coarse.floor();
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
            stage: "coarse",
            start: *i,
            cost: r.f,
            iterations: r.iterations,
            stop: r.stop.clone(),
        })
        .collect();
    let mut best_c: Vec<&(usize, simplex::Local)> = locals.iter().collect();
    best_c.sort_by(|a, b| a.1.f.total_cmp(&b.1.f).then(a.0.cmp(&b.0)));

    // Refinement at full draws from the best two, then one restart of the winner.
    let tol_f = 0.01 * full_obj.floor();
    let refined: Vec<(usize, simplex::Local)> = best_c[..best_c.len().min(2)]
        .par_iter()
        .map(|(i, r)| {
            let a = simplex::local(
                &|x: &[f64]| full_obj.cost(x),
                &r.x,
                0.2,
                150 * d as u64 + 100,
                tol_f,
            );
            let b = simplex::local(
                &|x: &[f64]| full_obj.cost(x),
                &a.x,
                0.05,
                100 * d as u64 + 50,
                tol_f,
            );
            tick();
            let best = if b.f <= a.f { b } else { a };
            (*i, best)
        })
        .collect();
    for (i, r) in &refined {
        searches.push(SearchRecord {
            stage: "full",
            start: *i,
            cost: r.f,
            iterations: r.iterations,
            stop: r.stop.clone(),
        });
    }
    let best = refined
        .iter()
        .min_by(|a, b| a.1.f.total_cmp(&b.1.f).then(a.0.cmp(&b.0)))
        .map(|(_, r)| r.x.clone())
        .ok_or_else(|| Error::Numeric("no local search finished".into()))?;
    Ok((
        full_obj.full(&best),
        OptimiserRecord {
            evaluations: full_obj.evaluations() + coarse.evaluations(),
            starts: starts.len(),
            coarse_draws: nc,
            searches,
        },
    ))
}

/// What a single fit produces before judgement.
pub struct Point {
    pub h: Vec<f64>,
    pub opt: OptimiserRecord,
    pub ident: diagnostics::Identifiability,
    pub front: Option<pareto::Front>,
    pub tie_break: String,
}

/// Optimise, analyse identifiability, apply the tie-break rule.
pub fn fit_point(spec: &Spec, warm: Option<&[f64]>, progress: Option<Progress>) -> Result<Point> {
    use crate::spec::TieBreak;
    let (h0, mut opt) = optimise(spec, 0.0, warm, progress)?;
    let mut obj = Objective::new(
        spec,
        spec.draws,
        spec.seed,
        rng::FIT_STREAMS,
        spec.fit.discrepancy,
    );
    let eta0 = obj.eta(&h0);
    let ident = diagnostics::analyse(&obj, &eta0);
    let (h, front, how) = match spec.fit.tie_break {
        TieBreak::Off => (h0, None, "off".to_string()),
        TieBreak::Auto if ident.undetermined.is_empty() => (h0, None, "off".to_string()),
        TieBreak::Kappa(k) => {
            obj.kappa = k * obj.floor();
            let d = eta0.len() as u64;
            let r = simplex::local(
                &|e: &[f64]| obj.cost(e),
                &eta0,
                0.3,
                120 * d + 60,
                1e-3 * obj.floor(),
            );
            (obj.full(&r.x), None, format!("kappa {k}"))
        }
        TieBreak::Knee | TieBreak::Widest | TieBreak::Auto => {
            let rule = if spec.fit.tie_break == TieBreak::Knee {
                "knee"
            } else {
                "widest"
            };
            let f = pareto::trace(&mut obj, &eta0, rule);
            (
                f.points[f.chosen].hyperparameters.clone(),
                Some(f),
                rule.to_string(),
            )
        }
    };
    opt.evaluations += obj.evaluations();
    Ok(Point {
        h,
        opt,
        ident,
        front,
        tie_break: how,
    })
}

/// Judge hyperparameters `h` on fresh draws and assemble the result.
pub fn assemble(spec: &Spec, p: Point, started: Instant) -> Result<FitResult> {
    let Point {
        h,
        opt,
        ident,
        front,
        tie_break,
    } = p;
    let kind = spec.fit.discrepancy;
    let n = spec.draws;
    let fit_obj = Objective::new(spec, n, spec.seed, rng::FIT_STREAMS, kind);
    let fresh = Objective::new(spec, n, spec.seed, rng::FRESH_STREAMS, kind);
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
        identifiability: ident,
        tie_break,
        pareto: front,
        replicates: None,
        draws_fresh,
        full: h,
    })
}

/// Fit `spec` end to end (with replicate fits when `spec.fit.replicates > 0`).
pub fn fit(spec: &Spec, progress: Option<Progress>) -> Result<FitResult> {
    let started = Instant::now();
    use crate::spec::TieBreak;
    let point = fit_point(spec, None, progress)?;
    let applied = match (&point.front, spec.fit.tie_break) {
        (_, TieBreak::Kappa(k)) => TieBreak::Kappa(k),
        (Some(f), _) if f.rule == "knee" => TieBreak::Knee,
        (Some(_), _) => TieBreak::Widest,
        (None, _) => TieBreak::Off,
    };
    let mut r = assemble(spec, point, started)?;
    if spec.fit.replicates > 0 {
        r.replicates = Some(replicate::run(spec, spec.fit.replicates, applied)?);
        r.wall_time_s = started.elapsed().as_secs_f64();
    }
    Ok(r)
}

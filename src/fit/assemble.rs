//! Judge the fitted hyperparameters on fresh draws and assemble the result.

use super::*;
use crate::error::Result;
use crate::spec::Spec;
use std::time::Instant;

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
        tolerance: spec.fit.tolerance,
        optimiser: opt,
        wall_time_s: started.elapsed().as_secs_f64(),
        prior: spec.model.priors(&h),
        likelihood: spec.model.likelihood(),
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

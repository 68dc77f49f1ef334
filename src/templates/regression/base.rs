//! Base draws of a regression template: the prior columns, the coefficient
//! streams, and the λ-free work cached per set of draws — the design products of
//! the cached coefficient kinds, or the normals and local variates of the
//! recomputed kinds with, for a regularised horseshoe, the tabulated products
//! ([`super::table`]) kept in a cache shared by the bases of one fit. Also the
//! working-memory estimate of both.

use super::{coef, table, Regression};
use crate::error::{Error, Result};
use crate::rng;
use crate::templates::{BaseDraws, Hyper, HyperValue};
use coef::{Eff, Kind, Products};
use std::sync::{Arc, Mutex};

/// The last regularised-horseshoe table, keyed by the draw plan: a later set of
/// base draws with the same streams and no more draws uses its first rows (draw i
/// depends only on its own streams), so the coarse and refit bases of a fit share
/// the full base's set-up.
pub(super) type TableCache = Mutex<Option<(rng::Plan, Arc<table::Table>)>>;

/// λ-free work cached per set of base draws.
pub(super) struct RegBase {
    /// Cached kinds: products with unit global multiplier.
    pub(super) cached: Option<Products>,
    /// Recomputed kinds: normals and local variates, draws × p.
    pub(super) z: Vec<f64>,
    pub(super) loc: Vec<f64>,
    /// Regularised horseshoe: tabulated design products ([`table`]).
    pub(super) table: Option<Arc<table::Table>>,
    /// With the table: κ_i = √(IG(ν/2, ν/2) quantile of draw i's slab uniform), so
    /// that c_i = s·κ_i without a quantile per evaluation.
    pub(super) kappa: Vec<f64>,
    /// A fault met while drawing (a poisoned table-cache lock): `draw_base` cannot
    /// fail, so [`Regression::evaluation`] reports it as [`Error::Internal`].
    pub(super) fault: Option<String>,
}

impl RegBase {
    /// The cached work of `base`, or the fault met while drawing it.
    pub(super) fn of(base: &BaseDraws) -> Result<&RegBase> {
        let ex = base
            .extra
            .as_ref()
            .and_then(|e| e.downcast_ref::<RegBase>())
            .ok_or_else(|| {
                Error::Numeric("base draws were not made by a regression template".into())
            })?;
        match &ex.fault {
            Some(m) => Err(Error::Internal(m.clone())),
            None => Ok(ex),
        }
    }
}

/// The bounds of a hyperparameter (a fixed value is its own bounds).
fn bounds(h: &Hyper) -> (f64, f64) {
    match h.value {
        HyperValue::Fixed(x) => (x, x),
        HyperValue::Free { lo, hi, .. } => (lo, hi),
    }
}

/// The message of a poisoned table-cache lock.
const POISONED: &str = "the regression table cache is unusable: a thread panicked while holding it";

impl Regression {
    /// The regularised-horseshoe table ([`table`]) for these base draws, when the
    /// beliefs need the design quadratic form but not the rows, slab_df is fixed
    /// and the global or slab scale is free. `Err`: the cache lock is poisoned.
    fn tabulate(
        &self,
        h0: &[f64],
        cols: &[Vec<f64>],
        z: &[f64],
        loc: &[f64],
        plan: &rng::Plan,
    ) -> std::result::Result<Option<Arc<table::Table>>, &'static str> {
        let c = &self.coef;
        let hy = &self.priors.hypers;
        let n = cols[self.priors.priors.len()].len();
        if let Some((p, t)) = self.tables.lock().map_err(|_| POISONED)?.as_ref() {
            if p == plan && t.draws >= n {
                return Ok(Some(t.clone()));
            }
        }
        if c.kind != Kind::RegHorseshoe || hy[c.idx[2]].is_free() {
            return Ok(None);
        }
        let ((tlo, thi), (slo, shi)) = (bounds(&hy[c.idx[0]]), bounds(&hy[c.idx[1]]));
        let (ulo, uhi) = ((tlo / shi).ln(), (thi / slo).ln());
        if !(ulo.is_finite() && uhi.is_finite() && uhi > ulo) {
            return Ok(None);
        }
        let k = self.priors.priors.len();
        let (gu, cu) = (&cols[k], &cols[k + 1]);
        let mut unit = h0.to_vec();
        unit[c.idx[0]] = 1.0;
        unit[c.idx[1]] = 1.0;
        let Ok(kappa) = c.slabs(&unit, cu) else {
            return Ok(None);
        };
        let a: Vec<f64> = gu
            .iter()
            .zip(&kappa)
            .map(|(g, k)| c.global(&unit, *g, 0.0, 0.0) / k)
            .collect();
        if a.iter().any(|x| !(x.is_finite() && *x > 0.0)) {
            return Ok(None);
        }
        let Some(t) = table::Table::build(&self.design, &a, z, loc, ulo, uhi) else {
            return Ok(None);
        };
        let t = Arc::new(t);
        *self.tables.lock().map_err(|_| POISONED)? = Some((*plan, t.clone()));
        Ok(Some(t))
    }

    /// The base draws ([`crate::templates::Model::draw_base`]).
    pub(super) fn draw(&self, n: usize, plan: &rng::Plan) -> BaseDraws {
        let (seed, block) = (plan.seed, plan.block);
        // Priors 0–7 on streams 0–7 as always; later ones (covariate-specific
        // priors) after the three global streams, below the coefficient streams.
        // Random-slope sds on streams of their own ([`super::multilevel::SLOPE_STREAM`]).
        let mut cols = self.priors.draw_base_on(n, plan, |k| {
            match self.slopes.iter().position(|s| s.prior == k) {
                Some(s) => super::multilevel::SLOPE_STREAM + s as u64,
                None if k < 8 => k as u64,
                None => k as u64 + 3,
            }
        });
        cols.push(plan.uniforms(coef::GLOBAL_STREAM, n));
        cols.push(plan.uniforms(coef::SLAB_STREAM, n));
        cols.push(plan.uniforms(coef::R2_STREAM, n));
        // Independent priors per group: three uniforms per group ([`super::indep`]).
        // Groups of covariates: G − 1 stick-breaking uniforms ([`super::groups`]).
        if let Some(ind) = &self.coef.indep {
            ind.streams(plan, n, &mut cols);
        } else if let Some(g) = &self.coef.groups {
            for k in 0..g.count() - 1 {
                cols.push(plan.uniforms(super::groups::SHARE_STREAM + k as u64, n));
            }
        }
        let needs = &self.needs;
        let p = self.design.cols();
        let h0: Vec<f64> = self
            .priors
            .hypers
            .iter()
            .map(Hyper::default_value)
            .collect();
        let d = &self.design;
        let c = &self.coef;
        let mut ex = RegBase {
            cached: None,
            z: Vec::new(),
            loc: Vec::new(),
            table: None,
            kappa: Vec::new(),
            fault: None,
        };
        let named = needs.forms[..needs.cross.min(needs.forms.len())]
            .iter()
            .flatten()
            .filter(|(_, a)| *a != 0.0)
            .map(|(j, _)| *j);
        if let (Some(ind), Some(gr)) = (&c.indep, &c.groups) {
            let sob = coef::SobolCols::draw(c, p, named, n, plan);
            if c.cached {
                let fill = |i: usize, w: &mut [f64], z: &mut [f64]| {
                    ind.base_draw(c, d, seed, block, i, z, w, &sob);
                    for (j, x) in w.iter_mut().enumerate() {
                        *x = ind.cached_w(gr.of[j], &h0, *x);
                    }
                };
                let eff = if needs.eff { Eff::Store } else { Eff::None };
                ex.cached = Some(coef::products_grouped(
                    d,
                    n,
                    &needs.forms,
                    false,
                    needs.q,
                    eff,
                    true,
                    &fill,
                    Some(gr),
                ));
            } else {
                use rayon::prelude::*;
                ex.z = vec![0.0; n * p];
                ex.loc = vec![0.0; n * p];
                ex.z.par_chunks_mut(p)
                    .zip(ex.loc.par_chunks_mut(p))
                    .enumerate()
                    .for_each(|(i, (z, l))| ind.base_draw(c, d, seed, block, i, z, l, &sob));
            }
            return BaseDraws {
                n,
                cols,
                extra: Some(Box::new(ex)),
            };
        }
        if let Some(prod) = self.unit_signal(n) {
            // Nothing but Σ_j s_j²w_j² per group is read, and that is 1 for every
            // draw: no coefficient variate needs drawing.
            ex.cached = Some(prod);
            return BaseDraws {
                n,
                cols,
                extra: Some(Box::new(ex)),
            };
        }
        let sob = coef::SobolCols::draw(c, p, named, n, plan);
        if c.cached {
            let fill = |i: usize, w: &mut [f64], z: &mut [f64]| {
                c.base_draw(d, seed, block, i, z, w, &sob);
                for x in w.iter_mut() {
                    *x = c.cached_w(&h0, *x);
                }
            };
            let eff = if needs.eff { Eff::Store } else { Eff::None };
            ex.cached = Some(coef::products_grouped(
                d,
                n,
                &needs.forms,
                needs.rows,
                needs.q,
                eff,
                true,
                &fill,
                c.groups.as_ref(),
            ));
        } else {
            use rayon::prelude::*;
            ex.z = vec![0.0; n * p];
            ex.loc = vec![0.0; n * p];
            ex.z.par_chunks_mut(p)
                .zip(ex.loc.par_chunks_mut(p))
                .enumerate()
                .for_each(|(i, (z, l))| c.base_draw(d, seed, block, i, z, l, &sob));
            // Bases on the fresh streams only judge the fitted point, and the
            // replicates of the Monte Carlo error take a gradient there (a few
            // evaluations each): the exact products are cheaper than a table.
            if needs.q && !needs.rows && plan.block == rng::FIT_STREAMS {
                match self.tabulate(&h0, &cols, &ex.z, &ex.loc, plan) {
                    Ok(t) => ex.table = t,
                    Err(m) => ex.fault = Some(m.to_string()),
                }
                if ex.table.is_some() {
                    let mut unit = h0.clone();
                    unit[c.idx[1]] = 1.0;
                    ex.kappa = c
                        .slabs(&unit, &cols[self.priors.priors.len() + 1])
                        .unwrap_or_default();
                }
            }
        }
        BaseDraws {
            n,
            cols,
            extra: Some(Box::new(ex)),
        }
    }

    /// R2D2 when the beliefs read neither the design quadratic form, nor rows,
    /// linear forms or shrinkage terms (say `r2_marginal` and `r2_share` only):
    /// the per-draw signal variance of each group at unit multiplier,
    /// Σ_{j∈g} s_j²w_j² = Σ_{j∈g} γ_j/S_g, is exactly 1 when every column of the
    /// group that takes part has s_j² > 0, so the base draws need no coefficient
    /// variates. Then the products: G values of v per draw (all 1), q left at 0
    /// as when it is not asked for; else `None`.
    fn unit_signal(&self, n: usize) -> Option<Products> {
        let (c, needs, d) = (&self.coef, &self.needs, &self.design);
        if c.kind != Kind::R2d2 || needs.q || needs.rows || needs.eff || !needs.forms.is_empty() {
            return None;
        }
        let of = |j: usize| c.groups.as_ref().map_or(0, |g| g.of[j]);
        let ng = c.groups.as_ref().map_or(1, |g| g.count());
        let mut seen = vec![false; ng];
        for j in 0..d.cols() {
            if c.skip.get(j).copied().unwrap_or(false) {
                continue;
            }
            if d.var[j].is_nan() || d.var[j] <= 0.0 {
                return None;
            }
            seen[of(j)] = true;
        }
        if seen.iter().any(|s| !s) {
            return None;
        }
        Some(Products {
            q: vec![0.0; n * ng * ng],
            v: vec![1.0; n * ng],
            ..Default::default()
        })
    }

    /// Bytes of the base draws ([`Regression::draw`], above) for n draws, for
    /// every set a fit holds at once ([`crate::templates::fit_peak_bytes`]),
    /// plus one simulation's per-draw vectors per set, the regularised
    /// horseshoe's table and the design. Per draw: the prior columns and three coefficient
    /// streams (8 B each); cached kinds: q, v and one value per registered profile
    /// form (8 B each), n s_j² w_j² for effective_nonzero (p × 4 B, f32) and X_cβ
    /// for row-level quantities (rows × 8 B); recomputed kinds: the normals and
    /// local variates (2p × 8 B), X_cβ being recomputed per evaluation.
    pub(super) fn bytes_for(&self, n: usize) -> (u64, String) {
        let what = format!(
            "{n} draws × {} design columns ({} rows)",
            self.design.cols(),
            self.design.rows()
        );
        let needs = &self.needs;
        let (n, p, r) = (
            n as u64,
            self.design.cols() as u64,
            self.design.rows() as u64,
        );
        let k = self.priors.priors.len() as u64;
        let forms = needs.forms.len() as u64;
        let mut per_draw = 8 * (k + 3);
        if self.coef.cached {
            per_draw += 8 * (2 + forms);
            if needs.eff {
                per_draw += 4 * p;
            }
        } else {
            per_draw += 16 * p;
        }
        if needs.rows {
            per_draw += 8 * r;
        }
        // Groups of covariates: G − 1 stick uniforms, G² cross products, G values
        // of Σ s_j²w_j² and of each form (beyond the ungrouped one each).
        if let Some(g) = &self.coef.groups {
            let g = g.count() as u64;
            per_draw += 8 * ((g - 1) + (g * g - 1) + (g - 1) * (1 + forms));
            if self.coef.indep.is_some() {
                // three uniforms per group, the multipliers and their squares
                per_draw += 8 * (3 * g + 2 * g);
            }
        }
        // One simulation: parameter columns, ρ, global scales, outputs and sort buffers.
        let sim = 8 * (k + 8 + 3 * forms.max(1));
        // The design itself: the centred matrix kept by the model and, while
        // the file is read, the row-major cells it was built from.
        let design = 16 * r.saturating_mul(p);
        // The regularised horseshoe's table on the fitting draws (log Q and
        // log V at NODES nodes, plus the slab and ratio vectors and one
        // products pass while it is built).
        let table = if self.coef.kind == Kind::RegHorseshoe && !self.coef.cached {
            n.saturating_mul(16 * super::table::NODES as u64 + 48)
        } else {
            0
        };
        (
            crate::templates::fit_peak_bytes(
                n as usize,
                per_draw + sim,
                design.saturating_add(table),
            ),
            what,
        )
    }
}

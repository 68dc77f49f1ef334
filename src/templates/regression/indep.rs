//! Independent shrinkage priors per group of covariates: `[prior.coefficients]`
//! without a `family` of its own, holding one table `[prior.coefficients.NAME]`
//! per group, each with `covariates` (a list of design columns, or `"rest"` for
//! every column no other group names and no covariate-specific prior takes),
//! `family` (any coefficient family of [`super::coef`]) and that family's
//! hyperparameters, named `coefficients.NAME.<param>`, each fixed or fitted.
//!
//! The prior: the groups are independent; within group g the coefficients follow
//! the group's family exactly as the shared prior would on those columns alone,
//! β_j = ω_j z_j with ω_j = g_g(i)·w_j (a per-draw group multiplier and a local
//! factor; the regularised horseshoe, not a pure scale, is recomputed). A group
//! under `r2d2` has its own R²_g ~ Beta(a_g, b_g) and its own Dirichlet over its
//! columns, so V_g = Σ_{j∈g} s_j²ω_j² = ρW_g and the group's own marginal R²,
//! V_g/(V_g + ρ), is exactly Beta(a_g, b_g).
//!
//! Per-group quantities: `r2_marginal` with `group = "NAME"` is V_g/(V_g + ρ), and
//! `r2_share` is V_g/Σ_h V_h, the group's share of the signal variance (for the
//! joint R2D2 of [`super::groups`] both definitions give its φ_g and ρWφ_g).
//!
//! Draws: the coefficient normals and local variates on the coefficient streams
//! of [`super::coef`] (column by column, each by its group's family), the
//! Sobol columns of [`super::coef::SobolCols`]; each group's global uniform, slab
//! uniform and R² uniform on streams [`GROUP_STREAM`] + 3g + {0, 1, 2}, fresh
//! ids no other prior uses (Sobol dimensions 64 … 111 of the coefficient
//! columns' scramble). When every group's family is a scale mixture with
//! λ-free local factors (all but the regularised horseshoe and spike-and-slab
//! with a fitted inclusion), the per-group design products are computed once
//! per set of base draws and each evaluation only rescales them by the group
//! multipliers (O(draws·G²)); otherwise they are recomputed per evaluation.

use super::coef::{self, CoefPrior, Kind, Products, SobolCols};
use super::groups::Grouping;
use crate::design::Design;
use crate::error::Result;
use crate::input::{key, Ctx, Seg};
use crate::rng;
use crate::templates::Hyper;
use nalgebra::DMatrix;

/// At most this many independent groups (three streams each).
pub const MAX_GROUPS: usize = 16;
/// Stream id (relative to the block) of group 0's global uniform; group g uses
/// GROUP_STREAM + 3g (global), + 3g + 1 (slab), + 3g + 2 (R²).
pub const GROUP_STREAM: u64 = (1 << 23) + 64;

/// The groups' own priors, in the order of the grouping's names.
#[derive(Debug, Clone)]
pub struct Indep {
    pub priors: Vec<CoefPrior>,
}

fn sub(path: &[Seg], k: &str) -> Vec<Seg> {
    let mut p = path.to_vec();
    p.push(key(k));
    p
}

const EXAMPLE: &str = "[prior.coefficients.clinical]\n  covariates = [\"age\", \"sex\"]\n  family = \"normal\"\n  scale = { fit = [0.05, 2.0] }\n  [prior.coefficients.omics]\n  covariates = \"rest\"\n  family = \"regularised-horseshoe\"\n  global_scale = { fit = [0.0001, 1.0] }\n  slab_scale = 2.0\n  slab_df = 4";

/// Whether a value is a group table (a table with `covariates` or `family`).
fn is_group(v: &toml::Value) -> bool {
    v.as_table()
        .is_some_and(|t| t.contains_key("covariates") || t.contains_key("family"))
}

/// Read the independent form from `[prior.coefficients]` (the table `t`), or
/// `None` when `t` is the shared form. `own`: columns with priors of their own.
pub fn parse(
    ctx: &Ctx,
    path: &[Seg],
    t: &toml::Table,
    design: &Design,
    hypers: &mut Vec<Hyper>,
    own: &[usize],
) -> Result<Option<CoefPrior>> {
    if t.contains_key("family") {
        if let Some((name, _)) = t.iter().find(|(k, v)| *k != "groups" && is_group(v)) {
            return Err(ctx
                .err(
                    &sub(path, name),
                    format!(
                        "[prior.coefficients] has a `family` of its own and a group table `{name}`: \
                         choose one form"
                    ),
                )
                .with_hint(format!(
                    "independent priors per group: drop `family` (and its hyperparameters) from \
                     [prior.coefficients] and give each group its own, e.g.\n  {EXAMPLE}\n\
                     one joint R2D2 prior splitting R² across groups: family = \"r2d2\" with \
                     [prior.coefficients.groups.NAME] tables (covariates, weight)"
                )));
        }
        return Ok(None);
    }
    if t.contains_key("groups") {
        return Err(ctx
            .err(
                &sub(path, "groups"),
                "`groups` belongs to the joint R2D2 prior and needs family = \"r2d2\" in [prior.coefficients]",
            )
            .with_hint(format!(
                "joint form: family = \"r2d2\", a, b, concentration and [prior.coefficients.groups.NAME] \
                 with covariates and weight; independent form: [prior.coefficients.NAME] tables, e.g.\n  {EXAMPLE}"
            )));
    }
    if !t.values().any(is_group) {
        return Ok(None);
    }
    if t.len() > MAX_GROUPS {
        return Err(ctx.err(
            path,
            format!("{} groups given; at most {MAX_GROUPS}", t.len()),
        ));
    }
    let p = design.cols();
    let none = usize::MAX;
    let mut of = vec![none; p];
    let mut names: Vec<String> = Vec::new();
    let mut priors = Vec::new();
    let mut rest = None;
    for (g, (name, gv)) in t.iter().enumerate() {
        let np = sub(path, name);
        let gt = match gv.as_table() {
            Some(gt) if is_group(gv) => gt,
            _ => {
                return Err(ctx
                    .err(
                        &np,
                        format!(
                            "`{name}` in [prior.coefficients] without `family`: with independent \
                             priors per group every entry is a group table"
                        ),
                    )
                    .with_hint(format!("e.g.\n  {EXAMPLE}")))
            }
        };
        if !name.starts_with(|c: char| c.is_ascii_alphabetic())
            || !name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_')
        {
            return Err(ctx
                .err(
                    &np,
                    format!("group name \"{name}\" is not usable in exported code"),
                )
                .with_hint("letters, digits and _, starting with a letter"));
        }
        if gt.contains_key("weight") {
            return Err(ctx
                .err(
                    &sub(&np, "weight"),
                    "`weight` belongs to the joint R2D2 prior's groups ([prior.coefficients.groups.NAME])",
                )
                .with_hint("here each group has its own family and hyperparameters; drop `weight`"));
        }
        let cv = gt.get("covariates").ok_or_else(|| {
            ctx.err(&np, format!("group `{name}` needs `covariates`"))
                .with_hint(
                    "a list of design columns, or \"rest\" for every column no other group names",
                )
        })?;
        let cp = sub(&np, "covariates");
        match cv {
            toml::Value::String(s) if s == "rest" => {
                if let Some(r) = rest {
                    return Err(ctx.err(
                        &cp,
                        format!(
                            "only one group may take the \"rest\" (group `{}` does)",
                            names[r]
                        ),
                    ));
                }
                rest = Some(g);
            }
            toml::Value::Array(a) if !a.is_empty() => {
                for x in a {
                    let c = ctx.string(&cp, x)?;
                    let j = super::own::column(ctx, design, &cp, c)?;
                    if own.contains(&j) {
                        return Err(ctx
                            .err(&cp, format!("\"{c}\" has a prior of its own ([prior.{c}] or a list)"))
                            .with_hint("a covariate takes either its own prior or its group's: drop it from one"));
                    }
                    if of[j] != none {
                        let prev = if of[j] == g { name } else { &names[of[j]] };
                        return Err(ctx.err(
                            &cp,
                            format!(
                                "\"{c}\" is already in group `{prev}`: a covariate belongs to one group"
                            ),
                        ));
                    }
                    of[j] = g;
                }
            }
            other => {
                return Err(ctx.err(
                    &cp,
                    format!(
                        "`covariates` must be a non-empty list of column names or \"rest\", not {other}"
                    ),
                ));
            }
        }
        let fam = gt.get("family").ok_or_else(|| {
            ctx.err(&np, format!("group `{name}` needs `family`"))
                .with_hint(format!("e.g.\n  {EXAMPLE}"))
        })?;
        let fp = sub(&np, "family");
        let fname = ctx.string(&fp, fam)?;
        if !coef::FAMILIES.contains(&fname) && fname != "regularized-horseshoe" {
            return Err(ctx
                .err(
                    &fp,
                    format!("family \"{fname}\" is not a shrinkage prior for a group of coefficients"),
                )
                .with_hint(format!(
                    "a group takes one of: {}; a single covariate's own prior ([prior.COLUMN]) takes any family on the real line",
                    coef::FAMILIES.join(", ")
                )));
        }
        let prefix = format!("coefficients.{name}");
        priors.push(coef::parse_family(
            ctx, &np, gt, &prefix, None, hypers, fam,
        )?);
        names.push(name.clone());
    }
    for (j, o) in of.iter_mut().enumerate() {
        if *o == none && !own.contains(&j) {
            match rest {
                Some(r) => *o = r,
                None => {
                    return Err(ctx
                        .err(
                            path,
                            format!("design column \"{}\" is in no group", design.names[j]),
                        )
                        .with_hint(
                            "name it in a group, or let one group take covariates = \"rest\"",
                        ))
                }
            }
        }
    }
    let mut cols = vec![Vec::new(); names.len()];
    for (j, g) in of.iter_mut().enumerate() {
        if *g == none {
            // A covariate with a prior of its own: in no group (its shared
            // local factor is 0); any index serves the per-group sums.
            *g = 0;
        } else {
            cols[*g].push(j);
        }
    }
    if let Some(g) = cols.iter().position(Vec::is_empty) {
        return Err(ctx.err(
            &sub(path, &names[g]),
            format!("group `{}` has no columns left", names[g]),
        ));
    }
    let x = cols
        .iter()
        .map(|c| DMatrix::from_fn(design.rows(), c.len(), |r, k| design.xc[(r, c[k])]))
        .collect();
    let cached = priors.iter().all(|c| c.cached);
    Ok(Some(CoefPrior {
        kind: Kind::Normal,
        global_fixed: false,
        idx: Vec::new(),
        names: Vec::new(),
        shape: 0.0,
        cached,
        skip: Vec::new(),
        groups: Some(Grouping {
            names,
            idx: Vec::new(),
            of,
            cols,
            x,
        }),
        indep: Some(Box::new(Indep { priors })),
    }))
}

impl Indep {
    /// The number of groups.
    pub fn count(&self) -> usize {
        self.priors.len()
    }

    /// Each group's global, slab and R² uniforms, appended to the base columns.
    pub fn streams(&self, plan: &rng::Plan, n: usize, cols: &mut Vec<Vec<f64>>) {
        for g in 0..self.count() as u64 {
            for t in 0..3 {
                cols.push(plan.uniforms(GROUP_STREAM + 3 * g + t, n));
            }
        }
    }

    /// Draw i's normals z and local variates: each column by its group's
    /// family (see [`CoefPrior::base_draw`] for one family), R2D2's Dirichlet
    /// normalised within its group, covariates with priors of their own at 0.
    #[allow(clippy::too_many_arguments)]
    pub fn base_draw(
        &self,
        top: &CoefPrior,
        d: &Design,
        seed: u64,
        block: u64,
        i: usize,
        z: &mut [f64],
        loc: &mut [f64],
        sob: &SobolCols,
    ) {
        let Some(gr) = &top.groups else {
            return;
        };
        let mut r = rng::stream(seed, block + coef::COEF_STREAM + 2 * i as u64);
        for x in z.iter_mut() {
            *x = crate::numerics::norm_quantile(rng::open01(&mut r));
        }
        let mut r = rng::stream(seed, block + coef::COEF_STREAM + 2 * i as u64 + 1);
        let half = |z: f64| 0.5 * z * z;
        for (j, x) in loc.iter_mut().enumerate() {
            let pr = &self.priors[gr.of[j]];
            *x = match pr.kind {
                Kind::Normal => 1.0,
                Kind::StudentT => {
                    let nu = pr.shape;
                    (nu / (2.0 * coef::gamma_variate(0.5 * nu, &mut r))).sqrt()
                }
                Kind::R2d2 if pr.r2d2_half() => {
                    half(crate::numerics::norm_quantile(rng::open01(&mut r)))
                }
                Kind::R2d2 => coef::gamma_variate(pr.shape, &mut r),
                _ => pr.local_from_uniform(rng::open01(&mut r)).unwrap_or(1.0),
            };
        }
        for (k, j) in sob.cols.iter().enumerate() {
            z[*j] = sob.z[k][i];
            let Some(u) = sob.u.get(k) else { continue };
            let pr = &self.priors[gr.of[*j]];
            match pr.kind {
                Kind::Normal | Kind::StudentT => {}
                Kind::R2d2 => {
                    if pr.r2d2_half() {
                        loc[*j] = half(crate::numerics::norm_quantile(u[i]));
                    }
                }
                _ => loc[*j] = pr.local_from_uniform(u[i]).unwrap_or(loc[*j]),
            }
        }
        let skip = |j: usize| top.skip.get(j).copied().unwrap_or(false);
        let mut s = vec![0.0; self.count()];
        for (j, x) in loc.iter().enumerate() {
            if !skip(j) {
                s[gr.of[j]] += *x;
            }
        }
        for (j, x) in loc.iter_mut().enumerate() {
            let pr = &self.priors[gr.of[j]];
            if skip(j) {
                *x = if pr.kind == Kind::SpikeSlab {
                    f64::INFINITY
                } else {
                    0.0
                };
            } else if pr.kind == Kind::R2d2 {
                let v = d.var[j];
                *x = if v > 0.0 {
                    (*x / s[gr.of[j]] / v).sqrt()
                } else {
                    0.0
                };
            }
        }
    }

    /// The local factor w of column j (group `g`) from its stored variate, at
    /// the cached kinds' fixed hyperparameters `h`.
    pub fn cached_w(&self, g: usize, h: &[f64], loc: f64) -> f64 {
        self.priors[g].cached_w(h, loc)
    }

    /// Each draw's group multipliers g_g(i) (draws × G) from the groups'
    /// uniforms `u` (3 per group) and the reference residual variances ρ.
    pub fn multipliers(&self, h: &[f64], u: &[Vec<f64>], rho: &[f64]) -> Result<Vec<f64>> {
        let (n, m) = (rho.len(), self.count());
        let mut out = vec![0.0; n * m];
        for (a, pr) in self.priors.iter().enumerate() {
            let (gu, ru) = (&u[3 * a], &u[3 * a + 2]);
            let w = pr.r2d2_w(h, &ru[..n])?;
            for i in 0..n {
                out[i * m + a] = pr.global(h, gu[i], w.get(i).copied().unwrap_or(0.0), rho[i]);
            }
        }
        Ok(out)
    }

    /// The scales ω of draw i (recomputed route): the group multiplier times
    /// the local factor, the regularised horseshoe's λ̃ and spike-and-slab's
    /// inclusion at `h`. `slabs[g]`: group g's slab scales (else empty).
    #[allow(clippy::too_many_arguments)]
    pub fn scales(
        &self,
        of: &[usize],
        h: &[f64],
        mult: &[f64],
        slabs: &[Vec<f64>],
        i: usize,
        loc: &[f64],
        w: &mut [f64],
    ) {
        let m = self.count();
        for (j, (w, l)) in w.iter_mut().zip(loc).enumerate() {
            let a = of[j];
            let pr = &self.priors[a];
            let t = mult[i * m + a];
            *w = match pr.kind {
                Kind::RegHorseshoe => coef::reg_horseshoe_scale(slabs[a][i], t * l),
                Kind::SpikeSlab => coef::spike_slab_scale(*l, h[pr.idx[0]], h[pr.idx[1]]),
                _ => t * pr.cached_w(h, *l),
            };
        }
    }
}

/// The products of the recomputed route at `h` ([`coef::products_grouped`] with
/// unit group multipliers).
#[allow(clippy::too_many_arguments)]
pub(super) fn recompute(
    ind: &Indep,
    gr: &Grouping,
    d: &Design,
    h: &[f64],
    u: &[Vec<f64>],
    rho: &[f64],
    z: &[f64],
    loc: &[f64],
    needs: &super::request::Needs,
) -> Result<Products> {
    let n = rho.len();
    let p = d.cols();
    let mult = ind.multipliers(h, u, rho)?;
    let slabs: Vec<Vec<f64>> = ind
        .priors
        .iter()
        .enumerate()
        .map(|(a, pr)| pr.slabs(h, &u[3 * a + 1][..n]))
        .collect::<Result<_>>()?;
    let fill = |i: usize, w: &mut [f64], zz: &mut [f64]| {
        zz.copy_from_slice(&z[i * p..(i + 1) * p]);
        ind.scales(&gr.of, h, &mult, &slabs, i, &loc[i * p..(i + 1) * p], w);
    };
    let eff = if needs.eff {
        coef::Eff::Store
    } else {
        coef::Eff::None
    };
    let parallel = rayon::current_thread_index().is_none();
    Ok(coef::products_grouped(
        d,
        n,
        &needs.forms,
        false,
        needs.q,
        eff,
        parallel,
        &fill,
        Some(gr),
    ))
}

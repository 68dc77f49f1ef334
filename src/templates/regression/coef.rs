//! Coefficient priors of the regression templates, read from `[prior.coefficients]`,
//! and the per-draw linear algebra that turns a coefficient draw into design-level
//! quantities.
//!
//! Every family is a scale mixture of normals, β_j = ω_j z_j with z_j ~ N(0, 1) and
//! a scale ω_j = g·w_j that splits into a per-draw multiplier g (global) and a
//! λ-free local factor w_j:
//! * `normal` (ridge), scale s:               g = s, w_j = 1
//! * `student-t`, df ν (fixed), scale s:      g = s, w_j = √(ν/χ²_ν)
//! * `laplace`, scale b:                      g = b, w_j = √(2E_j), E_j ~ Exp(1)
//!   (Andrews & Mallows 1974, JRSS B 36: the Laplace is a normal scale mixture)
//! * `horseshoe`, global_scale τ0 (Carvalho, Polson & Scott 2010, Biometrika 97):
//!   g = τ = τ0·c, c ~ C⁺(0, 1) (`global = "half-cauchy"`, default) or c = 1
//!   (`global = "fixed"`); w_j = λ_j ~ C⁺(0, 1)
//! * `regularised-horseshoe`, global_scale, slab_scale s, slab_df ν (Piironen &
//!   Vehtari 2017, EJS 11, eq. 2.8): c² ~ Inv-Gamma(ν/2, νs²/2),
//!   λ̃_j² = c²λ_j²/(c² + τ²λ_j²), ω_j = τλ̃_j — not a pure scale: its design
//!   products are tabulated in log(τ0/s) ([`super::table`]) or recomputed
//! * `r2d2`, a, b, concentration a_π (fixed) (Zhang, Naughton, Bondell & Reich 2022,
//!   JASA 117): R² ~ Beta(a, b), W = R²/(1 − R²), φ ~ Dirichlet(a_π, …, a_π),
//!   β_j ~ N(0, ρ·W·φ_j/s_j²), with ρ the template's reference residual variance
//!   and s_j² the design variance of covariate j, so that Σ_j s_j² E[β_j² | W, φ] = ρW
//!   on any design: the marginal R² is exactly Beta(a, b).
//!   The normal-kernel version of R2D2 (the paper's Laplace kernel is a further
//!   exponential mixture); g = √(ρW), w_j = √φ_j / s_j
//! * `spike-and-slab`, inclusion π, slab_scale s: β_j = δ_j s z_j, δ_j ~ Bernoulli(π)
//!   (Mitchell & Beauchamp 1988, JASA 83); cached when π is fixed.
//!
//! When ω = g·w with w free of the hyperparameters, Xβ = g·X(w∘z): the design
//! products are computed once per fit (q = ‖X_c(w∘z)‖²/n and friends) and only
//! rescaled afterwards. Otherwise each evaluation forms the coefficient draws in
//! blocks of draws and multiplies them with the design ([`super::products`]),
//! in parallel with rayon where the caller is not already a pool worker. Blocks
//! are independent, so results do not depend on the thread count.

use crate::design::Design;
use crate::error::Result;
use crate::input::{key, Ctx, Seg};
use crate::rng;
use crate::templates::{Hyper, HyperValue};

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Kind {
    Normal,
    StudentT,
    Laplace,
    Horseshoe,
    RegHorseshoe,
    R2d2,
    SpikeSlab,
}

pub const FAMILIES: [&str; 7] = [
    "normal",
    "student-t",
    "laplace",
    "horseshoe",
    "regularised-horseshoe",
    "r2d2",
    "spike-and-slab",
];

/// What a hyperparameter may be.
#[derive(Clone, Copy, PartialEq)]
enum Domain {
    Positive,
    Probability,
    /// Positive and fixed (it shapes the cached base draws).
    FixedPositive,
}

impl Kind {
    fn parse(s: &str) -> Option<Kind> {
        Some(match s {
            "normal" => Kind::Normal,
            "student-t" => Kind::StudentT,
            "laplace" => Kind::Laplace,
            "horseshoe" => Kind::Horseshoe,
            "regularised-horseshoe" | "regularized-horseshoe" => Kind::RegHorseshoe,
            "r2d2" => Kind::R2d2,
            "spike-and-slab" => Kind::SpikeSlab,
            _ => return None,
        })
    }
    pub fn name(&self) -> &'static str {
        match self {
            Kind::Normal => "normal",
            Kind::StudentT => "student-t",
            Kind::Laplace => "laplace",
            Kind::Horseshoe => "horseshoe",
            Kind::RegHorseshoe => "regularised-horseshoe",
            Kind::R2d2 => "r2d2",
            Kind::SpikeSlab => "spike-and-slab",
        }
    }
    fn params(&self) -> &'static [(&'static str, Domain)] {
        use Domain::*;
        match self {
            Kind::Normal | Kind::Laplace => &[("scale", Positive)],
            Kind::StudentT => &[("df", FixedPositive), ("scale", Positive)],
            Kind::Horseshoe => &[("global_scale", Positive)],
            Kind::RegHorseshoe => &[
                ("global_scale", Positive),
                ("slab_scale", Positive),
                ("slab_df", Positive),
            ],
            Kind::R2d2 => &[
                ("a", Positive),
                ("b", Positive),
                ("concentration", FixedPositive),
            ],
            Kind::SpikeSlab => &[("inclusion", Probability), ("slab_scale", Positive)],
        }
    }
    fn example(&self) -> &'static str {
        match self {
            Kind::Normal | Kind::Laplace => "scale = { fit = [0.001, 1.0] }",
            Kind::StudentT => "df = 3\n  scale = { fit = [0.001, 1.0] }",
            Kind::Horseshoe => "global_scale = { fit = [0.0001, 1.0] }",
            Kind::RegHorseshoe => {
                "global_scale = { fit = [0.0001, 1.0] }\n  slab_scale = 2.0\n  slab_df = 4"
            }
            Kind::R2d2 => {
                "a = { fit = [0.2, 20] }\n  b = { fit = [0.2, 20] }\n  concentration = 0.5"
            }
            Kind::SpikeSlab => "inclusion = 0.05\n  slab_scale = { fit = [0.01, 2.0] }",
        }
    }
}

pub const EXAMPLE: &str =
    "family = \"horseshoe\"   # normal | student-t | laplace | horseshoe | regularised-horseshoe | r2d2 | spike-and-slab\n  global_scale = { fit = [0.0001, 1.0] }";

/// A validated coefficient prior; `idx` points into the model's hyperparameters.
#[derive(Debug, Clone)]
pub struct CoefPrior {
    pub kind: Kind,
    pub global_fixed: bool,
    pub idx: Vec<usize>,
    pub names: Vec<&'static str>,
    /// Fixed values of the fixed-only parameters (student-t df, r2d2 concentration).
    pub shape: f64,
    /// Whether ω = g·w with w free of every hyperparameter (see module docs).
    pub cached: bool,
    /// Columns that left the shared prior for a covariate-specific one (by
    /// column; empty when none did): their shared scale is 0, and R2D2's
    /// Dirichlet splits the explained variance over the other columns only.
    pub skip: Vec<bool>,
    /// R2D2 with groups of covariates ([`super::groups`]); with independent
    /// priors per group, the same column grouping (no weights).
    pub groups: Option<super::groups::Grouping>,
    /// Independent priors per group of covariates ([`super::indep`]).
    pub indep: Option<Box<super::indep::Indep>>,
}

fn sub(path: &[Seg], k: &str) -> Vec<Seg> {
    let mut p = path.to_vec();
    p.push(key(k));
    p
}

/// Read `[prior.coefficients]`, pushing its hyperparameters onto `hypers`:
/// one shared family, or independent priors per group of covariates
/// ([`super::indep`]) when the table holds group tables and no `family`.
/// `own`: the columns with priors of their own ([`super::own`]).
pub fn parse(
    ctx: &Ctx,
    design: &Design,
    hypers: &mut Vec<Hyper>,
    own: &[usize],
) -> Result<CoefPrior> {
    let t = ctx.prior_table("coefficients", EXAMPLE)?;
    let path = [key("prior"), key("coefficients")];
    if let Some(c) = super::indep::parse(ctx, &path, t, design, hypers, own)? {
        return Ok(c);
    }
    let fam = t.get("family").ok_or_else(|| {
        ctx.err(&path, "[prior.coefficients] needs `family`")
            .with_hint(format!("e.g.\n  {EXAMPLE}"))
    })?;
    parse_family(ctx, &path, t, "coefficients", Some(design), hypers, fam)
}

/// One coefficient family from table `t` at `path` (its `family` value `fam`),
/// hyperparameters named `{prefix}.<param>`; `design` is given where R2D2 may
/// take `groups` (the shared prior, not a group's own).
pub(super) fn parse_family(
    ctx: &Ctx,
    path: &[Seg],
    t: &toml::Table,
    prefix: &str,
    design: Option<&Design>,
    hypers: &mut Vec<Hyper>,
    fam: &toml::Value,
) -> Result<CoefPrior> {
    let fname = ctx.string(&sub(path, "family"), fam)?;
    let kind = Kind::parse(fname).ok_or_else(|| {
        ctx.err(
            &sub(path, "family"),
            format!("unknown coefficient prior \"{fname}\""),
        )
        .with_hint(crate::error::choice_hint(fname, &FAMILIES))
    })?;
    let mut allowed = vec!["family"];
    allowed.extend(kind.params().iter().map(|p| p.0));
    let hs = matches!(kind, Kind::Horseshoe | Kind::RegHorseshoe);
    if hs {
        allowed.push("global");
    }
    if kind == Kind::R2d2 && design.is_some() {
        allowed.push("groups");
    }
    if design.is_none() {
        allowed.push("covariates");
    }
    ctx.check_keys(path, t, &allowed)?;
    let global_fixed =
        match t.get("global") {
            None => false,
            Some(v) => match ctx.string(&sub(path, "global"), v)? {
                "half-cauchy" => false,
                "fixed" => true,
                other => return Err(ctx
                    .err(
                        &sub(path, "global"),
                        format!("unknown global prior \"{other}\""),
                    )
                    .with_hint(
                        "\"half-cauchy\" (τ ~ C⁺(0, global_scale)) or \"fixed\" (τ = global_scale)",
                    )),
            },
        };
    let mut idx = Vec::new();
    let mut names = Vec::new();
    let mut shape = 0.0;
    let mut inclusion_free = false;
    for (p, dom) in kind.params() {
        let pp = sub(path, p);
        let v = t.get(*p).ok_or_else(|| {
            ctx.err(path, format!("[prior.{prefix}] ({fname}) needs `{p}`"))
                .with_hint(format!("e.g.\n  {}", kind.example()))
        })?;
        let hv = ctx.hyper_value(&pp, v)?;
        let ok = |x: f64| match dom {
            Domain::Positive | Domain::FixedPositive => x > 0.0,
            Domain::Probability => x > 0.0 && x <= 1.0,
        };
        let what = match dom {
            Domain::Probability => "must lie in (0, 1]",
            _ => "must be > 0",
        };
        match &hv {
            HyperValue::Fixed(x) => {
                if !ok(*x) {
                    return Err(ctx.err(&pp, format!("{fname}: `{p}` = {x} {what}")));
                }
                if *dom == Domain::FixedPositive {
                    shape = *x;
                }
            }
            HyperValue::Free { lo, hi, .. } => {
                if *dom == Domain::FixedPositive {
                    return Err(ctx
                        .err(&pp, format!("{fname}: `{p}` must be a fixed number here"))
                        .with_hint("it shapes the coefficient draws that are computed once per fit; fit the scale hyperparameters instead"));
                }
                for x in [*lo, *hi] {
                    if !ok(x) {
                        return Err(ctx.err(
                            &sub(&pp, "fit"),
                            format!("{fname}: bound {x} of `{p}` {what}"),
                        ));
                    }
                }
                if *p == "inclusion" {
                    inclusion_free = true;
                }
            }
        }
        idx.push(hypers.len());
        names.push(*p);
        hypers.push(Hyper::new(format!("{prefix}.{p}"), hv));
    }
    let groups = match (t.get("groups"), design) {
        (Some(v), Some(design)) => Some(super::groups::parse(ctx, path, v, design, hypers)?),
        _ => None,
    };
    let cached = match kind {
        Kind::RegHorseshoe => false,
        Kind::SpikeSlab => !inclusion_free,
        _ => true,
    };
    Ok(CoefPrior {
        kind,
        global_fixed,
        idx,
        names,
        shape,
        cached,
        skip: Vec::new(),
        groups,
        indep: None,
    })
}

/// Stream ids (relative to the block) of the per-draw global uniforms.
pub const GLOBAL_STREAM: u64 = 8;
pub const SLAB_STREAM: u64 = 9;
pub const R2_STREAM: u64 = 10;
/// Draw i's normals use stream COEF_STREAM + 2i, its local variates COEF_STREAM + 2i + 1.
pub const COEF_STREAM: u64 = 64;
/// At most this many coefficient columns take their normals (and, for the
/// kinds whose local variate is one uniform's transform, their local variates)
/// from scrambled-Sobol columns ([`SobolCols`]).
pub const SOBOL_COLUMNS: usize = 64;
/// Stream id (relative to the block) of the first Sobol coefficient column: the
/// normals of the k-th chosen column on stream COEF_SOBOL_STREAM + k (Sobol
/// dimension 128 + k), its local uniforms on COEF_SOBOL_STREAM + 64 + k
/// (dimension 192 + k), a scramble of their own (stream / 256 ≠ 0). As ChaCha8
/// streams (independent points) they lie above every per-draw stream
/// COEF_STREAM + 2i + 1 for fewer than 4 million draws.
pub const COEF_SOBOL_STREAM: u64 = (1 << 23) + 128;

/// The coefficient columns drawn from scrambled-Sobol columns rather than from
/// the per-draw ChaCha8 streams, and their variates (draws in order).
///
/// Why: with every coefficient from per-draw independent streams, a quantity
/// that rests on a few coefficients (the odds ratio of one contrast) carries
/// plain Monte Carlo error, N^(−1/2), while the priors' own columns are
/// scrambled Sobol (error near N^(−1) for smooth one-dimensional quantities):
/// precision mode then raised a 20-covariate multilevel fit to its cap of 2¹⁸
/// draws for the shared scale alone.
///
/// Which: every column of a design of at most [`SOBOL_COLUMNS`] columns, column
/// j on the j-th Sobol column; on a wider design the columns the beliefs'
/// linear forms (profiles, contrasts) name, in order of first appearance, then
/// the lowest-numbered others, up to [`SOBOL_COLUMNS`], leaving out columns
/// with a prior of their own (their shared coefficient is zero).
#[derive(Debug, Clone, Default)]
pub struct SobolCols {
    pub cols: Vec<usize>,
    /// Normals of each chosen column (per draw).
    pub z: Vec<Vec<f64>>,
    /// Uniforms of each chosen column's local variate (per draw; empty for the
    /// kinds whose local variate is not one uniform's transform). For R2D2 with
    /// concentration ½, the uniform of the column's Dirichlet gamma Z²/2.
    pub u: Vec<Vec<f64>>,
}

impl SobolCols {
    /// Choose the columns (`named`: the forms' columns, first first) and draw
    /// their variates on `plan`.
    pub fn draw(
        prior: &CoefPrior,
        p: usize,
        named: impl Iterator<Item = usize>,
        n: usize,
        plan: &rng::Plan,
    ) -> Self {
        let mut cols: Vec<usize> = Vec::new();
        if p <= SOBOL_COLUMNS {
            cols.extend(0..p);
        } else {
            let usable = |j: usize| j < p && !prior.skip.get(j).copied().unwrap_or(false);
            for j in named.chain(0..p) {
                if cols.len() == SOBOL_COLUMNS {
                    break;
                }
                if usable(j) && !cols.contains(&j) {
                    cols.push(j);
                }
            }
        }
        let z = (0..cols.len())
            .map(|k| plan.normals(COEF_SOBOL_STREAM + k as u64, n))
            .collect();
        let u = if prior.local_from_uniform(0.5).is_some()
            || prior.r2d2_half()
            || prior.indep.is_some()
        {
            (0..cols.len())
                .map(|k| plan.uniforms(COEF_SOBOL_STREAM + (SOBOL_COLUMNS + k) as u64, n))
                .collect()
        } else {
            Vec::new()
        };
        SobolCols { cols, z, u }
    }
}

/// The regularised horseshoe's scale ω = c·τλ/√(c² + τ²λ²) of one column, from
/// the slab scale `cs` and τλ = `tl` (Piironen & Vehtari 2017, EJS 11);
/// the square-root form is safe below 1e150, beyond it ω = c.
pub fn reg_horseshoe_scale(cs: f64, tl: f64) -> f64 {
    if tl < 1e150 {
        cs * tl / (cs * cs + tl * tl).sqrt()
    } else {
        cs
    }
}

/// Spike-and-slab's scale of one column: the slab `s` when its uniform `l` is
/// below the inclusion probability `pi`, else 0.
pub fn spike_slab_scale(l: f64, pi: f64, s: f64) -> f64 {
    if l < pi {
        s
    } else {
        0.0
    }
}

/// A Gamma(shape, 1) variate by Marsaglia & Tsang (2000, ACM TOMS 26(3)), with the
/// boost G(a) = G(a + 1)·U^{1/a} for a < 1; normals by probit of our uniforms.
pub fn gamma_variate(shape: f64, r: &mut rand::rngs::ChaCha8Rng) -> f64 {
    if shape < 1.0 {
        let u = rng::open01(r);
        return gamma_variate(shape + 1.0, r) * u.powf(1.0 / shape);
    }
    let d = shape - 1.0 / 3.0;
    let c = 1.0 / (9.0 * d).sqrt();
    loop {
        let z = crate::numerics::norm_quantile(rng::open01(r));
        let v = 1.0 + c * z;
        if v <= 0.0 {
            continue;
        }
        let v = v * v * v;
        let u = rng::open01(r);
        // Marsaglia & Tsang's squeeze, u < 1 − 0.0331 z⁴, implies the exact test
        // below (same variates, same acceptances) and spares its two logarithms
        // in about 98 % of draws.
        let z2 = z * z;
        if u < 1.0 - 0.0331 * z2 * z2 || u.ln() < 0.5 * z2 + d - d * v + d * v.ln() {
            return d * v;
        }
    }
}

impl CoefPrior {
    /// Draw i's normals z and local variates (the λ-free factor w, or for
    /// spike-and-slab the uniform deciding inclusion).
    #[allow(clippy::too_many_arguments)]
    pub fn base_draw(
        &self,
        d: &Design,
        seed: u64,
        block: u64,
        i: usize,
        z: &mut [f64],
        loc: &mut [f64],
        sob: &SobolCols,
    ) {
        let mut r = rng::stream(seed, block + COEF_STREAM + 2 * i as u64);
        for x in z.iter_mut() {
            *x = crate::numerics::norm_quantile(rng::open01(&mut r));
        }
        let mut r = rng::stream(seed, block + COEF_STREAM + 2 * i as u64 + 1);
        match self.kind {
            Kind::Normal => loc.fill(1.0),
            Kind::Laplace | Kind::Horseshoe | Kind::RegHorseshoe | Kind::SpikeSlab => {
                for x in loc.iter_mut() {
                    *x = self.local_from_uniform(rng::open01(&mut r)).unwrap_or(1.0);
                }
            }
            Kind::StudentT => {
                let nu = self.shape;
                for x in loc.iter_mut() {
                    *x = (nu / (2.0 * gamma_variate(0.5 * nu, &mut r))).sqrt();
                }
            }
            Kind::R2d2 => {
                // With groups, the Dirichlet splits each group's share over its
                // own columns ([`super::groups`]); without, one sum.
                let of = self.groups.as_ref().map(|g| g.of.as_slice());
                let mut s = vec![0.0; self.groups.as_ref().map_or(1, |g| g.count())];
                // Concentration ½ (the common choice): Gamma(½, 1) = Z²/2 exactly
                // (χ²₁/2; Johnson, Kotz & Balakrishnan 1994, Continuous Univariate
                // Distributions 1, ch. 17–18): one normal per column instead of the
                // boosted Marsaglia–Tsang step (two normals' worth of uniforms and
                // a power), about a third of the cost of drawing a wide design.
                let half = self.r2d2_half();
                for x in loc.iter_mut() {
                    *x = if half {
                        let z = crate::numerics::norm_quantile(rng::open01(&mut r));
                        0.5 * z * z
                    } else {
                        gamma_variate(self.shape, &mut r)
                    };
                }
                // Then Z²/2 is one uniform's transform: the Sobol columns take
                // theirs from their scrambled-Sobol uniforms (below for the
                // other kinds), before the group sums.
                for (k, j) in sob.cols.iter().enumerate() {
                    if let Some(u) = sob.u.get(k) {
                        let z = crate::numerics::norm_quantile(u[i]);
                        loc[*j] = 0.5 * z * z;
                    }
                }
                for (j, x) in loc.iter().enumerate() {
                    if !self.skip.get(j).copied().unwrap_or(false) {
                        s[of.map_or(0, |o| o[j])] += *x;
                    }
                }
                for (j, (x, v)) in loc.iter_mut().zip(&d.var).enumerate() {
                    let s = s[of.map_or(0, |o| o[j])];
                    *x = if *v > 0.0 { (*x / s / v).sqrt() } else { 0.0 };
                }
            }
        }
        // The Sobol columns replace their per-draw variates (the streams are
        // still consumed in full, so the other columns do not move).
        for (k, j) in sob.cols.iter().enumerate() {
            z[*j] = sob.z[k][i];
            if let Some(u) = sob.u.get(k) {
                loc[*j] = self.local_from_uniform(u[i]).unwrap_or(loc[*j]);
            }
        }
        // Columns with a prior of their own take no part in the shared one: a
        // zero local scale (for spike-and-slab, a uniform never below π).
        for (x, s) in loc.iter_mut().zip(&self.skip) {
            if *s {
                *x = if self.kind == Kind::SpikeSlab {
                    f64::INFINITY
                } else {
                    0.0
                };
            }
        }
    }

    /// R2D2 with concentration ½: its Dirichlet's gamma variates are Z²/2, one
    /// uniform's transform each (Sobol columns take theirs from [`SobolCols`]).
    pub fn r2d2_half(&self) -> bool {
        self.kind == Kind::R2d2 && self.shape == 0.5
    }

    /// The local variate from one uniform, for the kinds that draw it so:
    /// Laplace √(−2 ln u) (√(2E), E ~ Exp(1)), half-Cauchy tan(πu/2), and
    /// spike-and-slab's inclusion uniform itself; `None` for the others.
    pub fn local_from_uniform(&self, u: f64) -> Option<f64> {
        match self.kind {
            Kind::Laplace => Some((-2.0 * u.ln()).sqrt()),
            Kind::Horseshoe | Kind::RegHorseshoe => Some((0.5 * std::f64::consts::PI * u).tan()),
            Kind::SpikeSlab => Some(u),
            _ => None,
        }
    }

    /// In the cached case, the local factor w from the stored local variate.
    pub fn cached_w(&self, h: &[f64], loc: f64) -> f64 {
        match self.kind {
            Kind::SpikeSlab => {
                if loc < h[self.idx[0]] {
                    1.0
                } else {
                    0.0
                }
            }
            _ => loc,
        }
    }

    /// The per-draw global multiplier g_i (cached kinds), given ρ_i and the globals.
    pub fn global(&self, h: &[f64], gu: f64, w_r2: f64, rho: f64) -> f64 {
        match self.kind {
            Kind::Normal | Kind::Laplace => h[self.idx[0]],
            Kind::StudentT => h[self.idx[1]],
            Kind::Horseshoe | Kind::RegHorseshoe => {
                let t0 = h[self.idx[0]];
                if self.global_fixed {
                    t0
                } else {
                    t0 * (0.5 * std::f64::consts::PI * gu).tan()
                }
            }
            Kind::R2d2 => (rho * w_r2).sqrt(),
            Kind::SpikeSlab => h[self.idx[1]],
        }
    }

    /// W = R²/(1 − R²) of each draw for R2D2 (else empty), from its uniforms.
    pub fn r2d2_w(&self, h: &[f64], u: &[f64]) -> Result<Vec<f64>> {
        if self.kind != Kind::R2d2 {
            return Ok(Vec::new());
        }
        // W = R²/(1 − R²) = exp(logit R²), tabulated ([`crate::dist::beta::QuantileTable`]).
        let b = crate::dist::beta::Beta::new(h[self.idx[0]], h[self.idx[1]])?;
        Ok(crate::dist::beta::logit_quantiles(&b, u)
            .into_iter()
            .map(f64::exp)
            .collect())
    }

    /// The slab scale c_i of each draw (regularised horseshoe, else empty).
    pub fn slabs(&self, h: &[f64], u: &[f64]) -> Result<Vec<f64>> {
        if self.kind != Kind::RegHorseshoe {
            return Ok(Vec::new());
        }
        use crate::dist::Continuous;
        let nu = h[self.idx[2]];
        let s = h[self.idx[1]];
        let ig = crate::dist::inverse_gamma::InverseGamma::new(0.5 * nu, 0.5 * nu)?;
        Ok(u.iter().map(|u| s * ig.quantile(*u).sqrt()).collect())
    }
}

pub use super::products::{products, products_grouped, shrink_term, Eff, Fill, Products};

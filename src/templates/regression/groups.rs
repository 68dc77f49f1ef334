//! Groups of covariates under one joint R2D2 prior: `[prior.coefficients.groups.NAME]`
//! tables under `family = "r2d2"`, each with `covariates` (a list of design
//! columns, or `"rest"` for every column no other group names) and `weight` A_g
//! (a number or `{ fit = [lo, hi] }`).
//!
//! The prior (normal kernel, as the ungrouped `r2d2` of [`super::coef`]):
//! R² ~ Beta(a, b), W = R²/(1 − R²); the explained variance splits over the G
//! groups by φ ~ Dirichlet(A_1, …, A_G) (φ_g: the group's share, its "prior
//! weight"), and within group g over its p_g columns by ψ ~ Dirichlet(c, …, c),
//! c the fixed `concentration`; β_j ~ N(0, ρ·W·φ_g·ψ_j/s_j²). So Σ_j s_j² E[β_j² | ·]
//! = ρW and the marginal R² stays exactly Beta(a, b), and group g's share of the
//! explained variance is Beta(A_g, A − A_g), A = Σ_g A_g, by the aggregation
//! property of the Dirichlet (Kotz, Balakrishnan & Johnson, Continuous
//! Multivariate Distributions vol. 1, 2nd ed., 2000, §49.1; Ng, Tian & Tang,
//! Dirichlet and Related Distributions, Wiley 2011, §2.3). When A_g = p_g·c for
//! every group this is exactly R2D2's flat Dirichlet(c, …, c) over all columns
//! (aggregation plus the independence of the normalised within-group splits,
//! the same references); with fitted A_g it is the two-level decomposition of the
//! explained variance over components that R2D2M2 uses (Aguilar & Bürkner 2023,
//! Electronic Journal of Statistics 17), each group a component.
//!
//! Draws: φ by stick-breaking, φ_1 = B_1, φ_g = (1 − Σ_{k<g} φ_k)·B_g with
//! B_g ~ Beta(A_g, Σ_{k>g} A_k) (the neutrality of the Dirichlet, same
//! references), each B_g the Beta quantile of a scrambled-Sobol uniform of its
//! own stream, so the shares move smoothly with the weights under common random
//! numbers; ψ is drawn once per set of base draws (the concentration is fixed).
//! The quantiles come from a table built once per evaluation and checked against
//! the exact quantile (error of logit B at most 1e-9;
//! [`crate::dist::beta::QuantileTable`]).

use crate::design::Design;
use crate::error::Result;
use crate::input::{key, Ctx, Seg};
use crate::templates::{Hyper, HyperValue};
use nalgebra::DMatrix;

/// At most this many groups (their uniforms use streams 11 … 11 + G − 2).
pub const MAX_GROUPS: usize = 32;
/// Stream id (relative to the block) of the first stick-breaking uniform.
pub const SHARE_STREAM: u64 = 11;

/// Groups of covariates, validated.
#[derive(Debug, Clone)]
pub struct Grouping {
    pub names: Vec<String>,
    /// Hyperparameter index of each group's weight A_g.
    pub idx: Vec<usize>,
    /// Group of each design column.
    pub of: Vec<usize>,
    /// Columns of each group, in design order.
    pub cols: Vec<Vec<usize>>,
    /// Centred design restricted to each group's columns (rows × p_g).
    pub x: Vec<DMatrix<f64>>,
}

fn sub(path: &[Seg], k: &str) -> Vec<Seg> {
    let mut p = path.to_vec();
    p.push(key(k));
    p
}

const EXAMPLE: &str = "[prior.coefficients.groups.genes]\n  covariates = \"rest\"\n  weight = { fit = [0.1, 50] }\n  [prior.coefficients.groups.clinical]\n  covariates = [\"age\", \"sex\"]\n  weight = { fit = [0.1, 50] }";

/// Read `[prior.coefficients.groups]` (the table `v`), pushing one weight
/// hyperparameter per group onto `hypers`.
pub fn parse(
    ctx: &Ctx,
    path: &[Seg],
    v: &toml::Value,
    design: &Design,
    hypers: &mut Vec<Hyper>,
) -> Result<Grouping> {
    let gpath = sub(path, "groups");
    let t = v.as_table().ok_or_else(|| {
        ctx.err(&gpath, "`groups` must be a table of groups")
            .with_hint(format!("e.g.\n  {EXAMPLE}"))
    })?;
    if t.len() < 2 || t.len() > MAX_GROUPS {
        return Err(ctx
            .err(
                &gpath,
                format!(
                    "{} group(s) given; give between 2 and {MAX_GROUPS}",
                    t.len()
                ),
            )
            .with_hint(format!("e.g.\n  {EXAMPLE}")));
    }
    let p = design.cols();
    let none = usize::MAX;
    let mut of = vec![none; p];
    let mut names = Vec::new();
    let mut idx = Vec::new();
    let mut rest = None;
    for (g, (name, gv)) in t.iter().enumerate() {
        let np = sub(&gpath, name);
        let gt = gv.as_table().ok_or_else(|| {
            ctx.err(&np, format!("group `{name}` must be a table"))
                .with_hint(format!("e.g.\n  {EXAMPLE}"))
        })?;
        ctx.check_keys(&np, gt, &["covariates", "weight"])?;
        let cv = gt.get("covariates").ok_or_else(|| {
            ctx.err(&np, format!("group `{name}` needs `covariates`"))
                .with_hint(
                    "a list of design columns, or \"rest\" for every column no other group names",
                )
        })?;
        let cp = sub(&np, "covariates");
        match cv {
            toml::Value::String(s) if s == "rest" => {
                if rest.is_some() {
                    return Err(ctx.err(&cp, "only one group may take the \"rest\""));
                }
                rest = Some(g);
            }
            toml::Value::Array(a) if !a.is_empty() => {
                for x in a {
                    let c = ctx.string(&cp, x)?;
                    let j = super::own::column(ctx, design, &cp, c)?;
                    if of[j] != none {
                        return Err(ctx.err(
                            &cp,
                            format!(
                                "\"{c}\" is already in group `{}`: a covariate belongs to one group",
                                names[of[j]]
                            ),
                        ));
                    }
                    of[j] = g;
                }
            }
            other => {
                return Err(ctx
                    .err(
                        &cp,
                        format!("`covariates` must be a non-empty list of column names or \"rest\", not {other}"),
                    ));
            }
        }
        let wp = sub(&np, "weight");
        let wv = gt.get("weight").ok_or_else(|| {
            ctx.err(&np, format!("group `{name}` needs `weight`"))
                .with_hint("the Dirichlet concentration A_g of the group's share, e.g. weight = { fit = [0.1, 50] }")
        })?;
        let hv = ctx.hyper_value(&wp, wv)?;
        let (lo, hi) = match &hv {
            HyperValue::Fixed(x) => (*x, *x),
            HyperValue::Free { lo, hi, .. } => (*lo, *hi),
        };
        for x in [lo, hi] {
            if !(x > 0.0 && x <= 1e4) {
                return Err(ctx.err(
                    &wp,
                    format!("group `{name}`: weight {x} must lie in (0, 10000]"),
                ));
            }
        }
        idx.push(hypers.len());
        hypers.push(Hyper::new(format!("coefficients.{name}.weight"), hv));
        names.push(name.clone());
    }
    if let Some(r) = rest {
        for o in of.iter_mut().filter(|o| **o == none) {
            *o = r;
        }
    }
    if let Some(j) = of.iter().position(|o| *o == none) {
        return Err(ctx
            .err(
                &gpath,
                format!("design column \"{}\" is in no group", design.names[j]),
            )
            .with_hint("name it in a group, or let one group take covariates = \"rest\""));
    }
    let mut cols = vec![Vec::new(); names.len()];
    for (j, g) in of.iter().enumerate() {
        cols[*g].push(j);
    }
    if let Some(g) = cols.iter().position(Vec::is_empty) {
        return Err(ctx.err(
            &sub(&gpath, &names[g]),
            format!("group `{}` has no columns left", names[g]),
        ));
    }
    let x = cols
        .iter()
        .map(|c| DMatrix::from_fn(design.rows(), c.len(), |r, k| design.xc[(r, c[k])]))
        .collect();
    Ok(Grouping {
        names,
        idx,
        of,
        cols,
        x,
    })
}

impl Grouping {
    /// The number of groups G.
    pub fn count(&self) -> usize {
        self.names.len()
    }

    /// Each draw's shares φ (draws × G) by stick-breaking from the uniforms `u`
    /// (G − 1 columns), at the weights in `h`.
    pub fn shares(&self, h: &[f64], u: &[Vec<f64>], n: usize) -> Result<Vec<f64>> {
        use crate::numerics::logistic;
        let g = self.count();
        let a: Vec<f64> = self.idx.iter().map(|i| h[*i]).collect();
        // Each B_g in logit form (tabulated: [`crate::dist::beta::QuantileTable`]),
        // so B = logistic(y) and 1 − B = logistic(−y) are both accurate.
        let mut ys = Vec::with_capacity(g - 1);
        for k in 0..g - 1 {
            let rest: f64 = a[k + 1..].iter().sum();
            let b = crate::dist::beta::Beta::new(a[k], rest)?;
            ys.push(crate::dist::beta::logit_quantiles(&b, &u[k][..n]));
        }
        let mut phi = vec![0.0; n * g];
        for i in 0..n {
            let mut left = 1.0;
            for (k, y) in ys.iter().enumerate() {
                phi[i * g + k] = left * logistic(y[i]);
                left *= logistic(-y[i]);
            }
            phi[i * g + g - 1] = left;
        }
        Ok(phi)
    }
}

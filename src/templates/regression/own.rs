//! Covariate-specific priors: a named covariate, or a list of them, leaves the
//! shared coefficient prior `[prior.coefficients]` and takes a prior of its own,
//! so that beliefs about its odds ratio, rate ratio or mean difference can be met
//! (a shrinkage prior symmetric about zero gives every contrast a median of 1
//! whatever its hyperparameters).
//!
//! * `[prior.NAME]` with NAME a design column: the coefficient of NAME takes any
//!   real-valued family (`family = "normal"`, `mean`, `sd`, each fixed or
//!   `{ fit = [lo, hi] }`); its hyperparameters are `NAME.<param>`.
//! * `[prior.LABEL]` with `covariates = ["a", "b", …]`: each listed covariate's
//!   coefficient takes the same family and hyperparameters `LABEL.<param>`,
//!   independently.
//!
//! The coefficient is per unit of the covariate *as given* (before any
//! standardising of the design), so that exp(β) is the odds or rate ratio per
//! unit. Its prior statement is named `b_NAME`. In the simulator the covariate's
//! shared local scale is 0 ([`super::coef::CoefPrior::skip`]; R2D2 splits its
//! explained variance over the other columns) and its draw enters the linear
//! predictor directly: η = α + X_s β_s + Σ_k x_k b_k. The design variance of η
//! is then q = g²q_s + 2g Σ_k b_k c_k + Σ_kl b_k b_l S_kl, with c_k = x_kᵀX_s(w∘z)/n
//! a linear form of the shared draw (registered as a dense form) and S the
//! design covariance of the own columns.

use super::profile::Form;
use crate::design::Design;
use crate::error::Result;
use crate::input::{key, Ctx};
use crate::templates::priors::families_on;
use crate::templates::PriorSet;

/// Most covariate-specific priors in one model (each takes one base stream
/// below the coefficient streams).
pub const MAX_OWN: usize = 48;

/// The prior tables the regression templates read themselves.
pub const RESERVED: [&str; 5] = [
    "intercept",
    "sigma",
    "coefficients",
    "cluster_sd",
    "cluster_slope_sd",
];

/// One covariate with a prior of its own.
#[derive(Debug, Clone)]
pub struct Own {
    /// Design column.
    pub col: usize,
    /// Index of its prior in the model's [`PriorSet`].
    pub prior: usize,
    /// Coefficient per unit of the stored design = this × coefficient per raw unit
    /// (the raw sd when the design is standardised, else 1).
    pub to_stored: f64,
}

const EXAMPLE: &str = "family = \"normal\"\n  mean = 0.22\n  sd = { fit = [0.05, 1.0] }";

/// Read every `[prior.*]` table that is not one of [`RESERVED`]: a design
/// column's own prior or a list's. Returns the covariates in the order of the
/// tables (alphabetical) and, within a list, as listed.
pub fn parse(ctx: &Ctx, design: &Design, priors: &mut PriorSet) -> Result<Vec<Own>> {
    let mut own: Vec<Own> = Vec::new();
    let real = families_on(crate::dist::Support::Real);
    for (name, t) in &ctx.raw.prior {
        if RESERVED.contains(&name.as_str()) {
            continue;
        }
        let path = [key("prior"), key(name)];
        let cols: Vec<(usize, String)> = match t.get("covariates") {
            Some(v) => {
                let cp = [key("prior"), key(name), key("covariates")];
                let arr = v.as_array().ok_or_else(|| {
                    ctx.err(&cp, "`covariates` is a list of design column names")
                        .with_hint("e.g. covariates = [\"age\", \"sex\"]")
                })?;
                if arr.is_empty() {
                    return Err(ctx.err(&cp, "`covariates` lists no column"));
                }
                let mut out = Vec::new();
                for v in arr {
                    let c = ctx.string(&cp, v)?;
                    let j = column(ctx, design, &cp, c)?;
                    out.push((j, c.to_string()));
                }
                out
            }
            None => match design.column(name) {
                Some(j) => vec![(j, name.clone())],
                None => {
                    let mut names: Vec<&str> = RESERVED.to_vec();
                    names.extend(design.names.iter().map(String::as_str));
                    return Err(ctx
                        .err(
                            &path,
                            format!(
                                "[prior.{name}] is not a parameter of template {} nor a column of the design",
                                ctx.model()
                                    .get("template")
                                    .and_then(|v| v.as_str())
                                    .unwrap_or("?")
                            ),
                        )
                        .with_hint(match crate::error::nearest(name, names.iter().copied()) {
                            Some(n) => format!(
                                "did you mean `{n}`? A covariate's own prior is [prior.COLUMN]; a list takes covariates = [...]"
                            ),
                            None => "a covariate's own prior is [prior.COLUMN] (a design column); a list takes covariates = [...]".to_string(),
                        }));
                }
            },
        };
        let extra: &[&str] = if t.contains_key("covariates") {
            &["covariates"]
        } else {
            &[]
        };
        let first = priors.add_keyed(ctx, name, name, &real, EXAMPLE, extra)?;
        for (k, (j, c)) in cols.iter().enumerate() {
            if own.iter().any(|o| o.col == *j) {
                return Err(ctx
                    .err(&path, format!("covariate `{c}` has two priors of its own"))
                    .with_hint("give each covariate one [prior.NAME] table or one list"));
            }
            let param = format!("b_{c}");
            let idx = if k == 0 {
                priors.priors[first].param = param;
                first
            } else {
                priors.share(first, &param)
            };
            own.push(Own {
                col: *j,
                prior: idx,
                to_stored: design.stored_scale(*j),
            });
        }
        if own.len() > MAX_OWN {
            return Err(ctx
                .err(
                    &path,
                    format!(
                        "{} covariates with priors of their own; at most {MAX_OWN}",
                        own.len()
                    ),
                )
                .with_hint("put the others under a shared prior ([prior.coefficients])"));
        }
    }
    if !own.is_empty() && own.len() == design.cols() {
        return Err(ctx
            .err(&[key("prior"), key("coefficients")], "every design column has a prior of its own, so the shared coefficient prior has no column")
            .with_hint("leave at least one covariate under [prior.coefficients]"));
    }
    Ok(own)
}

/// The index of design column `c`, or an error at `path` with the nearest name.
pub(super) fn column(
    ctx: &Ctx,
    design: &Design,
    path: &[crate::input::Seg],
    c: &str,
) -> Result<usize> {
    design.column(c).ok_or_else(|| {
        ctx.err(path, format!("`{c}` is not a column of the design"))
            .with_hint(
                match crate::error::nearest(c, design.names.iter().map(String::as_str)) {
                    Some(n) => format!("did you mean `{n}`?"),
                    None => "name design columns (the CSV header, or x1 … xp)".to_string(),
                },
            )
    })
}

/// The dense forms c_k = x_kᵀ X_c (·)/n over the shared columns, one per own
/// covariate (the cross terms of the design variance of η).
pub fn cross_forms(design: &Design, own: &[Own]) -> Vec<Form> {
    let n = design.rows() as f64;
    let is_own = |j: usize| own.iter().any(|o| o.col == j);
    own.iter()
        .map(|o| {
            let xk = design.xc.column(o.col);
            (0..design.cols())
                .filter(|j| !is_own(*j))
                .map(|j| (j, xk.dot(&design.xc.column(j)) / n))
                .collect()
        })
        .collect()
}

/// S_kl = x_kᵀx_l/n over the own columns, row-major k × k.
pub fn own_cov(design: &Design, own: &[Own]) -> Vec<f64> {
    let n = design.rows() as f64;
    let mut s = Vec::with_capacity(own.len() * own.len());
    for a in own {
        for b in own {
            s.push(design.xc.column(a.col).dot(&design.xc.column(b.col)) / n);
        }
    }
    s
}

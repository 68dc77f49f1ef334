//! Random intercepts of the multilevel regression templates (`linear-multilevel`,
//! `logistic-multilevel`, `poisson-multilevel`): η_ij = α + u_j + (x_ij − x̄)ᵀβ
//! with u_j ~ N(0, σ_u²) for cluster j, σ_u ~ `[prior.cluster_sd]` (any family on
//! (0, ∞): half-normal, half-student-t, half-cauchy, exponential, …). The clusters
//! come from `[design]` (`group` column or `clusters = J`, [`crate::design`]).
//!
//! Derived quantities per prior draw, with σ_d² the distribution-specific
//! (observation-level) variance: σ² (linear); π²/3 (logistic, latent scale:
//! Snijders & Bosker 2012, Multilevel Analysis, 2nd ed., §17.3); ln(1 + 1/λ)
//! (Poisson, log-normal approximation: Nakagawa, Johnson & Schielzeth 2017,
//! J. R. Soc. Interface 14, 20170213, Table 1), with λ = exposure·exp(α + σ_u²/2)
//! the mean count at the reference profile (the same paper, from memory of its
//! eq. for λ):
//! * `icc`: σ_u²/(σ_u² + σ_d²).
//! * `median_odds_ratio` (logistic) / `median_rate_ratio` (Poisson): the median of
//!   exp(|u_j − u_k|) over pairs of clusters, exp(√(2σ_u²)·Φ⁻¹(0.75)) (Larsen &
//!   Merlo 2005, Am. J. Epidemiol. 161, eq. 2; the rate version is the same
//!   construction on the log-rate scale).
//! * `cluster_spread` at a profile: the 5–95 % range of the cluster-level mean
//!   response (linear), event risk (logistic) or rate per unit exposure (Poisson),
//!   h(η + z·σ_u) − h(η − z·σ_u) with z = Φ⁻¹(0.95) and h the inverse link
//!   (h is increasing, so these are the 95th and 5th percentiles over clusters).
//! * `r2_fixed` and `r2_conditional`: Nakagawa & Schielzeth (2013, Methods Ecol.
//!   Evol. 4, eq. 26–27) marginal R² σ_f²/(σ_f² + σ_u² + σ_d²) and conditional R²
//!   (σ_f² + σ_u²)/(σ_f² + σ_u² + σ_d²), with σ_f² the design variance of the
//!   fixed-effect linear predictor (`signal_sd`²).
//!
//! The quantities at a profile (`mean_response`, `event_prob`, `rate`) are those
//! of a typical cluster (u = 0).
//!
//! Random slopes (optional, [`parse_slopes`]): `[prior.cluster_slope_sd.NAME]`
//! gives design column NAME the coefficient β_k + v_kj in cluster j, v_kj ~
//! N(0, σ_{v,k}²) independent of u_j and of the other slopes (uncorrelated, as
//! brms's `(1 + x || g)`), σ_{v,k} per unit of the covariate as given in the
//! design file. With covariates centred at the design mean the random part at a
//! row x has variance σ_r²(x) = σ_u² + Σ_k σ_{v,k}²(x_k − x̄_k)², and over the
//! design rows its mean is σ_r² = σ_u² + Σ_k σ_{v,k}² var(x_k) (1/n variance;
//! Johnson 2014, Methods Ecol. Evol. 5, 944–946, "Extension of Nakagawa &
//! Schielzeth's R²GLMM to random slopes models"). Then:
//! * `r2_fixed` = σ_f²/(σ_f² + σ_r² + σ_d²) and `r2_conditional` =
//!   (σ_f² + σ_r²)/(σ_f² + σ_r² + σ_d²) (σ_u² replaced by the mean σ_r²);
//! * `icc`, the median ratio and σ_d² (Poisson λ) are those of the reference
//!   profile x = x̄, where the slope part vanishes (σ_u alone);
//! * `cluster_spread` at a profile x uses the sd σ_r(x) there;
//! * `slope_spread` for `contrast = "NAME:δ"`: the 5–95 % range over clusters of
//!   the contrast's effect, whose log (or, linear, itself) is δβ_k + δv_kj with sd
//!   |δ|σ_{v,k}: exp(δβ + z|δ|σ_v) − exp(δβ − z|δ|σ_v) (odds or rate ratio) or
//!   2z|δ|σ_v (mean difference), z = Φ⁻¹(0.95).
//!
//! The slopes need no draws of their own beyond σ_{v,k} (every quantity above
//! reads only the variances): σ_{v,k} takes base stream [`SLOPE_STREAM`] + k, so
//! a model without slopes draws exactly as before.

use super::quantity::{RegDef, RegQuantity, AT_PROFILE, FOR_CONTRAST};
use super::Link;
use crate::design::Design;
use crate::dist::Support;
use crate::error::Result;
use crate::input::{key, Ctx};
use crate::numerics::logistic;
use crate::templates::{At, QuantityDef, QuantityInfo, TemplateInfo};

/// Φ⁻¹(0.75), the median of |N(0, 1)|·… in the median odds ratio.
pub const Z75: f64 = 0.674_489_750_196_081_7;
/// Φ⁻¹(0.95) for the 5–95 % range of cluster-level values.
pub const Z95: f64 = 1.644_853_626_951_472_7;

/// Most random slopes in one model (each takes one base stream of its own).
pub const MAX_SLOPES: usize = 8;
/// Base streams of the slope sds: SLOPE_STREAM + s for slope s, above the
/// streams of the covariate-specific priors (at most 3 + 48 + 3 = 54) and of
/// the group shares (11 … 41), below the coefficient streams (64).
pub const SLOPE_STREAM: u64 = 56;
/// The prior table of the slope sds: `[prior.cluster_slope_sd.NAME]`.
pub const SLOPE_TABLE: &str = "cluster_slope_sd";

/// A covariate whose coefficient varies by cluster: β_kj = β_k + v_kj,
/// v_kj ~ N(0, σ_{v,k}²), σ_{v,k} per unit of the covariate as given.
#[derive(Debug, Clone)]
pub struct Slope {
    /// Design column.
    pub col: usize,
    /// Column name.
    pub name: String,
    /// Index of the prior of σ_{v,k} in the model's [`crate::templates::PriorSet`].
    pub prior: usize,
    /// sd per unit of the stored design = this × sd per raw unit (the raw sd
    /// when the design is standardised, else 1).
    pub to_stored: f64,
}

const SLOPE_EXAMPLE: &str = "family = \"half-normal\"\n  scale = { fit = [0.02, 1.0] }";

/// Read `[prior.cluster_slope_sd.NAME]` tables (one per covariate NAME with a
/// random slope): any family on (0, ∞), hyperparameters `cluster_slope_sd.NAME.<param>`,
/// prior statement `slope_sd_NAME`. Refused in a template without clusters.
pub fn parse_slopes(
    ctx: &Ctx,
    info: &TemplateInfo,
    design: &Design,
    multilevel: bool,
    priors: &mut crate::templates::PriorSet,
) -> Result<Vec<Slope>> {
    if !ctx.has_prior(SLOPE_TABLE) {
        return Ok(Vec::new());
    }
    let t = ctx.prior_table(SLOPE_TABLE, SLOPE_EXAMPLE)?;
    let path = [key("prior"), key(SLOPE_TABLE)];
    if !multilevel {
        return Err(ctx
            .err(
                &path,
                format!("template {} has no clusters, so no random slopes", info.name),
            )
            .with_hint(format!(
                "use template \"{}-multilevel\" with clusters in [design], or remove [prior.{SLOPE_TABLE}]",
                info.name
            )));
    }
    if t.is_empty() {
        return Err(ctx
            .err(&path, format!("[prior.{SLOPE_TABLE}] names no covariate"))
            .with_hint(format!(
                "one table per covariate with a random slope, e.g.\n  [prior.{SLOPE_TABLE}.age]\n  {SLOPE_EXAMPLE}"
            )));
    }
    if t.len() > MAX_SLOPES {
        return Err(ctx
            .err(
                &path,
                format!("{} random slopes; at most {MAX_SLOPES}", t.len()),
            )
            .with_hint("keep the covariates whose effect is believed to vary by cluster"));
    }
    let positive = super::super::priors::families_on(crate::dist::Support::Positive);
    let mut out = Vec::new();
    for (name, v) in t {
        let p = [key("prior"), key(SLOPE_TABLE), key(name)];
        let col = design.column(name).ok_or_else(|| {
            ctx.err(
                &p,
                format!("random slope on `{name}`, which is not a column of the design"),
            )
            .with_hint(
                match crate::error::nearest(name, design.names.iter().map(String::as_str)) {
                    Some(n) => format!("did you mean `{n}`? One table [prior.{SLOPE_TABLE}.COLUMN] per slope"),
                    None => format!(
                        "name a design column (the CSV header, or x1 … xp): [prior.{SLOPE_TABLE}.COLUMN]"
                    ),
                },
            )
        })?;
        let sub = v.as_table().ok_or_else(|| {
            ctx.err(
                &p,
                format!("`{name}` must be a table (the prior of its slope sd)"),
            )
            .with_hint(format!("[prior.{SLOPE_TABLE}.{name}]\n  {SLOPE_EXAMPLE}"))
        })?;
        let label = format!("{SLOPE_TABLE}.{name}");
        let k = priors.add_from(ctx, &p, &label, sub, &label, &positive, SLOPE_EXAMPLE, &[])?;
        priors.priors[k].param = format!("slope_sd_{name}");
        out.push(Slope {
            col,
            name: name.clone(),
            prior: k,
            to_stored: design.stored_scale(col),
        });
    }
    Ok(out)
}

/// `[design]` clusters: required by the multilevel templates, refused by the others.
pub fn check_clusters(
    ctx: &Ctx,
    info: &TemplateInfo,
    design: &Design,
    multilevel: bool,
) -> Result<()> {
    let t = ctx.raw.design.as_ref();
    let given = ["group", "clusters"]
        .into_iter()
        .find(|k| t.is_some_and(|t| t.contains_key(*k)));
    match (multilevel, design.clusters.is_some(), given) {
        (false, _, Some(k)) => Err(ctx
            .err(
                &[key("design"), key(k)],
                format!("template {} has no clusters", info.name),
            )
            .with_hint(format!(
                "use template \"{}-multilevel\" for a random intercept per cluster, or remove `{k}`",
                info.name
            ))),
        (true, false, _) => Err(ctx
            .err(
                &[key("design")],
                format!("template {} needs the design's clusters", info.name),
            )
            .with_hint(
                "add group = \"COLUMN\" (a column of the design file holding each row's cluster) or clusters = J",
            )),
        _ => Ok(()),
    }
}

/// The distribution-specific variance σ_d² of one draw.
pub fn obs_var(link: Link, alpha: f64, sigma2: f64, su2: f64, exposure: f64) -> f64 {
    match link {
        Link::Identity => sigma2,
        Link::Logit => std::f64::consts::PI.powi(2) / 3.0,
        Link::Log => (1.0 + 1.0 / (exposure * (alpha + 0.5 * su2).exp())).ln(),
    }
}

/// The inverse link at unit exposure (cluster_spread's response scale).
pub fn response(link: Link, eta: f64) -> f64 {
    match link {
        Link::Identity => eta,
        Link::Logit => logistic(eta),
        Link::Log => eta.exp(),
    }
}

/// exp(√(2σ_u²)·Φ⁻¹(0.75)).
pub fn median_ratio(su: f64) -> f64 {
    (std::f64::consts::SQRT_2 * su * Z75).exp()
}

pub const Q_ICC: RegDef = QuantityDef::new(
    RegQuantity::Icc,
    QuantityInfo::new(
        "icc",
        "intraclass correlation σ_u²/(σ_u² + σ_d²) (σ_d²: σ², π²/3 latent, or ln(1 + 1/λ)); with slopes at the reference profile",
        "",
    ),
    At::Design,
    Support::Unit,
);

pub const Q_MOR: RegDef = QuantityDef::new(
    RegQuantity::MedianRatio,
    QuantityInfo::new(
        "median_odds_ratio",
        "median odds ratio between two clusters, exp(√(2σ_u²)·Φ⁻¹(0.75))",
        "",
    ),
    At::Design,
    Support::Positive,
);

pub const Q_MRR: RegDef = QuantityDef::new(
    RegQuantity::MedianRatio,
    QuantityInfo::new(
        "median_rate_ratio",
        "median rate ratio between two clusters, exp(√(2σ_u²)·Φ⁻¹(0.75))",
        "",
    ),
    At::Design,
    Support::Positive,
);

/// `cluster_spread`, whose support is the template's response scale.
pub const fn q_spread(about: &'static str, support: Support) -> RegDef {
    QuantityDef::new(
        RegQuantity::ClusterSpread,
        QuantityInfo::new("cluster_spread", about, AT_PROFILE),
        At::Profile,
        support,
    )
}

/// `slope_spread`: the 5–95 % range over clusters of a contrast whose covariate
/// has a random slope (`contrast = "NAME"` or `"NAME:DELTA"`).
pub const fn q_slope_spread(about: &'static str) -> RegDef {
    QuantityDef::new(
        RegQuantity::SlopeSpread,
        QuantityInfo::new("slope_spread", about, FOR_CONTRAST),
        At::Contrast,
        Support::Positive,
    )
}

pub const Q_R2_FIXED: RegDef = QuantityDef::new(
    RegQuantity::R2Fixed,
    QuantityInfo::new(
        "r2_fixed",
        "marginal R² (Nakagawa & Schielzeth): σ_f²/(σ_f² + σ_r² + σ_d²), σ_r² = σ_u² (+ mean slope variance)",
        "",
    ),
    At::Design,
    Support::Unit,
);

pub const Q_R2_COND: RegDef = QuantityDef::new(
    RegQuantity::R2Conditional,
    QuantityInfo::new(
        "r2_conditional",
        "conditional R² (Nakagawa & Schielzeth): (σ_f² + σ_r²)/(σ_f² + σ_r² + σ_d²)",
        "",
    ),
    At::Design,
    Support::Unit,
);

/// A readable label for a multilevel quantity's belief.
pub fn label(q: RegQuantity, link: Link) -> Option<&'static str> {
    Some(match (q, link) {
        (RegQuantity::Icc, Link::Logit) => "intraclass correlation (latent scale)",
        (RegQuantity::Icc, _) => "intraclass correlation",
        (RegQuantity::MedianRatio, Link::Logit) => "median odds ratio between clusters",
        (RegQuantity::MedianRatio, _) => "median rate ratio between clusters",
        (RegQuantity::ClusterSpread, Link::Logit) => "5–95 % range of cluster event risk",
        (RegQuantity::ClusterSpread, Link::Log) => "5–95 % range of cluster rate",
        (RegQuantity::ClusterSpread, _) => "5–95 % range of cluster mean",
        (RegQuantity::R2Fixed, _) => "marginal R² (fixed effects)",
        (RegQuantity::R2Conditional, _) => "conditional R² (fixed and cluster effects)",
        (RegQuantity::SlopeSpread, Link::Logit) => "5–95 % range of cluster odds ratios",
        (RegQuantity::SlopeSpread, Link::Log) => "5–95 % range of cluster rate ratios",
        (RegQuantity::SlopeSpread, _) => "5–95 % range of cluster mean differences",
        _ => return None,
    })
}

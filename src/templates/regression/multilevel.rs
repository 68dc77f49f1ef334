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

use super::quantity::{RegDef, RegQuantity, AT_PROFILE};
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
        "intraclass correlation σ_u²/(σ_u² + σ_d²) (σ_d²: σ², π²/3 latent, or ln(1 + 1/λ))",
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

pub const Q_R2_FIXED: RegDef = QuantityDef::new(
    RegQuantity::R2Fixed,
    QuantityInfo::new(
        "r2_fixed",
        "marginal R² (Nakagawa & Schielzeth): σ_f²/(σ_f² + σ_u² + σ_d²)",
        "",
    ),
    At::Design,
    Support::Unit,
);

pub const Q_R2_COND: RegDef = QuantityDef::new(
    RegQuantity::R2Conditional,
    QuantityInfo::new(
        "r2_conditional",
        "conditional R² (Nakagawa & Schielzeth): (σ_f² + σ_u²)/(σ_f² + σ_u² + σ_d²)",
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
        _ => return None,
    })
}

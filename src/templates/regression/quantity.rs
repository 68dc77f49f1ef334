//! The regression quantities: [`RegQuantity`] names what the shared simulator
//! computes (formulas and references: [`super`]), and the definitions shared by
//! the three templates' tables. Each template lists its own table (`linear.rs`,
//! `logistic.rs`, `poisson.rs`), with its own entries for the quantities only it
//! has and its `mean_response` support.

use super::Link;
use crate::dist::Support;
use crate::templates::{At, QuantityDef, QuantityInfo};

/// What the regression simulator computes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RegQuantity {
    R2,
    R2Marginal,
    R2Latent,
    EffectiveNonzero,
    MeanResponse,
    EventProb,
    Rate,
    Prevalence,
    OddsRatio,
    RateRatio,
    SignalSd,
    /// Multilevel templates ([`super::multilevel`]).
    Icc,
    MedianRatio,
    ClusterSpread,
    R2Fixed,
    R2Conditional,
    /// The 5–95 % range over clusters of a contrast with a random slope.
    SlopeSpread,
    /// A group's share φ_g of the explained variance (R2D2 with groups).
    R2Share,
}

impl RegQuantity {
    /// Needs the linear predictor at every design row.
    pub(super) fn needs_rows(self, link: Link) -> bool {
        self == Self::Prevalence || (self == Self::R2 && link != Link::Identity)
    }

    /// Needs the design quadratic form βᵀSβ.
    pub(super) fn needs_quadratic(self) -> bool {
        matches!(
            self,
            Self::R2 | Self::R2Latent | Self::SignalSd | Self::R2Fixed | Self::R2Conditional
        )
    }

    /// Needs the shrinkage terms κ_j.
    pub(super) fn needs_shrinkage(self) -> bool {
        self == Self::EffectiveNonzero
    }
}

/// A regression template's quantity definition.
pub type RegDef = QuantityDef<RegQuantity>;

/// `needs` text of the quantities at a profile.
pub const AT_PROFILE: &str = "profile (optional; default: design mean)";
/// `needs` text of the contrasts.
pub const FOR_CONTRAST: &str = "contrast = \"NAME\" or \"NAME:DELTA\"";

pub const Q_R2: RegDef = QuantityDef::new(
    RegQuantity::R2,
    QuantityInfo::new(
        "r2",
        "Bayesian R² over the design: var(mean response)/(that + mean residual variance)",
        "",
    ),
    At::Design,
    Support::Unit,
);

pub const Q_R2_MARGINAL: RegDef = QuantityDef::new(
    RegQuantity::R2Marginal,
    QuantityInfo::new(
        "r2_marginal",
        "R² with the signal variance averaged over covariates and coefficient normals (R2D2: Beta(a, b))",
        "",
    ),
    At::Design,
    Support::Unit,
);

pub const Q_EFF: RegDef = QuantityDef::new(
    RegQuantity::EffectiveNonzero,
    QuantityInfo::new(
        "effective_nonzero",
        "effective number of non-zero coefficients, Σ(1 − κ_j)",
        "",
    ),
    At::Design,
    Support::Positive,
);

pub const Q_SIGNAL: RegDef = QuantityDef::new(
    RegQuantity::SignalSd,
    QuantityInfo::new(
        "signal_sd",
        "sd of the linear predictor over the design",
        "",
    ),
    At::Design,
    Support::Positive,
);

pub const Q_R2_SHARE: RegDef = QuantityDef::new(
    RegQuantity::R2Share,
    QuantityInfo::new(
        "r2_share",
        "a group's share φ_g of the explained variance (r2d2 with groups): Beta(A_g, A − A_g)",
        "group = \"NAME\"",
    ),
    At::Design,
    Support::Unit,
);

/// `mean_response`, whose support is the template's response scale.
pub const fn q_mean(support: Support) -> RegDef {
    QuantityDef::new(
        RegQuantity::MeanResponse,
        QuantityInfo::new("mean_response", "mean response at a profile", AT_PROFILE),
        At::Profile,
        support,
    )
}

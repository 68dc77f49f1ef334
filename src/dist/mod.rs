//! Probability distributions: one file per family, a registry, finite mixtures and
//! distributions with atoms on the extended real line.
//!
//! Every family offers its CDF, density, quantile and a map from a *base variate*
//! to a draw. The base variate's kind (a standard normal or a uniform on (0, 1)) is
//! fixed by the family, not by its parameters, so a fit can draw the base variates
//! once and map them through the family for every trial value of the
//! hyperparameters (common random numbers). Location–scale families
//! use a normal base (θ = μ + σ·z), others the quantile of a uniform.
//!
//! Constructors validate their parameters and report the offending value.
//!
//! A family owns everything about itself: its file `src/dist/<name>.rs` holds the
//! struct implementing [`Continuous`] and a `pub const INFO: FamilyInfo` that
//! declares its parameters (domain and start hint, [`params`]), support, base,
//! the roles templates may offer it for ([`Role`]), its constructor, and its
//! forms in Stan, PyMC and brms ([`forms`]). Adding a family is that file plus
//! one line in the `registry!` list below (it declares the module and lists the
//! family in [`FAMILIES`]); the exporters, the templates' lists of allowed
//! families and quantile fitting ask the registry.

use std::fmt;
use std::sync::Arc;

pub mod forms;
pub mod mixed;
pub mod mixture;
pub mod params;

#[cfg(test)]
pub(crate) mod invariants;
#[cfg(test)]
mod registry_tests;

pub use forms::{Form, Forms, PymcFn, StanFn};
pub use mixed::{Atom, Mixed};
pub use mixture::Mixture;
pub use params::{Domain, Param, Start};

pub use crate::error::DistError;

/// Check that a parameter is finite and strictly positive.
pub fn positive(family: &'static str, param: &'static str, value: f64) -> Result<f64, DistError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(DistError {
            family,
            param,
            value,
            reason: "must be finite and > 0",
        })
    }
}

/// Check that a positive shape-like parameter lies in `[lo, hi]`, the range over
/// which the family's CDF and quantile (statrs 0.19's regularised incomplete beta
/// and gamma functions and their inverses) return in bounded time. Measured:
/// `check` of one belief takes under 0.3 s inside the ranges the families use,
/// and never returned (or took 9 s and more) at Beta α = 10⁸ or 10⁻³⁰⁰, gamma
/// shape 10⁸, Student-t df = 10⁸ or 10⁻³⁰⁰. `reason` says what to write instead.
pub fn computable(
    family: &'static str,
    param: &'static str,
    value: f64,
    (lo, hi): (f64, f64),
    reason: &'static str,
) -> Result<f64, DistError> {
    let value = positive(family, param, value)?;
    if (lo..=hi).contains(&value) {
        Ok(value)
    } else {
        Err(DistError {
            family,
            param,
            value,
            reason,
        })
    }
}

/// Check that a parameter is finite.
pub fn finite(family: &'static str, param: &'static str, value: f64) -> Result<f64, DistError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(DistError {
            family,
            param,
            value,
            reason: "must be finite",
        })
    }
}

/// The kind of base variate a family maps to draws.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Base {
    /// A standard normal z.
    Normal,
    /// A uniform u on (0, 1).
    Uniform,
}

/// Where a family puts its mass.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Support {
    Real,
    Positive,
    Unit,
    Interval,
}

/// A continuous univariate distribution.
pub trait Continuous: Send + Sync + fmt::Debug {
    /// The registry name of the family.
    fn family(&self) -> &'static str;
    fn cdf(&self, x: f64) -> f64;
    fn pdf(&self, x: f64) -> f64;
    /// The p-quantile, p in [0, 1] (±inf at the ends of an unbounded support).
    fn quantile(&self, p: f64) -> f64;
    /// Lower and upper end of the support.
    fn support(&self) -> (f64, f64);
    fn mean(&self) -> Option<f64>;
    fn variance(&self) -> Option<f64>;
    /// The parameters in registry order, with their names.
    fn params(&self) -> Vec<(&'static str, f64)>;
    /// A draw from a base variate of the family's [`Base`] kind.
    #[allow(clippy::wrong_self_convention)]
    fn from_base(&self, b: f64) -> f64 {
        self.quantile(b)
    }
    /// Map many base variates at once (families override this for speed).
    fn fill_from_base(&self, base: &[f64], out: &mut [f64]) {
        for (o, b) in out.iter_mut().zip(base) {
            *o = self.from_base(*b);
        }
    }
    /// Survival function 1 − F(x), overridden where a direct form is more accurate.
    fn sf(&self, x: f64) -> f64 {
        1.0 - self.cdf(x)
    }
}

/// Builds a family from its parameters in registry order.
pub type Builder = fn(&[f64]) -> Result<Box<dyn Continuous>, DistError>;

/// A role a template may offer a family for, beyond what the support says
/// (the support alone decides [`FamilyInfo::real_valued`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// The prior of a regression's noise standard deviation (`[prior.sigma]`).
    NoiseSd,
    /// The prior of a survival latency's shape (mixture-cure `[prior.shape]`).
    LatencyShape,
}

/// Registry entry of a family: everything the rest of the program asks about it.
pub struct FamilyInfo {
    pub name: &'static str,
    /// Parameter names in the order `build` takes them (`params::names(PARAMS)`).
    pub params: &'static [&'static str],
    /// Each parameter's name, domain and start hint, in the same order.
    pub specs: &'static [Param],
    pub base: Base,
    pub support: Support,
    /// Roles templates may offer the family for (see [`Role`]).
    pub roles: &'static [Role],
    pub about: &'static str,
    pub build: Builder,
    /// The family in Stan, PyMC and brms (see [`forms`]).
    pub forms: Forms,
    /// Reference values with their source, checked by the registry test.
    #[cfg(test)]
    pub reference: invariants::Reference,
}

impl FamilyInfo {
    /// Whether the family suits a parameter that may take any real value: its
    /// support is the real line, or an interval whose ends the prior sets.
    pub fn real_valued(&self) -> bool {
        matches!(self.support, Support::Real | Support::Interval)
    }

    /// Whether templates may offer the family for `role`.
    pub fn suits(&self, role: Role) -> bool {
        self.roles.contains(&role)
    }
}

impl fmt::Debug for FamilyInfo {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "FamilyInfo({})", self.name)
    }
}

/// Declares each family's module (`src/dist/<name>.rs`) and lists its `INFO`
/// in [`FAMILIES`], in the order given.
macro_rules! registry {
    ($($family:ident),* $(,)?) => {
        $(pub mod $family;)*
        /// All families, in registry order (the order of [`family_names`]).
        pub static FAMILIES: &[&FamilyInfo] = &[$(&$family::INFO),*];
    };
}

// The registry: adding a family adds one line here.
registry! {
    normal,
    lognormal,
    gamma,
    inverse_gamma,
    beta,
    logit_normal,
    student_t,
    half_normal,
    half_student_t,
    half_cauchy,
    exponential,
    uniform,
    weibull,
    laplace,
    loglogistic,
    gumbel,
}

/// Look a family up by name.
pub fn family(name: &str) -> Option<&'static FamilyInfo> {
    FAMILIES.iter().copied().find(|f| f.name == name)
}

/// All family names.
pub fn family_names() -> Vec<&'static str> {
    FAMILIES.iter().map(|f| f.name).collect()
}

/// The names of the families for which `keep` holds, in registry order (a
/// template's allowed families, e.g. `names_where(|f| f.real_valued())`).
pub fn names_where(keep: impl Fn(&FamilyInfo) -> bool) -> Vec<&'static str> {
    FAMILIES
        .iter()
        .filter(|f| keep(f))
        .map(|f| f.name)
        .collect()
}

/// Build a family by name from parameters in registry order.
pub fn build(name: &str, params: &[f64]) -> Option<Result<Box<dyn Continuous>, DistError>> {
    family(name).map(|f| (f.build)(params))
}

/// Shared, thread-safe handle to a distribution.
pub type Dist = Arc<dyn Continuous>;

//! What a family declares about each of its parameters: the domain (which fixes
//! the unconstrained working scale an optimiser moves on) and a start hint for
//! fitting the family to elicited quantiles (`target::quantiles::fit_family`).
//!
//! Working scale: a positive parameter θ is moved as ln θ, a real one as θ
//! itself. Start hints are read from a summary of the elicited quantiles (their
//! middle value, the spread between the outer ones, and the outer values) and an
//! offset s that the fit varies to get several starts on the working scale.

use crate::numerics::logit;

/// The set of values a parameter may take.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Domain {
    /// Any finite real number (a location, a bound).
    Real,
    /// Finite and > 0 (a scale, rate, shape or degrees of freedom).
    Positive,
}

impl Domain {
    /// Working-scale value → parameter value (exp for positive, identity otherwise).
    #[inline]
    pub fn from_working(&self, w: f64) -> f64 {
        match self {
            Domain::Real => w,
            Domain::Positive => w.exp(),
        }
    }

    /// Parameter value → working-scale value (the inverse of [`Domain::from_working`]).
    #[inline]
    pub fn to_working(&self, x: f64) -> f64 {
        match self {
            Domain::Real => x,
            Domain::Positive => x.ln(),
        }
    }

    /// Whether `x` lies in the domain.
    pub fn contains(&self, x: f64) -> bool {
        match self {
            Domain::Real => x.is_finite(),
            Domain::Positive => x.is_finite() && x > 0.0,
        }
    }
}

/// Where a parameter starts, on its working scale, when a family is fitted to
/// elicited quantiles (m: the middle elicited value, d: the spread between the
/// outer ones, s: the start offset).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Start {
    /// m (a location on the quantity's own scale).
    Middle,
    /// ln m (a location on the log scale; m floored at 1e-12).
    LogMiddle,
    /// logit m (a location on the logit scale; m clamped into (1e-9, 1 − 1e-9)).
    LogitMiddle,
    /// The lowest elicited value − d (a lower bound).
    BelowLowest,
    /// The highest elicited value + d (an upper bound).
    AboveHighest,
    /// ln(d/2) + s (a scale in the quantity's unit).
    HalfSpread,
    /// ln(2/d) + s (a rate in the quantity's inverse unit).
    InverseHalfSpread,
    /// s (a unit-free shape or degrees of freedom: 1 at s = 0 on the log scale).
    Offset,
}

/// A summary of elicited quantiles (p, x) sorted by p, for start hints.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Elicited {
    /// The value at the middle index (the median when three are given).
    pub middle: f64,
    /// |highest − lowest|, at least 1e-6.
    pub spread: f64,
    pub lowest: f64,
    pub highest: f64,
}

impl Elicited {
    /// Summarise quantiles sorted by probability (at least one).
    pub fn new(pts: &[(f64, f64)]) -> Self {
        let lowest = pts.first().map_or(f64::NAN, |p| p.1);
        let highest = pts.last().map_or(f64::NAN, |p| p.1);
        Self {
            middle: pts.get(pts.len() / 2).map_or(f64::NAN, |p| p.1),
            spread: (highest - lowest).abs().max(1e-6),
            lowest,
            highest,
        }
    }
}

impl Start {
    /// The start on the working scale for elicited quantiles `e` and offset `s`.
    pub fn working(&self, e: &Elicited, s: f64) -> f64 {
        match self {
            Start::Middle => e.middle,
            Start::LogMiddle => e.middle.max(1e-12).ln(),
            Start::LogitMiddle => logit(e.middle.clamp(1e-9, 1.0 - 1e-9)),
            Start::BelowLowest => e.lowest - e.spread,
            Start::AboveHighest => e.highest + e.spread,
            Start::HalfSpread => (e.spread / 2.0).ln() + s,
            Start::InverseHalfSpread => (2.0 / e.spread).ln() + s,
            Start::Offset => s,
        }
    }
}

/// One parameter of a family, in registry order.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Param {
    pub name: &'static str,
    pub domain: Domain,
    pub start: Start,
}

impl Param {
    /// A real parameter.
    pub const fn real(name: &'static str, start: Start) -> Self {
        Self {
            name,
            domain: Domain::Real,
            start,
        }
    }

    /// A positive parameter.
    pub const fn positive(name: &'static str, start: Start) -> Self {
        Self {
            name,
            domain: Domain::Positive,
            start,
        }
    }
}

/// The names of `params`, in order (for [`super::FamilyInfo::params`], so that a
/// family writes each name once).
pub const fn names<const N: usize>(params: [Param; N]) -> [&'static str; N] {
    let mut out = [""; N];
    let mut i = 0;
    while i < N {
        out[i] = params[i].name;
        i += 1;
    }
    out
}

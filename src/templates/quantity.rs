//! Typed quantity tables. Each template defines its derived quantities once, as a
//! table of [`QuantityDef`]s over its own quantity enum: the catalogue entry
//! (name, meaning, what a belief must give), where the quantity is evaluated
//! ([`At`]), whether it takes a horizon, and its support. The catalogue that
//! `priorsmith templates NAME` prints ([`super::TemplateInfo::quantities`]) is
//! derived from the table at compile time by [`catalogue`].
//!
//! A validated [`super::Request`] carries the template's own description of what
//! it asked for (its enum value and whatever it resolved, e.g. a profile's linear
//! form) as a [`Detail`]; only the template that made the request reads it back,
//! with its own type.

use super::QuantityInfo;
use crate::dist::Support;
use crate::error::{Error, Result};
use std::any::Any;
use std::sync::Arc;

/// Where a quantity is evaluated: what a belief names besides the quantity.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum At {
    /// The whole design or population: no profile.
    Design,
    /// One profile (`profile = "NAME"`, default `"reference"`).
    Profile,
    /// Two profiles (`profiles = ["a", "b"]`).
    TwoProfiles,
    /// A contrast (`contrast = "NAME"` or `"NAME:DELTA"`).
    Contrast,
}

/// One quantity of a template, defined once.
#[derive(Debug, Clone, Copy)]
pub struct QuantityDef<K: 'static> {
    /// The template's own value for it.
    pub kind: K,
    /// The catalogue entry: name, meaning, what a belief must give (text).
    pub info: QuantityInfo,
    pub at: At,
    /// Whether a belief gives `horizon`.
    pub horizon: bool,
    pub support: Support,
    /// Whether +∞ is a possible value (e.g. a median never reached).
    pub allows_inf: bool,
}

impl<K: Copy> QuantityDef<K> {
    /// A quantity without horizon and never infinite.
    pub const fn new(kind: K, info: QuantityInfo, at: At, support: Support) -> Self {
        Self {
            kind,
            info,
            at,
            horizon: false,
            support,
            allows_inf: false,
        }
    }

    /// The same quantity, evaluated at a horizon.
    pub const fn at_horizon(mut self) -> Self {
        self.horizon = true;
        self
    }

    /// The same quantity, which may be +∞.
    pub const fn may_be_infinite(mut self) -> Self {
        self.allows_inf = true;
        self
    }
}

/// The definition named `name` in a template's table.
pub fn lookup<K>(table: &'static [QuantityDef<K>], name: &str) -> Option<&'static QuantityDef<K>> {
    table.iter().find(|d| d.info.name == name)
}

/// The catalogue entries of a table, in its order (for `TemplateInfo::quantities`).
pub const fn catalogue<K: Copy, const N: usize>(table: &[QuantityDef<K>; N]) -> [QuantityInfo; N] {
    let mut out = [QuantityInfo::new("", "", ""); N];
    let mut i = 0;
    while i < N {
        out[i] = table[i].info;
        i += 1;
    }
    out
}

/// Anything a template may keep in a request about itself.
pub trait DetailValue: Any + std::fmt::Debug + Send + Sync {}
impl<T: Any + std::fmt::Debug + Send + Sync> DetailValue for T {}

/// The template's own description of a request (its quantity enum value and what
/// it resolved), read back with [`Detail::get`] by the template that made it.
#[derive(Debug, Clone)]
pub struct Detail(Arc<dyn DetailValue>);

impl Detail {
    pub fn new(value: impl DetailValue) -> Self {
        Self(Arc::new(value))
    }

    /// The value as the template's type `T`; another type is an internal error
    /// (a request handed to a template that did not make it).
    pub fn get<T: Any>(&self) -> Result<&T> {
        let any: &dyn Any = &*self.0;
        any.downcast_ref::<T>().ok_or_else(|| {
            Error::Internal(format!(
                "a request made by another template ({:?}) reached {}",
                self.0,
                std::any::type_name::<T>()
            ))
        })
    }
}

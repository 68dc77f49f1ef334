//! Raw belief-file structures, close to the TOML. Unknown keys are rejected by
//! serde (with the line from the TOML parser) and get a "did you mean" hint.
//! Family- and template-specific tables stay as `toml::Table` and are checked
//! by the validator, which knows which keys each family or template takes.

use serde::Deserialize;
use std::collections::BTreeMap;

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSpec {
    pub title: Option<String>,
    pub model: Option<toml::Table>,
    pub simulation: Option<RawSimulation>,
    #[serde(default)]
    pub prior: BTreeMap<String, toml::Table>,
    #[serde(default)]
    pub belief: Vec<RawBelief>,
    #[serde(default)]
    pub profile: BTreeMap<String, toml::Table>,
    pub design: Option<toml::Table>,
    pub fit: Option<RawFit>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSimulation {
    pub draws: Option<toml::Value>,
    pub seed: Option<toml::Value>,
    pub points: Option<String>,
    pub precision: Option<toml::Value>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawBelief {
    pub quantity: Option<String>,
    pub label: Option<String>,
    pub horizon: Option<toml::Value>,
    pub profile: Option<String>,
    pub profiles: Option<Vec<String>>,
    pub contrast: Option<String>,
    /// A group of covariates (regression `r2_share`).
    pub group: Option<String>,
    pub weight: Option<toml::Value>,
    pub distribution: Option<toml::Table>,
    pub quantiles: Option<toml::Table>,
    pub quantile_family: Option<String>,
    pub histogram: Option<RawHistogram>,
    pub experts: Option<Vec<RawExpert>>,
    pub atoms: Option<Vec<RawAtom>>,
    /// A belief built from historical data (see `history::belief`).
    pub historical: Option<toml::Table>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawHistogram {
    pub edges: Vec<toml::Value>,
    pub probs: Vec<toml::Value>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawExpert {
    pub name: Option<String>,
    pub weight: Option<toml::Value>,
    pub distribution: Option<toml::Table>,
    pub quantiles: Option<toml::Table>,
    pub quantile_family: Option<String>,
    pub histogram: Option<RawHistogram>,
    pub atoms: Option<Vec<RawAtom>>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawAtom {
    pub at: toml::Value,
    pub mass: toml::Value,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawFit {
    pub discrepancy: Option<String>,
    pub starts: Option<toml::Value>,
    pub searches: Option<toml::Value>,
    pub tolerance: Option<toml::Value>,
    pub tie_break: Option<toml::Value>,
    pub reference: Option<toml::Table>,
    pub replicates: Option<toml::Value>,
    pub trace_front: Option<toml::Value>,
}

//! Each expert's believed distribution beside a linear opinion pool.
//!
//! A belief stated as `experts = [...]` is fitted through its pool
//! F = Σ_e w_e F_e with the weights normalised to sum to 1 (Stone 1961; O'Hagan
//! et al. 2006, "Uncertain Judgements", §9.2); fit.json keeps the pooled curve
//! only. The report draws each expert's CDF beside it, so a reader sees whether
//! the pool is a compromise no expert holds. The experts' curves are rebuilt from
//! the folder's `spec.toml` (which `fit` writes): each expert's statement becomes
//! a belief of its own about the same quantity (options such as profile or
//! horizon kept), validated and tabulated exactly as the pooled belief's parts
//! were (`spec::from_table`, `fit::verdict::believed_curve`). Nothing random is
//! involved. Atoms stated beside the pool apply to the pool as a whole and are
//! not part of any expert's curve.

use super::view::{BeliefView, Curve};
use crate::error::Result;
use std::path::Path;

/// One expert of a pooled belief.
#[derive(Debug, Clone)]
pub struct Expert {
    /// The expert's `name`, or "expert N" (1-based).
    pub name: String,
    /// The weight as stated (1 when not given).
    pub weight: f64,
    /// The weight in the pool: `weight` over the sum of the weights.
    pub share: f64,
    pub curve: Curve,
}

/// Keys of a belief that state its distribution (replaced by an expert's).
const STATEMENT: [&str; 8] = [
    "experts",
    "atoms",
    "weight",
    "label",
    "distribution",
    "quantiles",
    "quantile_family",
    "histogram",
];

/// Keys an expert may carry that state its distribution.
const EXPERT_STATEMENT: [&str; 5] = [
    "distribution",
    "quantiles",
    "quantile_family",
    "histogram",
    "atoms",
];

/// Whether the stated weights were rescaled to sum to 1.
pub fn normalised(experts: &[Expert]) -> bool {
    (experts.iter().map(|e| e.weight).sum::<f64>() - 1.0).abs() > 1e-9
}

/// Attach each pooled belief's experts to its view, from `dir/spec.toml`.
/// Returns `Ok(false)` when no belief is pooled or the folder has no spec.toml
/// (nothing attached).
pub fn attach(dir: &Path, bs: &mut [BeliefView]) -> Result<bool> {
    let path = dir.join("spec.toml");
    if !path.is_file() {
        return Ok(false);
    }
    let text = crate::limits::read_text(&path, crate::limits::TEXT_BYTES, "belief file")?;
    let mut table = crate::spec::parse_table(&text, Some(&path))?;
    let beliefs: Vec<toml::Table> = table
        .get("belief")
        .and_then(|b| b.as_array())
        .map(|a| a.iter().filter_map(|x| x.as_table().cloned()).collect())
        .unwrap_or_default();
    // (belief index, name, stated weight) per synthetic belief.
    let mut who: Vec<(usize, String, f64)> = Vec::new();
    let mut synth = Vec::new();
    for (k, b) in beliefs.iter().enumerate().take(bs.len()) {
        let Some(experts) = b.get("experts").and_then(|e| e.as_array()) else {
            continue;
        };
        let mut base = b.clone();
        for key in STATEMENT {
            base.remove(key);
        }
        for (e, ex) in experts.iter().enumerate() {
            let Some(ex) = ex.as_table() else { continue };
            let mut one = base.clone();
            for key in EXPERT_STATEMENT {
                if let Some(v) = ex.get(key) {
                    one.insert(key.into(), v.clone());
                }
            }
            let name = ex
                .get("name")
                .and_then(|v| v.as_str())
                .map_or_else(|| format!("expert {}", e + 1), str::to_string);
            let w = ex
                .get("weight")
                .and_then(|v| v.as_float().or_else(|| v.as_integer().map(|i| i as f64)))
                .unwrap_or(1.0);
            who.push((k, name, w));
            synth.push(toml::Value::Table(one));
        }
    }
    if synth.is_empty() {
        return Ok(false);
    }
    table.insert("belief".into(), toml::Value::Array(synth));
    let synth_text = toml::to_string(&table).unwrap_or_default();
    let spec = crate::spec::from_table(
        table,
        &synth_text,
        Some(&path),
        &crate::spec::Overrides::default(),
    )?;
    for ((k, name, w), b) in who.into_iter().zip(&spec.beliefs) {
        let c = crate::fit::verdict::believed_curve(&b.target.dist);
        bs[k].experts.push(Expert {
            name,
            weight: w,
            share: 0.0,
            curve: Curve {
                x: c.x,
                cdf: c.cdf,
                pdf: c.pdf,
                atoms: c.atoms.iter().map(|a| (a.at, a.mass)).collect(),
            },
        });
    }
    for b in bs.iter_mut() {
        let total: f64 = b.experts.iter().map(|e| e.weight).sum();
        for e in &mut b.experts {
            e.share = e.weight / total;
        }
    }
    Ok(true)
}

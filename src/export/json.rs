//! JSON export: the prior in our own parameterisation at full precision, with
//! the header facts and, for each scalar prior, its quantiles at [`PROBS`]
//! (computed with `crate::dist`), so that code written by hand or by another
//! tool can be checked against them (scripts/check-pymc.sh does so).
//!
//! Format (`"format": "priorsmith-prior/1"`): `generated` {tool, version,
//! spec_sha256, seed, draws, exported, verdict, title, template}; `priors`
//! [{parameter, about, family, params {name: value}, quantiles {p: value}}];
//! a template-supplied statement is passed through as {parameter, about, code}.

use super::{Header, Item};
use crate::error::{Error, Result};
use serde_json::{json, Map, Value};

pub const PROBS: [f64; 7] = [0.01, 0.05, 0.25, 0.5, 0.75, 0.95, 0.99];

pub fn render(h: &Header, items: &[Item]) -> Result<String> {
    let mut priors = Vec::new();
    for it in items {
        priors.push(match it {
            Item::Scalar(s) => {
                let d = (s.family.build)(&s.params)?;
                let params: Map<String, Value> = s
                    .family
                    .params
                    .iter()
                    .zip(&s.params)
                    .map(|(n, v)| (n.to_string(), json!(v)))
                    .collect();
                let q: Map<String, Value> = PROBS
                    .iter()
                    .map(|p| (format!("{p}"), json!(d.quantile(*p))))
                    .collect();
                json!({
                    "parameter": s.parameter,
                    "about": s.about,
                    "family": s.family.name,
                    "params": params,
                    "quantiles": q,
                })
            }
            Item::Supplied(s) if s.code.is_empty() => {
                return Err(super::unsupported(format!(
                    "prior statement for `{}` ({}) carries no code and is not a family the \
                     JSON export can write",
                    s.parameter, s.about
                )))
            }
            Item::Supplied(s) => json!({
                "parameter": s.parameter,
                "about": s.about,
                "code": s.code,
            }),
        });
    }
    let v = json!({
        "format": "priorsmith-prior/1",
        "generated": {
            "tool": "priorsmith",
            "version": h.tool_version,
            "spec_sha256": h.spec_digest,
            "seed": h.seed,
            "draws": h.draws,
            "exported": h.date,
            "verdict": h.verdict,
            "title": h.title,
            "template": h.template,
        },
        "priors": priors,
    });
    serde_json::to_string_pretty(&v)
        .map(|s| s + "\n")
        .map_err(|e| Error::Internal(e.to_string()))
}

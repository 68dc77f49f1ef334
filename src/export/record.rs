//! Reading `fit.json` back for the exporters and the report: the typed fit
//! record ([`crate::fit::record`]), the header facts every export and report
//! carries, and the prior statements validated into [`Item`]s. Errors name the
//! file, the key path (`prior[2].params`) and the bad value.

use super::{Item, Scalar, Supplied};
use crate::error::Result;
use crate::fit::FitResult;
use crate::templates::PriorStatement;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

pub use crate::fit::record::bad;

/// Facts for the header of an export or a report.
#[derive(Debug, Clone)]
pub struct Header {
    pub title: String,
    pub template: String,
    pub tool_version: String,
    pub spec_digest: String,
    pub seed: u64,
    pub draws: u64,
    /// Verdict in words ("met within noise").
    pub verdict: String,
    /// Export date, YYYY-MM-DD (UTC).
    pub date: String,
}

/// A fit.json read back: the record, its header facts and its prior statements.
#[derive(Debug, Clone)]
pub struct FitRecord {
    pub file: PathBuf,
    pub header: Header,
    pub items: Vec<Item>,
    /// The whole record, for readers that need more (the report).
    pub fit: FitResult,
}

/// Read and validate `path` (a fit.json).
pub fn read(path: &Path) -> Result<FitRecord> {
    let fit = crate::fit::record::read(path)?;
    from_fit(fit, path)
}

/// Header and validated prior statements of a record; `file` names it in errors.
pub fn from_fit(fit: FitResult, file: &Path) -> Result<FitRecord> {
    let header = Header {
        title: fit.title.clone(),
        template: fit.template.clone(),
        tool_version: fit.tool_version.clone(),
        spec_digest: fit.spec_digest.clone(),
        seed: fit.seed,
        draws: fit.draws as u64,
        verdict: fit.verdict.words().to_string(),
        date: super::today(),
    };
    let items = fit
        .prior
        .iter()
        .enumerate()
        .map(|(k, st)| item(file, k, st))
        .collect::<Result<Vec<_>>>()?;
    Ok(FitRecord {
        file: file.to_path_buf(),
        header,
        items,
        fit,
    })
}

fn item(file: &Path, k: usize, st: &PriorStatement) -> Result<Item> {
    let key = |s: &str| format!("prior[{k}].{s}");
    let parameter = st.parameter.clone();
    let about = st.about.clone();
    if let Some(code) = &st.code {
        return Ok(Item::Supplied(Supplied {
            parameter,
            about,
            code: code.clone(),
        }));
    }
    let fam_name = st.family.as_str();
    if fam_name.is_empty() {
        return Err(bad(
            file,
            &key("family"),
            format!(
                "prior statement for `{parameter}` has neither a family nor template-supplied code"
            ),
        ));
    }
    let Some(family) = crate::dist::family(fam_name) else {
        // A template's own structured prior (e.g. a horseshoe on regression
        // coefficients) without supplied code: readable by the report, and every
        // export names it as unsupported instead of guessing.
        return Ok(Item::Supplied(Supplied {
            parameter,
            about: format!("{about} ({fam_name})"),
            code: BTreeMap::new(),
        }));
    };
    if st.params.len() != family.params.len() {
        return Err(bad(
            file,
            &key("params"),
            format!(
                "{fam_name} takes {} parameters ({}), found {}",
                family.params.len(),
                family.params.join(", "),
                st.params.len()
            ),
        ));
    }
    let mut params = Vec::new();
    for (j, ((name, value), want)) in st.params.iter().zip(family.params).enumerate() {
        if name != want {
            return Err(bad(
                file,
                &format!("prior[{k}].params[{j}]"),
                format!("{fam_name} expects `{want}` here, found `{name}`"),
            ));
        }
        params.push(*value);
    }
    // Validate the values with the family itself.
    (family.build)(&params).map_err(|e| bad(file, &key("params"), e.to_string()))?;
    Ok(Item::Scalar(Scalar {
        parameter,
        family,
        params,
        about,
    }))
}

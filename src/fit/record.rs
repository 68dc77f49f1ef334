//! The fit record: `fit.json` is a [`FitResult`] written and read only here.
//!
//! The layout carries a schema version ([`SCHEMA_VERSION`]); a change of layout
//! (a field added, renamed or retyped) raises it and updates the README's
//! fit.json section. Reading checks the version first, then deserialises with
//! the key path of any bad value in the error (`beliefs[1].fresh`). ±∞ is stored
//! as the strings "inf" / "-inf" and NaN as null (JSON has neither; see
//! `numerics::ext`). The `tool` object ({name, version}) is written for readers
//! outside priorsmith and ignored on reading.

use super::FitResult;
use crate::error::{Error, Location, Result};
use std::path::Path;

/// Version of the fit.json layout. 1: the first round's files (no version key);
/// 2: typed record with Monte Carlo errors, what set each hyperparameter, how
/// the draws were chosen, and the tie-break as a tagged value; 3: the fit's
/// `tolerance` and, for the survival templates, the `likelihood` the exports
/// write.
pub const SCHEMA_VERSION: u32 = 3;

/// An error at key `key` of fit.json `file`.
pub fn bad(file: &Path, key: &str, msg: impl Into<String>) -> Error {
    Error::input(
        Location {
            file: Some(file.to_path_buf()),
            line: None,
            key: (!key.is_empty()).then(|| key.to_string()),
        },
        msg,
    )
}

/// The JSON text of a fit record.
pub fn to_json(r: &FitResult) -> Result<String> {
    let mut v = serde_json::to_value(r).map_err(|e| Error::Internal(e.to_string()))?;
    if let Some(o) = v.as_object_mut() {
        o.insert(
            "tool".into(),
            serde_json::json!({ "name": "priorsmith", "version": r.tool_version }),
        );
    }
    serde_json::to_string_pretty(&v).map_err(|e| Error::Internal(e.to_string()))
}

/// Read the fit record at `path` (a fit.json).
pub fn read(path: &Path) -> Result<FitResult> {
    let text = crate::limits::read_text(path, crate::limits::TEXT_BYTES, "fit record")?;
    parse(&text, path)
}

/// Parse fit.json text; `file` names it in errors.
pub fn parse(text: &str, file: &Path) -> Result<FitResult> {
    let v: serde_json::Value = serde_json::from_str(text).map_err(|e| {
        Error::input(
            Location {
                file: Some(file.to_path_buf()),
                line: Some(e.line()),
                key: None,
            },
            format!("not valid JSON: {e}"),
        )
    })?;
    if !v.is_object() {
        return Err(bad(file, "", "fit.json must hold a JSON object"));
    }
    match v.get("schema_version").map(|x| x.as_u64()) {
        None => {
            return Err(bad(
                file,
                "schema_version",
                format!(
                    "fit.json has no schema version: it was written by an older priorsmith \
                     (this one reads version {SCHEMA_VERSION}); fit the belief file again"
                ),
            ))
        }
        Some(Some(n)) if n == SCHEMA_VERSION as u64 => {}
        Some(other) => {
            return Err(bad(
                file,
                "schema_version",
                format!(
                    "fit.json has schema version {}, this priorsmith reads version \
                     {SCHEMA_VERSION}; fit the belief file again with this version",
                    other.map_or_else(|| v["schema_version"].to_string(), |n| n.to_string())
                ),
            ))
        }
    }
    let fit: FitResult = serde_path_to_error::deserialize(v).map_err(|e| {
        let key = e.path().to_string();
        bad(file, &key, e.into_inner().to_string())
    })?;
    validate(&fit, file)?;
    Ok(fit)
}

/// Ranges and cross-references a hand-edited record could break although every
/// value has the right type: the template is one this priorsmith knows; the
/// draw count is at least 1; every hyperparameter is finite, listed in `order`,
/// and a free one lies within its bounds; every prior statement names a family
/// of the registry (with valid parameters that agree with the hyperparameters
/// of the same name), a template's structured prior (`coefficients/…`) or
/// template-supplied code. Errors name the file, the key and the value.
pub fn validate(fit: &FitResult, file: &Path) -> Result<()> {
    if crate::templates::find(&fit.template).is_none() {
        return Err(bad(
            file,
            "template",
            format!(
                "`{}` is not a template of this priorsmith (known: {})",
                fit.template,
                crate::templates::names().join(", ")
            ),
        ));
    }
    if fit.draws == 0 {
        return Err(bad(file, "draws", "draws = 0: a fit has at least one draw"));
    }
    for (k, v) in &fit.hyperparameters {
        if !v.is_finite() {
            return Err(bad(
                file,
                &format!("hyperparameters.{k}"),
                format!("{v} is not a finite number"),
            ));
        }
        if !fit.order.contains(k) {
            return Err(bad(
                file,
                &format!("hyperparameters.{k}"),
                format!("`{k}` is not listed in `order`"),
            ));
        }
    }
    for (i, k) in fit.order.iter().enumerate() {
        if !fit.hyperparameters.contains_key(k) {
            return Err(bad(
                file,
                &format!("order[{i}]"),
                format!("`{k}` has no value in `hyperparameters`"),
            ));
        }
    }
    for (i, k) in fit.free.iter().enumerate() {
        let v = fit.hyperparameters.get(k).copied();
        let Some(v) = v else {
            return Err(bad(
                file,
                &format!("free[{i}]"),
                format!("`{k}` has no value in `hyperparameters`"),
            ));
        };
        if let Some(&(lo, hi)) = fit.bounds.get(k) {
            let slack = 1e-9 * (hi - lo).abs().max(1.0);
            if lo.is_nan() || hi.is_nan() || lo > hi || v < lo - slack || v > hi + slack {
                return Err(bad(
                    file,
                    &format!("hyperparameters.{k}"),
                    format!("{v} lies outside its bounds [{lo}, {hi}]"),
                ));
            }
        }
    }
    for (k, st) in fit.prior.iter().enumerate() {
        let key = |s: &str| format!("prior[{k}].{s}");
        if st.code.is_some() || st.family.starts_with("coefficients/") {
            continue;
        }
        if st.family.is_empty() {
            return Err(bad(
                file,
                &key("family"),
                format!(
                    "the prior statement for `{}` has neither a family nor template-supplied code",
                    st.parameter
                ),
            ));
        }
        let Some(family) = crate::dist::family(&st.family) else {
            return Err(bad(
                file,
                &key("family"),
                format!(
                    "`{}` is not a distribution family of this priorsmith",
                    st.family
                ),
            )
            .with_hint(format!(
                "known families: {}",
                crate::dist::family_names().join(", ")
            )));
        };
        if st.params.len() != family.params.len() {
            return Err(bad(
                file,
                &key("params"),
                format!(
                    "{} takes {} parameters ({}), found {}",
                    family.name,
                    family.params.len(),
                    family.params.join(", "),
                    st.params.len()
                ),
            ));
        }
        let mut values = Vec::new();
        for (j, ((name, value), want)) in st.params.iter().zip(family.params).enumerate() {
            if name != want {
                return Err(bad(
                    file,
                    &format!("prior[{k}].params[{j}]"),
                    format!("{} expects `{want}` here, found `{name}`", family.name),
                ));
            }
            let hk = format!("{}.{name}", st.parameter);
            if let Some(h) = fit.hyperparameters.get(&hk) {
                if (h - value).abs() > 1e-9 * h.abs().max(value.abs()).max(1e-300) {
                    return Err(bad(
                        file,
                        &format!("prior[{k}].params[{j}]"),
                        format!("{name} = {value} disagrees with hyperparameters.{hk} = {h}"),
                    ));
                }
            }
            values.push(*value);
        }
        (family.build)(&values).map_err(|e| bad(file, &key("params"), e.to_string()))?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spec::{parse as parse_spec, Overrides};

    fn demo() -> FitResult {
        let text = include_str!("../../demo-data/relapse-free-cure.toml")
            .replace("seed = 11", "seed = 11\ndraws = 2048");
        let spec = parse_spec(&text, None, &Overrides::default()).unwrap();
        super::super::fit(&spec, None).unwrap()
    }

    /// Writing and reading back gives the same record, to the bit.
    #[test]
    fn round_trip_is_exact() {
        let r = demo();
        let text = to_json(&r).unwrap();
        let back = parse(&text, Path::new("fit.json")).unwrap();
        assert_eq!(to_json(&back).unwrap(), text);
        assert_eq!(back.hyperparameters, r.hyperparameters);
        assert_eq!(back.schema_version, SCHEMA_VERSION);
    }

    /// Non-finite values survive: +∞ as "inf", NaN as null.
    #[test]
    fn infinities_and_nan_are_kept() {
        let mut r = demo();
        r.beliefs[0].implied_quantiles[6] = f64::INFINITY;
        r.beliefs[0].fresh = f64::NAN;
        let text = to_json(&r).unwrap();
        assert!(text.contains("\"inf\""));
        let back = parse(&text, Path::new("fit.json")).unwrap();
        assert_eq!(back.beliefs[0].implied_quantiles[6], f64::INFINITY);
        assert!(back.beliefs[0].fresh.is_nan());
    }

    /// A missing or foreign version, and a bad value, name the file and key.
    #[test]
    fn bad_records_name_the_key() {
        let r = demo();
        let mut v: serde_json::Value = serde_json::from_str(&to_json(&r).unwrap()).unwrap();
        v["beliefs"][0]["fresh"] = serde_json::json!("lots");
        let e = parse(&v.to_string(), Path::new("x/fit.json"))
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("x/fit.json") && e.contains("beliefs[0].fresh"),
            "{e}"
        );
        v["schema_version"] = serde_json::json!(1);
        let e = parse(&v.to_string(), Path::new("fit.json"))
            .unwrap_err()
            .to_string();
        assert!(e.contains("schema version 1"), "{e}");
        v.as_object_mut().unwrap().remove("schema_version");
        let e = parse(&v.to_string(), Path::new("fit.json"))
            .unwrap_err()
            .to_string();
        assert!(e.contains("no schema version"), "{e}");
    }
}

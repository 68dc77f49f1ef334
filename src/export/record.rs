//! Reading `fit.json` back: the header facts every export and report carries and
//! the prior statements as [`Item`]s. Errors name the file, the key path
//! (`prior[2].params`) and the bad value. ±∞ is stored as the strings "inf" /
//! "-inf" (JSON has no infinity; see `numerics::ext`).

use super::{Item, Scalar, Supplied};
use crate::error::{Error, Location, Result};
use serde_json::Value;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

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

/// A parsed fit.json.
#[derive(Debug, Clone)]
pub struct FitRecord {
    pub file: PathBuf,
    pub header: Header,
    pub items: Vec<Item>,
    /// The whole document, for readers that need more (the report).
    pub json: Value,
}

/// Error at key `key` of `file`.
pub fn bad(file: &Path, key: &str, msg: impl Into<String>) -> Error {
    Error::input(
        Location {
            file: Some(file.to_path_buf()),
            line: None,
            key: Some(key.to_string()),
        },
        msg,
    )
}

/// A number, or ±inf written as a string.
pub fn number(v: &Value) -> Option<f64> {
    match v {
        Value::Number(n) => n.as_f64(),
        Value::String(s) => match s.as_str() {
            "inf" => Some(f64::INFINITY),
            "-inf" => Some(f64::NEG_INFINITY),
            _ => None,
        },
        _ => None,
    }
}

pub fn get<'a>(file: &Path, v: &'a Value, key: &str) -> Result<&'a Value> {
    v.get(key).ok_or_else(|| {
        bad(
            file,
            key,
            format!("fit.json lacks `{key}` (was it written by `priorsmith fit`?)"),
        )
    })
}

pub fn get_str(file: &Path, v: &Value, key: &str) -> Result<String> {
    get(file, v, key)?
        .as_str()
        .map(str::to_string)
        .ok_or_else(|| {
            bad(
                file,
                key,
                format!(
                    "expected a string, found {}",
                    get(file, v, key).map(short).unwrap_or_default()
                ),
            )
        })
}

pub fn get_num(file: &Path, v: &Value, key: &str) -> Result<f64> {
    let x = get(file, v, key)?;
    number(x).ok_or_else(|| bad(file, key, format!("expected a number, found {}", short(x))))
}

/// A value shortened for an error message.
pub fn short(v: &Value) -> String {
    let s = v.to_string();
    if s.chars().count() > 60 {
        format!("{}…", s.chars().take(60).collect::<String>())
    } else {
        s
    }
}

fn verdict_words(code: &str) -> String {
    match code {
        "met_within_noise" => "met within noise".into(),
        "met_approximately" => "met approximately".into(),
        "not_met" => "not met".into(),
        other => other.replace('_', " "),
    }
}

/// Read and parse `path` (a fit.json).
pub fn read(path: &Path) -> Result<FitRecord> {
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
    parse(&text, path)
}

/// Parse fit.json text; `file` names it in errors.
pub fn parse(text: &str, file: &Path) -> Result<FitRecord> {
    let json: Value = serde_json::from_str(text).map_err(|e| {
        Error::input(
            Location {
                file: Some(file.to_path_buf()),
                line: Some(e.line()),
                key: None,
            },
            format!("not valid JSON: {e}"),
        )
    })?;
    if !json.is_object() {
        return Err(bad(file, "", "fit.json must hold a JSON object"));
    }
    let seed = get_num(file, &json, "seed")?;
    let draws = get_num(file, &json, "draws")?;
    let header = Header {
        title: get_str(file, &json, "title")?,
        template: get_str(file, &json, "template")?,
        tool_version: get_str(file, &json, "tool_version")?,
        spec_digest: get_str(file, &json, "spec_digest")?,
        seed: seed as u64,
        draws: draws as u64,
        verdict: verdict_words(&get_str(file, &json, "verdict")?),
        date: super::today(),
    };
    let prior = get(file, &json, "prior")?
        .as_array()
        .ok_or_else(|| bad(file, "prior", "expected an array of prior statements"))?;
    let mut items = Vec::new();
    for (k, st) in prior.iter().enumerate() {
        items.push(item(file, k, st)?);
    }
    Ok(FitRecord {
        file: file.to_path_buf(),
        header,
        items,
        json,
    })
}

fn item(file: &Path, k: usize, st: &Value) -> Result<Item> {
    let key = |s: &str| format!("prior[{k}].{s}");
    let parameter = st
        .get("parameter")
        .and_then(Value::as_str)
        .ok_or_else(|| {
            bad(
                file,
                &key("parameter"),
                "expected the parameter's name (a string)",
            )
        })?
        .to_string();
    let about = st
        .get("about")
        .and_then(Value::as_str)
        .unwrap_or_default()
        .to_string();
    if let Some(code) = st.get("code") {
        return supplied(file, &key("code"), parameter, about, code);
    }
    let fam_name = st.get("family").and_then(Value::as_str).ok_or_else(|| {
        bad(
            file,
            &key("family"),
            format!(
                "prior statement for `{parameter}` has neither a family nor template-supplied code"
            ),
        )
    })?;
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
    let pairs = st
        .get("params")
        .and_then(Value::as_array)
        .ok_or_else(|| bad(file, &key("params"), "expected [[name, value], ...]"))?;
    if pairs.len() != family.params.len() {
        return Err(bad(
            file,
            &key("params"),
            format!(
                "{fam_name} takes {} parameters ({}), found {}",
                family.params.len(),
                family.params.join(", "),
                pairs.len()
            ),
        ));
    }
    let mut params = Vec::new();
    for (j, (pair, want)) in pairs.iter().zip(family.params).enumerate() {
        let pk = format!("prior[{k}].params[{j}]");
        let name = pair.get(0).and_then(Value::as_str);
        let value = pair.get(1).and_then(number);
        match (name, value) {
            (Some(n), Some(v)) if n == *want => params.push(v),
            (Some(n), Some(_)) => {
                return Err(bad(
                    file,
                    &pk,
                    format!("{fam_name} expects `{want}` here, found `{n}`"),
                ))
            }
            _ => {
                return Err(bad(
                    file,
                    &pk,
                    format!("expected [\"{want}\", number], found {}", short(pair)),
                ))
            }
        }
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

fn supplied(
    file: &Path,
    key: &str,
    parameter: String,
    about: String,
    code: &Value,
) -> Result<Item> {
    let err = || {
        bad(
            file,
            key,
            "expected { <language> = { <section> = [lines] } }",
        )
    };
    let mut out = BTreeMap::new();
    for (lang, sections) in code.as_object().ok_or_else(err)? {
        let mut m = BTreeMap::new();
        for (sec, lines) in sections.as_object().ok_or_else(err)? {
            let v: Option<Vec<String>> = lines
                .as_array()
                .map(|a| a.iter().map(|l| l.as_str().map(str::to_string)).collect())
                .unwrap_or(None);
            m.insert(sec.clone(), v.ok_or_else(err)?);
        }
        out.insert(lang.clone(), m);
    }
    Ok(Item::Supplied(Supplied {
        parameter,
        about,
        code: out,
    }))
}

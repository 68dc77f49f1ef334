//! The input layer: the belief file as read ([`raw`] serde structures, the
//! [`SourceMap`] that finds the line of a key path) and [`Ctx`], the validation
//! helpers that templates and the design use to read their tables. It sits below
//! `templates`, `design` and `spec`: `spec` assembles a validated `Spec` from
//! these parts, and nothing here imports a layer above it.

pub mod raw;
pub mod source;

use crate::error::{choice_hint, Error, Location, Result};
use raw::RawSpec;
pub use source::{key, render, Seg, SourceMap};
use std::cell::RefCell;
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// A hyperparameter's value in the belief file.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum HyperValue {
    Fixed(f64),
    Free {
        lo: f64,
        hi: f64,
        start: Option<f64>,
    },
}

/// Validation context handed to templates: error helpers that know the source.
pub struct Ctx<'a> {
    pub file: Option<&'a Path>,
    pub map: &'a SourceMap,
    pub raw: &'a RawSpec,
    pub base_dir: PathBuf,
    /// The memory budget (`--max-memory`, MB; `None` = the default), which the
    /// readers of data files named by the spec count their cells against.
    pub max_memory_mb: Option<u64>,
    used_priors: RefCell<BTreeSet<String>>,
}

fn value_str(v: &toml::Value) -> String {
    match v {
        toml::Value::String(s) => format!("\"{s}\""),
        other => other.to_string(),
    }
}

/// Largest magnitude of a free hyperparameter's bound (far beyond any prior's
/// needs; wider bounds overflow the optimiser's map of (0, 1) onto them).
pub const MAX_BOUND: f64 = 1e15;

impl<'a> Ctx<'a> {
    /// A context over the parsed file `raw` (text located by `map`); relative
    /// paths resolve against the belief file's folder (the working folder for text).
    pub fn new(file: Option<&'a Path>, map: &'a SourceMap, raw: &'a RawSpec) -> Self {
        Self {
            file,
            map,
            raw,
            base_dir: file
                .and_then(Path::parent)
                .map(Path::to_path_buf)
                .unwrap_or_else(|| PathBuf::from(".")),
            max_memory_mb: None,
            used_priors: RefCell::new(BTreeSet::new()),
        }
    }

    /// The `[prior.*]` tables asked for so far ([`Ctx::prior_table`]).
    pub fn used_priors(&self) -> BTreeSet<String> {
        self.used_priors.borrow().clone()
    }

    pub fn err(&self, path: &[Seg], msg: impl Into<String>) -> Error {
        Error::input(
            Location {
                file: self.file.map(Path::to_path_buf),
                line: self.map.line_of(path),
                key: (!path.is_empty()).then(|| render(path)),
            },
            msg,
        )
    }

    /// A finite number (integer or float).
    pub fn num(&self, path: &[Seg], v: &toml::Value) -> Result<f64> {
        let x = self.num_ext(path, v)?;
        if !x.is_finite() {
            return Err(self.err(path, format!("value {x} must be a finite number")));
        }
        Ok(x)
    }

    /// A number that may be ±inf (NaN is never accepted).
    pub fn num_ext(&self, path: &[Seg], v: &toml::Value) -> Result<f64> {
        let x = match v {
            toml::Value::Integer(i) => *i as f64,
            toml::Value::Float(f) => *f,
            other => {
                return Err(self.err(
                    path,
                    format!(
                        "expected a number, found {} ({})",
                        value_str(other),
                        other.type_str()
                    ),
                ))
            }
        };
        if x.is_nan() {
            return Err(self.err(path, "value nan is not a number"));
        }
        Ok(x)
    }

    pub fn positive(&self, path: &[Seg], v: &toml::Value) -> Result<f64> {
        let x = self.num(path, v)?;
        if x <= 0.0 {
            return Err(self.err(path, format!("value {x} must be > 0")));
        }
        Ok(x)
    }

    /// A non-negative integer.
    pub fn count(&self, path: &[Seg], v: &toml::Value) -> Result<u64> {
        match v {
            toml::Value::Integer(i) if *i >= 0 => Ok(*i as u64),
            other => Err(self.err(
                path,
                format!("expected a whole number ≥ 0, found {}", value_str(other)),
            )),
        }
    }

    pub fn string<'v>(&self, path: &[Seg], v: &'v toml::Value) -> Result<&'v str> {
        v.as_str().ok_or_else(|| {
            self.err(
                path,
                format!(
                    "expected a string, found {} ({})",
                    value_str(v),
                    v.type_str()
                ),
            )
        })
    }

    /// Reject keys outside `allowed`, suggesting the nearest.
    pub fn check_keys(&self, path: &[Seg], table: &toml::Table, allowed: &[&str]) -> Result<()> {
        for k in table.keys() {
            if !allowed.contains(&k.as_str()) {
                let mut p = path.to_vec();
                p.push(key(k));
                return Err(self
                    .err(&p, format!("unknown key `{k}`"))
                    .with_hint(choice_hint(k, allowed)));
            }
        }
        Ok(())
    }

    /// The `[model]` table.
    pub fn model(&self) -> &toml::Table {
        static EMPTY: std::sync::OnceLock<toml::Table> = std::sync::OnceLock::new();
        self.raw
            .model
            .as_ref()
            .unwrap_or_else(|| EMPTY.get_or_init(toml::Table::new))
    }

    /// A hyperparameter: a number (fixed) or `{ fit = [lo, hi], start = x }` (free).
    pub fn hyper_value(&self, path: &[Seg], v: &toml::Value) -> Result<HyperValue> {
        match v {
            toml::Value::Table(t) => {
                self.check_keys(path, t, &["fit", "start"])?;
                let mut fp = path.to_vec();
                fp.push(key("fit"));
                let b = t.get("fit").ok_or_else(|| {
                    self.err(path, "a free hyperparameter needs `fit = [lower, upper]`")
                        .with_hint(
                            "write a number to fix it, or `{ fit = [lower, upper] }` to fit it",
                        )
                })?;
                let arr = b.as_array().filter(|a| a.len() == 2).ok_or_else(|| {
                    self.err(
                        &fp,
                        format!("expected [lower, upper], found {}", value_str(b)),
                    )
                })?;
                let mut lp = fp.clone();
                lp.push(Seg::Index(0));
                let mut hp = fp.clone();
                hp.push(Seg::Index(1));
                let lo = self.num(&lp, &arr[0])?;
                let hi = self.num(&hp, &arr[1])?;
                if lo >= hi {
                    return Err(self.err(
                        &fp,
                        format!("bounds [{lo}, {hi}]: the lower bound must be below the upper"),
                    ));
                }
                // The optimiser maps (0, 1) onto [lo, hi] linearly unless the bounds
                // are positive and span ≥ 100× (then on the log scale): hi − lo
                // must be a finite number.
                if !(hi - lo).is_finite() || lo.abs() > MAX_BOUND || hi.abs() > MAX_BOUND {
                    return Err(self
                        .err(
                            &fp,
                            format!(
                                "bounds [{lo:e}, {hi:e}] are too wide to search: each bound must lie within ±1e15"
                            ),
                        )
                        .with_hint("give the range you would accept for this hyperparameter, e.g. [-10, 10] for a location on the logit scale"));
                }
                let start = match t.get("start") {
                    Some(s) => {
                        let mut sp = path.to_vec();
                        sp.push(key("start"));
                        let x = self.num(&sp, s)?;
                        if !(x > lo && x < hi) {
                            return Err(self.err(
                                &sp,
                                format!(
                                    "start {x} must lie strictly inside the bounds [{lo}, {hi}]"
                                ),
                            ));
                        }
                        Some(x)
                    }
                    None => None,
                };
                Ok(HyperValue::Free { lo, hi, start })
            }
            other => Ok(HyperValue::Fixed(self.num(path, other)?)),
        }
    }

    /// Mark `[prior.name]` as used and return it, or a clear error when missing.
    pub fn prior_table(&self, name: &str, example: &str) -> Result<&'a toml::Table> {
        self.used_priors.borrow_mut().insert(name.to_string());
        self.raw.prior.get(name).ok_or_else(|| {
            self.err(
                &[key("prior")],
                format!("missing the prior table [prior.{name}]"),
            )
            .with_hint(format!("add\n  [prior.{name}]\n  {example}"))
        })
    }

    pub fn has_prior(&self, name: &str) -> bool {
        self.raw.prior.contains_key(name)
    }

    /// The `[profile.NAME]` table of a profile other than "reference", or an
    /// error at `path` naming the profiles there are.
    pub fn profile_table(&self, path: &[Seg], name: &str) -> Result<&'a toml::Table> {
        self.raw.profile.get(name).ok_or_else(|| {
            let mut names: Vec<&str> = self.raw.profile.keys().map(String::as_str).collect();
            names.push("reference");
            self.err(path, format!("unknown profile \"{name}\""))
                .with_hint(choice_hint(name, &names))
        })
    }

    /// Covariate values of a named profile; "reference" means every covariate 0.
    pub fn profile(&self, path: &[Seg], name: &str, covariates: &[String]) -> Result<Vec<f64>> {
        if name == "reference" {
            return Ok(vec![0.0; covariates.len()]);
        }
        let t = self.profile_table(path, name)?;
        let ppath = [key("profile"), key(name)];
        let allowed: Vec<&str> = covariates.iter().map(String::as_str).collect();
        for k in t.keys() {
            if !allowed.contains(&k.as_str()) {
                let mut p = ppath.to_vec();
                p.push(key(k));
                let msg = if allowed.is_empty() {
                    format!("profile \"{name}\" names covariate `{k}`, but the model declares no covariates")
                } else {
                    format!("profile \"{name}\" names covariate `{k}`, which the model does not declare")
                };
                return Err(self.err(&p, msg).with_hint(format!(
                    "declare it in [model] covariates, or use one of: {}",
                    if allowed.is_empty() {
                        "(none)".to_string()
                    } else {
                        allowed.join(", ")
                    }
                )));
            }
        }
        covariates
            .iter()
            .map(|c| match t.get(c) {
                Some(v) => {
                    let mut p = ppath.to_vec();
                    p.push(key(c));
                    self.num(&p, v)
                }
                None => Ok(0.0),
            })
            .collect()
    }

    /// Resolve a path relative to the belief file's folder.
    pub fn resolve(&self, p: &str) -> PathBuf {
        let pb = PathBuf::from(p);
        if pb.is_absolute() {
            pb
        } else {
            self.base_dir.join(pb)
        }
    }
}

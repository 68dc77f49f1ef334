//! `priorsmith._core`: the Python extension over the priorsmith library (PyO3).
//!
//! It calls the library, never the binary: a belief file is read from a path, a
//! TOML string or a dict of the same shape (`load_*`), validated into a
//! `Spec` ([`CoreSpec`]) and fitted with `priorsmith::fit::fit` into a
//! `FitResult` ([`CoreFit`]). The fit record crosses into Python as the same
//! JSON text `fit.json` holds (`fit::record::to_json`, exact round trip), the
//! fresh draws as little-endian f64 bytes (numpy reads them without a copy per
//! value). The Python package (`python/priorsmith/`) builds the user-facing
//! objects on top.
//!
//! Errors become the exception classes of `priorsmith.errors`, with the file,
//! line, key path and the bad value as attributes (for a string or a dict the
//! file is `<string>`; for a dict, whose lines are not the user's, no line).
//!
//! Interrupts: the fit runs on a scoped worker thread with the interpreter lock
//! released; the calling thread waits on it and every 50 ms takes the lock to
//! run `Python::check_signals`. On Ctrl-C (or any pending signal handler that
//! raises) it sets the fit's cancellation token (`priorsmith::cancel::Cancel`,
//! the one the command line sets on SIGINT), waits for the fit to wind down
//! (a few evaluations) and raises the handler's exception (KeyboardInterrupt).

use priorsmith::cancel::Cancel;
use priorsmith::error::{Error, Location};
use priorsmith::export::{self, Item, Lang};
use priorsmith::fit::FitResult;
use priorsmith::spec::{self, Overrides, Spec};
use priorsmith::{output, simulate};
use pyo3::exceptions::PyTypeError;
use pyo3::prelude::*;
use pyo3::types::{PyBool, PyBytes, PyDict, PyFloat, PyInt, PyList, PyString, PyTuple};
use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::Duration;

/// The file name errors give for beliefs passed as a string or a dict.
const STRING_FILE: &str = "<string>";

/// Where a belief file came from: errors and the spec.toml copy depend on it.
#[derive(Clone, Debug, PartialEq)]
enum Origin {
    Path(PathBuf),
    Text,
    Dict,
}

/// The source of one spec: its origin, its text and its parsed table (when it
/// parsed), for error values and the spec.toml copy.
#[derive(Clone)]
struct Source {
    origin: Origin,
    text: String,
    table: Option<toml::Table>,
}

impl Source {
    fn file(&self) -> PathBuf {
        match &self.origin {
            Origin::Path(p) => p.clone(),
            _ => PathBuf::from(STRING_FILE),
        }
    }
}

/// Split a rendered key path (`belief[2].quantiles."0.5"`, positions from 1)
/// into table keys and 0-based indices.
fn split_key(key: &str) -> Vec<Result<String, usize>> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut chars = key.chars().peekable();
    let mut quoted = false;
    while let Some(c) = chars.next() {
        match c {
            '"' => quoted = !quoted,
            '.' if !quoted => {
                if !cur.is_empty() {
                    out.push(Ok(std::mem::take(&mut cur)));
                }
            }
            '[' if !quoted => {
                if !cur.is_empty() {
                    out.push(Ok(std::mem::take(&mut cur)));
                }
                let mut n = String::new();
                for d in chars.by_ref() {
                    if d == ']' {
                        break;
                    }
                    n.push(d);
                }
                match n.parse::<usize>() {
                    Ok(i) if i >= 1 => out.push(Err(i - 1)),
                    _ => return Vec::new(),
                }
            }
            _ => cur.push(c),
        }
    }
    if !cur.is_empty() {
        out.push(Ok(cur));
    }
    out
}

/// The value at a rendered key path of `table`, as TOML text (None when the
/// path names no value, e.g. a missing key).
fn value_at(table: &toml::Table, key: &str) -> Option<String> {
    let segs = split_key(key);
    if segs.is_empty() {
        return None;
    }
    let mut v: Option<&toml::Value> = None;
    let mut t = Some(table);
    for s in segs {
        let next = match (s, v) {
            (Ok(k), None) => t?.get(&k),
            (Ok(k), Some(toml::Value::Table(tt))) => tt.get(&k),
            (Err(i), Some(toml::Value::Array(a))) => a.get(i),
            _ => None,
        };
        v = Some(next?);
        t = None;
    }
    let v = v?;
    Some(match v {
        toml::Value::String(s) => format!("\"{s}\""),
        toml::Value::Table(_) => {
            let s = toml::to_string(v).ok()?;
            // An inline rendering for a table: `{ a = 1, b = 2 }`.
            let parts: Vec<&str> = s.lines().filter(|l| !l.trim().is_empty()).collect();
            format!("{{ {} }}", parts.join(", "))
        }
        other => other.to_string(),
    })
}

/// Turn a library error into an exception of `priorsmith.errors`.
fn to_py(py: Python<'_>, e: Error, src: Option<&Source>) -> PyErr {
    let build = || -> PyResult<PyErr> {
        let errors = py.import("priorsmith.errors")?;
        let kw = PyDict::new(py);
        let (class, message) = match e {
            Error::Input { mut loc, msg, hint } => {
                if let Some(s) = src {
                    if loc.file.is_none() && loc.key.as_deref().is_none_or(|k| !k.starts_with("--"))
                    {
                        loc.file = Some(s.file());
                    }
                    if s.origin == Origin::Dict {
                        // Lines of the TOML we wrote from the dict mean nothing to the user.
                        loc.line = None;
                    }
                }
                let value = match (src.and_then(|s| s.table.as_ref()), &loc.key) {
                    (Some(t), Some(k)) => value_at(t, k),
                    _ => None,
                };
                let mut text = match (&loc.file, &loc.key) {
                    // Not about a file (an argument of the Python call, an export
                    // the language cannot state): no "<input>" placeholder.
                    (None, key) if key.as_deref().is_none_or(|k| !k.starts_with("--")) => {
                        let at = key
                            .as_ref()
                            .map(|k| format!("key `{k}`: "))
                            .unwrap_or_default();
                        let h = hint
                            .as_ref()
                            .map(|h| format!("\n  hint: {h}"))
                            .unwrap_or_default();
                        format!("{at}{msg}{h}")
                    }
                    _ => Error::Input {
                        loc: loc.clone(),
                        msg,
                        hint: hint.clone(),
                    }
                    .to_string(),
                };
                if let Some(v) = &value {
                    if !text.contains(v.as_str()) {
                        text.push_str(&format!("\n  value: {v}"));
                    }
                }
                kw.set_item("file", loc.file.as_ref().map(|f| f.display().to_string()))?;
                kw.set_item("line", loc.line)?;
                kw.set_item("key", loc.key.clone())?;
                kw.set_item("value", value)?;
                kw.set_item("hint", hint)?;
                ("BeliefFileError", text)
            }
            Error::Dist(d) => {
                kw.set_item("value", d.value.to_string())?;
                kw.set_item("key", format!("{}.{}", d.family, d.param))?;
                ("BeliefFileError", d.to_string())
            }
            Error::Io { path, source } => {
                let text = format!("{}: {source}", path.display());
                kw.set_item("file", path.display().to_string())?;
                ("FileAccessError", text)
            }
            Error::Limit(m) => ("ResourceLimitError", m),
            e @ Error::Numeric(_) => ("NumericalFailure", e.to_string()),
            e @ Error::Internal(_) => ("InternalFault", e.to_string()),
            Error::Cancelled => ("FitCancelled", "cancelled".to_string()),
        };
        let cls = errors.getattr(class)?;
        let exc = cls.call((message,), Some(&kw))?;
        Ok(PyErr::from_value(exc))
    };
    build().unwrap_or_else(|err| err)
}

/// A Python value (from a dict of the belief file's shape) as TOML.
fn to_toml(v: &Bound<'_, PyAny>, path: &str) -> PyResult<toml::Value> {
    let bad = |what: &str| {
        PyTypeError::new_err(format!(
            "{STRING_FILE}: key `{path}`: {what} cannot be written in a belief file \
             (use str, int, float, bool, list or dict)"
        ))
    };
    if v.is_instance_of::<PyBool>() {
        return Ok(toml::Value::Boolean(v.extract()?));
    }
    if v.is_instance_of::<PyInt>() {
        return match v.extract::<i64>() {
            Ok(i) => Ok(toml::Value::Integer(i)),
            Err(_) => Err(bad("an integer beyond 64 bits")),
        };
    }
    if v.is_instance_of::<PyFloat>() {
        return Ok(toml::Value::Float(v.extract()?));
    }
    if v.is_instance_of::<PyString>() {
        return Ok(toml::Value::String(v.extract()?));
    }
    if let Ok(d) = v.downcast::<PyDict>() {
        return Ok(toml::Value::Table(dict_to_table(d, path)?));
    }
    if v.is_instance_of::<PyList>() || v.is_instance_of::<PyTuple>() {
        let mut a = Vec::new();
        for (i, x) in v.try_iter()?.enumerate() {
            a.push(to_toml(&x?, &format!("{path}[{}]", i + 1))?);
        }
        return Ok(toml::Value::Array(a));
    }
    // numpy scalars and other numbers: accept anything float() accepts.
    if v.hasattr("__float__")? && !v.hasattr("__len__")? {
        let x: f64 = v.call_method0("__float__")?.extract()?;
        return Ok(toml::Value::Float(x));
    }
    Err(bad(&format!("a value of type {}", v.get_type().name()?)))
}

fn dict_to_table(d: &Bound<'_, PyDict>, path: &str) -> PyResult<toml::Table> {
    let mut t = toml::Table::new();
    for (k, v) in d.iter() {
        let k: String = k.extract().map_err(|_| {
            PyTypeError::new_err(format!(
                "{STRING_FILE}: key `{path}`: keys of a belief dict must be strings"
            ))
        })?;
        let p = if path.is_empty() {
            k.clone()
        } else {
            format!("{path}.{k}")
        };
        t.insert(k, to_toml(&v, &p)?);
    }
    Ok(t)
}

fn overrides(
    seed: Option<u64>,
    draws: Option<usize>,
    max_draws: Option<usize>,
    max_memory_mb: Option<u64>,
) -> Overrides {
    Overrides {
        seed,
        draws,
        max_draws,
        max_memory_mb,
        cancel: Cancel::new(),
    }
}

/// A validated belief file.
#[pyclass(module = "priorsmith._core", frozen)]
struct CoreSpec {
    spec: Spec,
    src: Source,
    seed: Option<u64>,
    draws: Option<usize>,
}

fn finish_load(py: Python<'_>, mut src: Source, ov: Overrides) -> PyResult<CoreSpec> {
    let file = src.file();
    let table = match spec::parse_table(&src.text, Some(&file)) {
        Ok(t) => t,
        Err(e) => return Err(to_py(py, e, Some(&src))),
    };
    src.table = Some(table.clone());
    let seed = ov.seed;
    let draws = ov.draws;
    let text = src.text.clone();
    let spec = py
        .allow_threads(|| spec::from_table(table, &text, Some(&file), &ov))
        .map_err(|e| to_py(py, e, Some(&src)))?;
    Ok(CoreSpec {
        spec,
        src,
        seed,
        draws,
    })
}

/// Read and validate the belief file at `path`.
#[pyfunction]
#[pyo3(signature = (path, seed=None, draws=None, max_draws=None, max_memory_mb=None))]
fn load_path(
    py: Python<'_>,
    path: PathBuf,
    seed: Option<u64>,
    draws: Option<usize>,
    max_draws: Option<usize>,
    max_memory_mb: Option<u64>,
) -> PyResult<CoreSpec> {
    let text = priorsmith::limits::read_text(&path, priorsmith::limits::TEXT_BYTES, "belief file")
        .map_err(|e| to_py(py, e, None))?;
    let src = Source {
        origin: Origin::Path(path),
        text,
        table: None,
    };
    finish_load(py, src, overrides(seed, draws, max_draws, max_memory_mb))
}

/// Validate belief-file text (TOML); errors name the file `<string>`.
#[pyfunction]
#[pyo3(signature = (text, seed=None, draws=None, max_draws=None, max_memory_mb=None))]
fn load_text(
    py: Python<'_>,
    text: String,
    seed: Option<u64>,
    draws: Option<usize>,
    max_draws: Option<usize>,
    max_memory_mb: Option<u64>,
) -> PyResult<CoreSpec> {
    let src = Source {
        origin: Origin::Text,
        text,
        table: None,
    };
    finish_load(py, src, overrides(seed, draws, max_draws, max_memory_mb))
}

/// Validate a dict of the belief file's shape; errors name `<string>` and the key path.
#[pyfunction]
#[pyo3(signature = (beliefs, seed=None, draws=None, max_draws=None, max_memory_mb=None))]
fn load_dict(
    py: Python<'_>,
    beliefs: &Bound<'_, PyDict>,
    seed: Option<u64>,
    draws: Option<usize>,
    max_draws: Option<usize>,
    max_memory_mb: Option<u64>,
) -> PyResult<CoreSpec> {
    let table = dict_to_table(beliefs, "")?;
    let text = toml::to_string(&table).map_err(|e| {
        PyTypeError::new_err(format!(
            "{STRING_FILE}: the dict cannot be written as TOML: {e}"
        ))
    })?;
    let src = Source {
        origin: Origin::Dict,
        text,
        table: None,
    };
    finish_load(py, src, overrides(seed, draws, max_draws, max_memory_mb))
}

#[pymethods]
impl CoreSpec {
    /// What `priorsmith check` prints, as a dict.
    fn summary<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        let s = &self.spec;
        let d = PyDict::new(py);
        d.set_item("title", &s.title)?;
        d.set_item("template", s.model.template())?;
        d.set_item("draws", s.draws)?;
        d.set_item("seed", s.seed)?;
        let hy = PyList::empty(py);
        for h in s.hypers() {
            let e = PyDict::new(py);
            e.set_item("name", &h.name)?;
            e.set_item("free", h.is_free())?;
            e.set_item("value", h.default_value())?;
            hy.append(e)?;
        }
        d.set_item("hyperparameters", hy)?;
        let bl = PyList::empty(py);
        for b in &s.beliefs {
            let e = PyDict::new(py);
            e.set_item("label", &b.label)?;
            e.set_item("stated_as", &b.stated_as)?;
            e.set_item("weight", b.weight)?;
            bl.append(e)?;
        }
        d.set_item("beliefs", bl)?;
        d.set_item("warnings", s.warnings.clone())?;
        Ok(d)
    }

    /// The quantities implied at the given hyperparameters (defaults for the
    /// rest), as the JSON text `priorsmith simulate --json` prints.
    #[pyo3(signature = (values=None))]
    fn simulate(&self, py: Python<'_>, values: Option<Vec<(String, f64)>>) -> PyResult<String> {
        let spec = &self.spec;
        let names: Vec<&str> = spec.hypers().iter().map(|x| x.name.as_str()).collect();
        let mut h: Vec<f64> = spec.hypers().iter().map(|x| x.default_value()).collect();
        let values = values.unwrap_or_default();
        for (k, v) in &values {
            let i = names.iter().position(|n| n == k).ok_or_else(|| {
                to_py(
                    py,
                    Error::input(
                        Location {
                            file: None,
                            line: None,
                            key: Some(k.clone()),
                        },
                        format!("unknown hyperparameter `{k}`"),
                    )
                    .with_hint(priorsmith::error::choice_hint(k, &names)),
                    None,
                )
            })?;
            h[i] = *v;
        }
        let run = || -> priorsmith::Result<String> {
            spec.model
                .simulate(&h, &spec.model.draw_base(100, &spec.plan()), &[], &mut [])?;
            let sums = simulate::summarise(spec, &h)?;
            let v = serde_json::json!({
                "hyperparameters": names.iter().zip(&h).map(|(n, v)| (n.to_string(), *v)).collect::<std::collections::BTreeMap<_, _>>(),
                "quantities": sums,
            });
            serde_json::to_string(&v).map_err(|e| Error::Internal(e.to_string()))
        };
        py.allow_threads(run)
            .map_err(|e| to_py(py, e, Some(&self.src)))
    }

    /// Fit the free hyperparameters (interpreter lock released; Ctrl-C cancels).
    #[pyo3(signature = (replicates=None))]
    fn fit(&self, py: Python<'_>, replicates: Option<usize>) -> PyResult<CoreFit> {
        let mut spec = self.spec.clone();
        if let Some(k) = replicates {
            if !(2..=100).contains(&k) {
                return Err(to_py(
                    py,
                    Error::input(
                        Location {
                            file: None,
                            line: None,
                            key: Some("replicates".into()),
                        },
                        format!("replicates = {k}: use between 2 and 100 seeds"),
                    ),
                    None,
                ));
            }
            spec.fit.replicates = k;
        }
        let cancel = Cancel::new();
        spec.fit.cancel = cancel.clone();
        let (tx, rx) = mpsc::channel();
        let spec = &spec;
        let outcome: Result<priorsmith::Result<FitResult>, PyErr> = py.allow_threads(move || {
            std::thread::scope(|s| {
                s.spawn(move || {
                    let _ = tx.send(priorsmith::fit::fit(spec, None));
                });
                let mut interrupt: Option<PyErr> = None;
                loop {
                    match rx.recv_timeout(Duration::from_millis(50)) {
                        Ok(r) => {
                            return match interrupt {
                                Some(e) => Err(e),
                                None => Ok(r),
                            }
                        }
                        Err(mpsc::RecvTimeoutError::Timeout) => {
                            if interrupt.is_none() {
                                if let Err(e) = Python::with_gil(|py| py.check_signals()) {
                                    cancel.cancel();
                                    interrupt = Some(e);
                                }
                            }
                        }
                        Err(mpsc::RecvTimeoutError::Disconnected) => {
                            return Ok(Err(Error::Internal(
                                "the fitting thread ended without a result".into(),
                            )))
                        }
                    }
                }
            })
        });
        let fit = outcome?.map_err(|e| to_py(py, e, Some(&self.src)))?;
        Ok(CoreFit {
            fit,
            src: self.src.clone(),
            seed: self.seed,
            draws: self.draws,
        })
    }
}

/// A finished fit.
#[pyclass(module = "priorsmith._core", frozen)]
struct CoreFit {
    fit: FitResult,
    src: Source,
    seed: Option<u64>,
    draws: Option<usize>,
}

fn lang(py: Python<'_>, to: &str) -> PyResult<Lang> {
    Lang::ALL
        .into_iter()
        .find(|l| l.name() == to.to_ascii_lowercase())
        .ok_or_else(|| {
            let names: Vec<&str> = Lang::ALL.iter().map(|l| l.name()).collect();
            to_py(
                py,
                Error::input(
                    Location {
                        file: None,
                        line: None,
                        key: Some("to".into()),
                    },
                    format!("unknown export language \"{to}\""),
                )
                .with_hint(priorsmith::error::choice_hint(to, &names)),
                None,
            )
        })
}

#[pymethods]
impl CoreFit {
    /// The fit record as the JSON text fit.json holds.
    fn record_json(&self, py: Python<'_>) -> PyResult<String> {
        priorsmith::fit::record::to_json(&self.fit).map_err(|e| to_py(py, e, None))
    }

    /// The fresh draws of each belief's quantity (belief order), f64 little-endian bytes.
    fn fresh_draws<'py>(&self, py: Python<'py>) -> Vec<Bound<'py, PyBytes>> {
        self.fit
            .draws_fresh
            .iter()
            .map(|d| {
                let b: Vec<u8> = d.iter().flat_map(|x| x.to_le_bytes()).collect();
                PyBytes::new(py, &b)
            })
            .collect()
    }

    /// Ready-to-paste code for `to` (stan, pymc, brms, json).
    #[pyo3(signature = (to, with_likelihood=false))]
    fn export(&self, py: Python<'_>, to: &str, with_likelihood: bool) -> PyResult<String> {
        let l = lang(py, to)?;
        let run = || -> priorsmith::Result<String> {
            let rec = export::record::from_fit(self.fit.clone(), Path::new("fit.json"))?;
            if with_likelihood {
                export::render_complete(&rec, l)
            } else {
                export::render(&rec, l)
            }
        };
        run().map_err(|e| to_py(py, e, None))
    }

    /// The PyMC forms of the prior statements, full precision: a list of
    /// dicts {parameter, class, kwargs, helper, note} for scalar priors and
    /// {parameter, code} for statements the template wrote itself.
    fn pymc_forms<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyList>> {
        let rec = export::record::from_fit(self.fit.clone(), Path::new("fit.json"))
            .map_err(|e| to_py(py, e, None))?;
        let out = PyList::empty(py);
        for it in &rec.items {
            let d = PyDict::new(py);
            d.set_item("parameter", it.parameter())?;
            match it {
                Item::Scalar(s) => {
                    let write = match &s.family.forms.pymc {
                        priorsmith::dist::forms::Form::Written(w) => w,
                        priorsmith::dist::forms::Form::Absent(why) => {
                            return Err(to_py(
                                py,
                                export::unsupported(format!(
                                    "prior for `{}`: family {} has no PyMC form: {why}",
                                    s.parameter, s.family.name
                                )),
                                None,
                            ))
                        }
                    };
                    let f = write(&priorsmith::dist::forms::Args {
                        name: &s.parameter,
                        values: &s.params,
                        num: export::num,
                    });
                    d.set_item("class", f.class)?;
                    let kw = PyDict::new(py);
                    for (k, v) in &f.kwargs {
                        kw.set_item(*k, *v)?;
                    }
                    d.set_item("kwargs", kw)?;
                    d.set_item("helper", f.helper)?;
                    d.set_item("note", f.note)?;
                }
                Item::Supplied(s) => {
                    let lines = s
                        .lines(Lang::Pymc, "model")
                        .map_err(|e| to_py(py, e, None))?;
                    d.set_item("code", lines.to_vec())?;
                }
            }
            out.append(d)?;
        }
        Ok(out)
    }

    /// Write the fit's folder as `priorsmith fit --out` does (fit.json,
    /// summary.txt, draws.csv, spec.toml, report.html, plots/), replacing
    /// `folder` as a whole; returns the previous files' folder, if any.
    fn write_report(&self, py: Python<'_>, folder: PathBuf) -> PyResult<Option<PathBuf>> {
        let run = || -> priorsmith::Result<Option<PathBuf>> {
            let stage = output::folder::Staging::begin(&folder)?;
            output::write_fit(stage.path(), &self.fit)?;
            output::write_atomic(
                &stage.path().join("spec.toml"),
                self.spec_copy(&folder)?.as_bytes(),
            )?;
            priorsmith::report::write(stage.path())?;
            stage.commit()
        };
        py.allow_threads(run).map_err(|e| to_py(py, e, None))
    }
}

impl CoreFit {
    /// The belief file as fitted, for `folder/spec.toml` (the report re-simulates
    /// from it): normalised, with relative data paths rewritten to resolve from
    /// `folder` when the beliefs came from a file.
    fn spec_copy(&self, folder: &Path) -> priorsmith::Result<String> {
        let mut table = match &self.src.table {
            Some(t) => t.clone(),
            None => spec::parse_table(&self.src.text, None)?,
        };
        let from = match &self.src.origin {
            Origin::Path(p) => spec::base_dir(Some(p)),
            _ => spec::base_dir(None),
        };
        spec::rebase_paths(&mut table, &from, folder);
        let body = toml::to_string(&table)
            .map_err(|e| Error::Internal(format!("writing spec.toml: {e}")))?;
        let what = match &self.src.origin {
            Origin::Path(p) => p.display().to_string(),
            Origin::Text => "TOML text given to Python".into(),
            Origin::Dict => "a dict given to Python".into(),
        };
        let mut over = Vec::new();
        if let Some(s) = self.seed {
            over.push(format!("seed={s}"));
        }
        if let Some(d) = self.draws {
            over.push(format!("draws={d}"));
        }
        let note = if over.is_empty() {
            String::new()
        } else {
            format!(
                "# Fitted with {} (fit.json records the seed and draws used).\n",
                over.join(", ")
            )
        };
        Ok(format!(
            "# The belief file fitted into this folder: {what} as parsed (comments dropped,\n\
             # data paths rewritten to resolve from here). `priorsmith fit` on this file\n\
             # refits it; `priorsmith conflict` reads it by default.\n{note}{body}"
        ))
    }
}

/// The version of the priorsmith library this extension was built with.
#[pyfunction]
fn library_version() -> &'static str {
    env!("CARGO_PKG_VERSION")
}

#[pymodule]
fn _core(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(load_path, m)?)?;
    m.add_function(wrap_pyfunction!(load_text, m)?)?;
    m.add_function(wrap_pyfunction!(load_dict, m)?)?;
    m.add_function(wrap_pyfunction!(library_version, m)?)?;
    m.add_class::<CoreSpec>()?;
    m.add_class::<CoreFit>()?;
    Ok(())
}

//! Belief files: TOML text → raw serde structures ([`raw`]) → a validated,
//! typed [`Spec`] that the fitting stage uses. The raw structures, the source map
//! and the validation context [`Ctx`] live in [`crate::input`] (below the
//! templates and the design, which read their tables through it); this module
//! assembles them and re-exports them for its callers. Every error names the file, the
//! line, the key path and the bad value, and suggests the nearest valid key or
//! name where one was misspelt.

pub mod belief;

use crate::discrepancy::Kind;
use crate::error::{choice_hint, nearest, Error, Location, Result};
pub use crate::input::{key, raw, render, source, Ctx, Seg, SourceMap};
use crate::target::Target;
use crate::templates::{self, Hyper, HyperValue, Model, Request};
use raw::RawSpec;
use sha2::Digest;
use std::path::{Path, PathBuf};
use std::sync::Arc;

/// Upper limit on draws unless raised deliberately (`--max-draws`); documented in
/// the README. 2,000,000 draws × a few quantities is a few hundred MB.
pub const MAX_DRAWS: usize = 2_000_000;
/// Draws of the first fit in precision mode (no `draws` given): 2¹³.
pub const DEFAULT_DRAWS: usize = 1 << 13;
/// Largest number of draws precision mode raises a fit to, unless `--max-draws`
/// is lower: 2¹⁸.
pub const PRECISION_MAX_DRAWS: usize = 1 << 18;
/// Default precision target: the Monte Carlo standard error of each determined
/// scale hyperparameter at most this fraction of its value.
pub const DEFAULT_PRECISION: f64 = 0.0015;
pub const DEFAULT_SEED: u64 = 1;

/// One validated belief: what quantity, at which profile, believed how.
#[derive(Debug, Clone)]
pub struct Belief {
    pub label: String,
    pub request: Request,
    pub target: Target,
    pub weight: f64,
    /// How the belief was stated, for reports ("quantiles (monotone interpolation)").
    pub stated_as: String,
}

/// Fitting options.
#[derive(Debug, Clone)]
pub struct FitOptions {
    pub discrepancy: Kind,
    /// Space-filling starts of the global stage.
    pub starts: usize,
    /// Local searches on the coarse draws, from the best screened starts.
    pub searches: usize,
    /// Largest root-mean-square CDF gap counted as "met approximately".
    pub tolerance: f64,
    /// How to choose among equally faithful priors (see `fit::pareto`).
    pub tie_break: TieBreak,
    pub replicates: usize,
    /// Reference values (index into the hyperparameters, value) that the secondary
    /// objective pulls towards; unlisted free ones are pulled towards their start or
    /// the centre of their bounds.
    pub reference: Vec<(usize, f64)>,
    /// Trace the held profiles of the identifiability analysis (for the report).
    /// Not a belief-file key: `batch` turns it off for lean model folders.
    pub profiles: bool,
    /// Trace the Pareto front of discrepancy against spread even when the
    /// tie-break is solved directly (`[fit] trace_front = true`).
    pub trace_front: bool,
    /// Estimate the Monte Carlo error of every hyperparameter (not a file key:
    /// lean batch folders skip it).
    pub mc_errors: bool,
    /// Polled before every evaluation (not a file key; see [`crate::cancel`]).
    pub cancel: crate::cancel::Cancel,
}

/// Most replicate refits `[fit] replicates` may ask for (each is a whole fit).
pub const MAX_REPLICATES: usize = 100;

/// Local searches of the global stage unless `[fit] searches` says otherwise.
/// Three: on the 60-row multi-endpoint demo and ten seeds of the relapse-free
/// demo a fourth changed no optimum and cost 13 % of the evaluations; a row of
/// that demo needs the third (tests/global_search.rs).
pub const DEFAULT_SEARCHES: usize = 3;

/// Tie-breaking between equally faithful priors.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum TieBreak {
    /// Trace the front and take the widest-within-noise point only when the
    /// beliefs leave a direction undetermined (default).
    Auto,
    Off,
    Widest,
    Knee,
    /// A fixed weight κ of the secondary objective, in noise floors.
    Kappa(f64),
}

impl TieBreak {
    pub const NAMES: [&'static str; 4] = ["auto", "off", "widest", "knee"];
}

/// A validated belief file.
#[derive(Clone)]
pub struct Spec {
    pub title: String,
    pub path: Option<PathBuf>,
    pub digest: String,
    pub model: Arc<dyn Model>,
    pub draws: usize,
    pub seed: u64,
    /// How the fitting draws are generated (`[simulation] points`).
    pub points: crate::rng::Points,
    /// Precision mode: raise the draws until every determined hyperparameter's
    /// Monte Carlo error meets the target (`None` when `draws` was given).
    pub precision: Option<Precision>,
    pub beliefs: Vec<Belief>,
    pub fit: FitOptions,
    /// Beliefs the template cannot meet at any hyperparameters, with remedies
    /// ([`Model::warnings`]); `check` and `fit` print them.
    pub warnings: Vec<String>,
}

/// Precision mode's target and cap (see `fit::precision`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Precision {
    /// Largest relative Monte Carlo standard error of a determined scale
    /// hyperparameter (a location one: a tenth of its δ*, at most 0.005 on the
    /// optimiser's scale).
    pub relative: f64,
    /// Largest number of draws to raise to.
    pub max_draws: usize,
}

impl std::fmt::Debug for Spec {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Spec")
            .field("title", &self.title)
            .field("template", &self.model.template())
            .field("draws", &self.draws)
            .field("seed", &self.seed)
            .finish()
    }
}

impl Spec {
    pub fn hypers(&self) -> &[Hyper] {
        self.model.hypers()
    }
    /// The plan of the fitting draws.
    pub fn plan(&self) -> crate::rng::Plan {
        crate::rng::Plan::fit(self.seed, self.points)
    }
    pub fn free(&self) -> Vec<usize> {
        self.hypers()
            .iter()
            .enumerate()
            .filter(|(_, h)| matches!(h.value, HyperValue::Free { .. }))
            .map(|(i, _)| i)
            .collect()
    }
}

/// Options that come from the command line rather than the file.
#[derive(Debug, Clone, Default)]
pub struct Overrides {
    pub seed: Option<u64>,
    pub draws: Option<usize>,
    pub max_draws: Option<usize>,
    /// Working-memory budget in MB (None: [`crate::limits::DEFAULT_MAX_MEMORY_MB`]).
    pub max_memory_mb: Option<u64>,
    /// Cancellation token handed to the fit ([`FitOptions::cancel`]).
    pub cancel: crate::cancel::Cancel,
}

/// Turn a toml/serde error into ours, with a "did you mean" for unknown keys.
fn parse_error(file: Option<&Path>, e: toml::de::Error, text: &str) -> Error {
    let msg = e.message().to_string();
    let line = e
        .span()
        .map(|s| text[..s.start.min(text.len())].matches('\n').count() + 1);
    let mut hint = None;
    // serde: "unknown field `x`, expected one of `a`, `b`" / "expected `a` or `b`"
    if let Some(rest) = msg.strip_prefix("unknown field `") {
        if let Some((bad, tail)) = rest.split_once('`') {
            let valid: Vec<&str> = tail.split('`').skip(1).step_by(2).collect();
            hint = Some(match nearest(bad, valid.iter().copied()) {
                Some(n) => format!("did you mean `{n}`?"),
                None => format!("valid keys: {}", valid.join(", ")),
            });
        }
    }
    let snippet = line
        .and_then(|l| text.lines().nth(l - 1))
        .map(|s| format!("\n  | {s}"))
        .unwrap_or_default();
    Error::Input {
        loc: Location {
            file: file.map(Path::to_path_buf),
            line,
            key: None,
        },
        msg: format!("{msg}{snippet}"),
        hint,
    }
}

/// Read and validate a belief file from disk.
pub fn load(path: &Path, ov: &Overrides) -> Result<Spec> {
    let text = crate::limits::read_text(path, crate::limits::TEXT_BYTES, "belief file")?;
    parse(&text, Some(path), ov)
}

/// Parse TOML text into a table (errors carry the line).
pub fn parse_table(text: &str, file: Option<&Path>) -> Result<toml::Table> {
    toml::from_str::<toml::Table>(text).map_err(|e| parse_error(file, e, text))
}

/// Validate belief-file text.
pub fn parse(text: &str, file: Option<&Path>, ov: &Overrides) -> Result<Spec> {
    let table = parse_table(text, file)?;
    from_table(table, text, file, ov)
}

/// The `[simulation]` section with the command line's overrides.
struct Simulation {
    draws: usize,
    points: crate::rng::Points,
    precision: Option<Precision>,
    seed: u64,
}

/// Validate `[simulation]`: draws (or precision mode), points, seed.
fn simulation(ctx: &Ctx, raw: &RawSpec, ov: &Overrides) -> Result<Simulation> {
    let sim = raw.simulation.as_ref();
    let sp = |k: &str| [key("simulation"), key(k)];
    let mut draws = match sim.and_then(|s| s.draws.as_ref()) {
        Some(v) => ctx.count(&sp("draws"), v)? as usize,
        None => DEFAULT_DRAWS,
    };
    let explicit = sim.and_then(|s| s.draws.as_ref()).is_some() || ov.draws.is_some();
    if let Some(d) = ov.draws {
        draws = d;
    }
    let cap = ov.max_draws.unwrap_or(MAX_DRAWS);
    let points = match sim.and_then(|s| s.points.as_deref()) {
        Some(s) => crate::rng::Points::parse(s).ok_or_else(|| {
            ctx.err(&sp("points"), format!("unknown points \"{s}\""))
                .with_hint(choice_hint(s, &crate::rng::Points::NAMES))
        })?,
        None => crate::rng::Points::ScrambledSobol,
    };
    let precision = match sim.and_then(|s| s.precision.as_ref()) {
        Some(_) if explicit => {
            return Err(ctx
                .err(
                    &sp("precision"),
                    "`precision` chooses the draws itself: give it or `draws`, not both",
                )
                .with_hint("remove `draws` (and --draws) to let precision mode choose them"))
        }
        Some(v) => {
            let r = ctx.positive(&sp("precision"), v)?;
            if !(1e-5..=0.1).contains(&r) {
                return Err(ctx.err(
                    &sp("precision"),
                    format!("precision = {r} must be between 0.00001 and 0.1 (a relative standard error)"),
                ));
            }
            Some(r)
        }
        None if explicit => None,
        None => Some(DEFAULT_PRECISION),
    };
    let precision = precision.map(|relative| Precision {
        relative,
        max_draws: cap.min(PRECISION_MAX_DRAWS).max(draws),
    });
    if precision.is_some() && cap < draws {
        draws = cap;
    }
    if draws < 100 {
        return Err(ctx
            .err(
                &sp("draws"),
                format!("draws = {draws} is too few to judge a fit"),
            )
            .with_hint("use at least 100; 10,000–50,000 is typical"));
    }
    if draws > cap {
        // A resource limit (exit 5), blamed on where the value came from.
        let mb = draws as f64 * 8.0 * 12.0 / 1e6;
        let what = format!(
            "{draws} draws exceed the limit of {cap} (about {mb:.0} MB of working memory)\n  \
             hint: lower it, or raise the limit deliberately with --max-draws"
        );
        return Err(Error::Limit(match ov.draws {
            Some(_) => format!("option `--draws`: {what}"),
            None => match ctx.err(&sp("draws"), "") {
                Error::Input { loc, .. } => format!("{loc}: {what}"),
                other => format!("{other}: {what}"),
            },
        }));
    }
    let seed = match (ov.seed, sim.and_then(|s| s.seed.as_ref())) {
        (Some(s), _) => s,
        (None, Some(v)) => ctx.count(&sp("seed"), v)?,
        (None, None) => DEFAULT_SEED,
    };

    Ok(Simulation {
        draws,
        points,
        precision,
        seed,
    })
}

/// Validate `[fit]` against the model's hyperparameters.
fn fit_options(ctx: &Ctx, raw: &RawSpec, model: &dyn Model, ov: &Overrides) -> Result<FitOptions> {
    let f = raw.fit.as_ref();
    let fp = |k: &str| [key("fit"), key(k)];
    let discrepancy = match f.and_then(|f| f.discrepancy.as_deref()) {
        Some(s) => Kind::parse(s).ok_or_else(|| {
            ctx.err(&fp("discrepancy"), format!("unknown discrepancy \"{s}\""))
                .with_hint(choice_hint(s, &Kind::NAMES))
        })?,
        None => Kind::CramerVonMises,
    };
    // A whole number in [1, hi] under [fit] `name`, or `default` when absent.
    let bounded =
        |name: &str, v: Option<&toml::Value>, hi: usize, default: usize| -> Result<usize> {
            let Some(v) = v else {
                return Ok(default);
            };
            let n = ctx.count(&fp(name), v)? as usize;
            if !(1..=hi).contains(&n) {
                return Err(ctx.err(
                    &fp(name),
                    format!("{name} = {n} must be between 1 and {hi}"),
                ));
            }
            Ok(n)
        };
    let starts = bounded("starts", f.and_then(|f| f.starts.as_ref()), 10_000, 0)?;
    let searches = bounded(
        "searches",
        f.and_then(|f| f.searches.as_ref()),
        64,
        DEFAULT_SEARCHES,
    )?;
    let tolerance = match f.and_then(|f| f.tolerance.as_ref()) {
        Some(v) => {
            let t = ctx.positive(&fp("tolerance"), v)?;
            if t >= 0.5 {
                return Err(ctx.err(
                    &fp("tolerance"),
                    format!("tolerance {t} must be below 0.5 (it is a CDF gap)"),
                ));
            }
            t
        }
        None => 0.02,
    };
    let tie_break = match f.and_then(|f| f.tie_break.as_ref()) {
        Some(toml::Value::String(t)) => match t.as_str() {
            "auto" => TieBreak::Auto,
            "off" => TieBreak::Off,
            "widest" => TieBreak::Widest,
            "knee" => TieBreak::Knee,
            other => {
                return Err(ctx
                    .err(&fp("tie_break"), format!("unknown tie_break \"{other}\""))
                    .with_hint(format!(
                        "{}; or a number κ ≥ 0",
                        choice_hint(other, &TieBreak::NAMES)
                    )))
            }
        },
        Some(v) => {
            let k = ctx.num(&fp("tie_break"), v)?;
            if k < 0.0 {
                return Err(ctx.err(&fp("tie_break"), format!("tie_break {k} must be ≥ 0")));
            }
            TieBreak::Kappa(k)
        }
        None => TieBreak::Auto,
    };
    let trace_front = match f.and_then(|f| f.trace_front.as_ref()) {
        Some(toml::Value::Boolean(b)) => *b,
        Some(v) => {
            return Err(ctx.err(
                &fp("trace_front"),
                format!("trace_front must be true or false, not {v}"),
            ))
        }
        None => false,
    };
    let replicates = match f.and_then(|f| f.replicates.as_ref()) {
        Some(v) => {
            let n = ctx.count(&fp("replicates"), v)?;
            if n > MAX_REPLICATES as u64 {
                return Err(ctx.err(
                    &fp("replicates"),
                    format!("replicates = {n} must be between 0 and {MAX_REPLICATES} (each is a whole refit)"),
                ));
            }
            n as usize
        }
        None => 0,
    };

    let mut reference = Vec::new();
    if let Some(t) = f.and_then(|f| f.reference.as_ref()) {
        let names: Vec<&str> = model.hypers().iter().map(|h| h.name.as_str()).collect();
        for (k, v) in t {
            let p = [key("fit"), key("reference"), key(k)];
            let i = names.iter().position(|n| n == k).ok_or_else(|| {
                ctx.err(&p, format!("unknown hyperparameter `{k}`"))
                    .with_hint(choice_hint(k, &names))
            })?;
            let x = ctx.num(&p, v)?;
            if let HyperValue::Free { lo, hi, .. } = model.hypers()[i].value {
                if !(x > lo && x < hi) {
                    return Err(ctx.err(
                        &p,
                        format!("reference {x} must lie inside the bounds [{lo}, {hi}]"),
                    ));
                }
                reference.push((i, x));
            } else {
                return Err(ctx.err(
                    &p,
                    format!("`{k}` is fixed; a reference applies only to free hyperparameters"),
                ));
            }
        }
    }

    Ok(FitOptions {
        discrepancy,
        starts,
        searches,
        tolerance,
        tie_break,
        replicates,
        reference,
        profiles: true,
        trace_front,
        mc_errors: true,
        cancel: ov.cancel.clone(),
    })
}

/// SHA-256 of a belief file's normalised table: the `spec_digest` that ties a
/// fit record to the file it was fitted from. Each data file the table names
/// (`[design] file`, `historical.data`) enters by the SHA-256 of its contents,
/// read relative to `base_dir` (the belief file's folder), not by the text of
/// its path: the digest survives moving the files together and rewriting the
/// paths ([`rebase_paths`]), and changes when a data file changes. A file that
/// cannot be read enters by its path text (validation reports it).
pub fn digest(table: &toml::Table, base_dir: &Path) -> String {
    let mut t = table.clone();
    for_each_path(&mut t, &mut |v| {
        if let toml::Value::String(p) = v {
            // Streamed and capped: a device named as a data file costs no memory.
            if let Some(h) =
                crate::limits::sha256_capped(&base_dir.join(&*p), crate::limits::TABLE_BYTES)
            {
                *v = toml::Value::String(format!("data file sha256 {h}"));
            }
        }
    });
    let mut d = sha2::Sha256::new();
    d.update(toml::to_string(&t).unwrap_or_default().as_bytes());
    format!("{:x}", d.finalize())
}

/// The folder relative paths of a belief file resolve against: its own folder
/// (the working folder for text without a file).
pub fn base_dir(file: Option<&Path>) -> PathBuf {
    match file.and_then(Path::parent) {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// Call `f` on every value of `table` that holds a data file's path:
/// `[design] file`, and `historical.data` of each belief and of each expert.
pub fn for_each_path(table: &mut toml::Table, f: &mut dyn FnMut(&mut toml::Value)) {
    if let Some(v) = table
        .get_mut("design")
        .and_then(toml::Value::as_table_mut)
        .and_then(|d| d.get_mut("file"))
    {
        f(v);
    }
    let hist = |t: &mut toml::Table, f: &mut dyn FnMut(&mut toml::Value)| {
        if let Some(v) = t
            .get_mut("historical")
            .and_then(toml::Value::as_table_mut)
            .and_then(|h| h.get_mut("data"))
        {
            f(v);
        }
    };
    if let Some(bs) = table.get_mut("belief").and_then(toml::Value::as_array_mut) {
        for b in bs.iter_mut().filter_map(toml::Value::as_table_mut) {
            hist(b, f);
            if let Some(es) = b.get_mut("experts").and_then(toml::Value::as_array_mut) {
                for e in es.iter_mut().filter_map(toml::Value::as_table_mut) {
                    hist(e, f);
                }
            }
        }
    }
}

/// Rewrite the relative data-file paths of a belief file read from folder
/// `from` so that they resolve from folder `to` (where a copy of it is written):
/// relative to `to` when both folders' absolute forms share a root, else absolute.
pub fn rebase_paths(table: &mut toml::Table, from: &Path, to: &Path) {
    let abs = |p: &Path| std::path::absolute(p).unwrap_or_else(|_| p.to_path_buf());
    let (from, to) = (abs(from), abs(to));
    for_each_path(table, &mut |v| {
        if let toml::Value::String(p) = v {
            if Path::new(&*p).is_absolute() {
                return;
            }
            let target = normalise(&from.join(&*p));
            *v = toml::Value::String(
                relative_to(&target, &normalise(&to))
                    .unwrap_or(target)
                    .to_string_lossy()
                    .into_owned(),
            );
        }
    });
}

/// `p` without `.` and with `x/..` folded (lexically; symbolic links are not read).
fn normalise(p: &Path) -> PathBuf {
    use std::path::Component;
    let mut out = PathBuf::new();
    for c in p.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                if !out.pop() {
                    out.push("..");
                }
            }
            other => out.push(other.as_os_str()),
        }
    }
    out
}

/// `target` relative to the folder `dir` (both absolute and normalised).
fn relative_to(target: &Path, dir: &Path) -> Option<PathBuf> {
    let t: Vec<_> = target.components().collect();
    let d: Vec<_> = dir.components().collect();
    if t.first() != d.first() {
        return None;
    }
    let common = t.iter().zip(&d).take_while(|(a, b)| a == b).count();
    let mut out = PathBuf::new();
    for _ in common..d.len() {
        out.push("..");
    }
    for c in &t[common..] {
        out.push(c.as_os_str());
    }
    Some(out)
}

/// Validate an already-parsed table (`text` is used for line numbers and the digest).
pub fn from_table(
    table: toml::Table,
    text: &str,
    file: Option<&Path>,
    ov: &Overrides,
) -> Result<Spec> {
    let raw: RawSpec =
        toml::Value::Table(table.clone())
            .try_into()
            .map_err(|e: toml::de::Error| {
                // Re-run on the text for a line number when the table came from it.
                match toml::from_str::<RawSpec>(text) {
                    Err(e2) => parse_error(file, e2, text),
                    Ok(_) => parse_error(file, e, text),
                }
            })?;
    let map = SourceMap::new(text);
    let mut ctx = Ctx::new(file, &map, &raw);
    ctx.max_memory_mb = ov.max_memory_mb;
    let digest = digest(&table, &ctx.base_dir);

    let Simulation {
        draws,
        points,
        precision,
        seed,
    } = simulation(&ctx, &raw, ov)?;

    // [model]
    let template = match ctx.model().get("template") {
        Some(v) => ctx.string(&[key("model"), key("template")], v)?.to_string(),
        None => {
            return Err(ctx
                .err(&[key("model")], "missing `template` in [model]")
                .with_hint(format!(
                    "valid templates: {}",
                    templates::names().join(", ")
                )))
        }
    };
    let info = templates::find(&template).ok_or_else(|| {
        ctx.err(
            &[key("model"), key("template")],
            format!("unknown template \"{template}\""),
        )
        .with_hint(choice_hint(&template, &templates::names()))
    })?;
    let mut model = (info.build)(&ctx)?;

    // Every [prior.*] table must belong to a parameter of the template.
    let used = ctx.used_priors();
    for name in raw.prior.keys() {
        if !used.contains(name) {
            let used_ref: Vec<&str> = used.iter().map(String::as_str).collect();
            return Err(ctx
                .err(
                    &[key("prior"), key(name)],
                    format!("[prior.{name}] is not a parameter of template {template}"),
                )
                .with_hint(choice_hint(name, &used_ref)));
        }
    }

    // [[belief]]
    if raw.belief.is_empty() {
        return Err(ctx
            .err(&[], "no [[belief]] tables: nothing to match")
            .with_hint(format!(
                "add at least one, e.g.\n  [[belief]]\n  quantity = \"{}\"\n  distribution = {{ family = \"beta\", alpha = 2, beta = 5 }}",
                info.quantities.first().map(|q| q.name).unwrap_or("…")
            )));
    }
    if raw.belief.len() > crate::limits::MAX_BELIEFS {
        return Err(ctx
            .err(
                &[key("belief"), Seg::Index(crate::limits::MAX_BELIEFS)],
                format!(
                    "{} [[belief]] tables: at most {} are read",
                    raw.belief.len(),
                    crate::limits::MAX_BELIEFS
                ),
            )
            .with_hint("each belief is tabulated and matched on every evaluation; pool experts' views of one quantity with `experts = [...]`, or split the file into a batch"));
    }
    let mut beliefs = Vec::new();
    for (i, rb) in raw.belief.iter().enumerate() {
        beliefs.push(belief::validate(&ctx, &*model, info, i, rb)?);
    }
    // The model prepares for every request together (e.g. which design products
    // the base draws compute), once, before anything draws.
    let requests: Vec<&Request> = beliefs.iter().map(|b: &Belief| &b.request).collect();
    model.prepare(&requests)?;
    let pairs: Vec<(&Request, &Target)> = beliefs.iter().map(|b| (&b.request, &b.target)).collect();
    let warnings = model.warnings(&pairs);
    let model: Arc<dyn Model> = Arc::from(model);

    // Working memory, now that the model is prepared for the beliefs.
    let (need, what) = model.working_bytes(draws);
    let budget = crate::limits::budget_mb(ov.max_memory_mb);
    if need > crate::limits::bytes(budget) {
        return Err(Error::Limit(format!(
            "{}: {what} (template {template}) need about {} MB of working memory, \
             over the limit of {} MB; lower `draws` in [simulation]\n  hint: {}",
            file.map_or("<input>".to_string(), |f| f.display().to_string()),
            crate::limits::mb(need),
            budget,
            crate::limits::hint(budget)
        )));
    }

    // Precision mode raises the draws only as far as the memory budget allows.
    let precision = precision.map(|mut p| {
        while p.max_draws > draws
            && model.working_bytes(p.max_draws).0 > crate::limits::bytes(budget)
        {
            p.max_draws = (p.max_draws / 2).max(draws);
        }
        p
    });

    let fit = fit_options(&ctx, &raw, &*model, ov)?;

    Ok(Spec {
        title: raw.title.clone().unwrap_or_else(|| "untitled".to_string()),
        path: file.map(Path::to_path_buf),
        digest,
        model,
        draws,
        seed,
        points,
        precision,
        beliefs,
        fit,
        warnings,
    })
}

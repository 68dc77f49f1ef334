//! Batches of many models: one base belief file and a table whose rows change it
//! (see [`table`] for the column addressing). Each row is validated and fitted
//! independently, in parallel (rayon), with that row's own seed, so a row's
//! result does not depend on the other rows, the thread count or the shard.
//!
//! Nothing lost: every finished row is committed on its own, atomically, under
//! the output folder — `models/<id>/` (fit.json, summary.txt, draws.csv,
//! spec.toml, via [`crate::output::write_fit`]) and then the row record
//! `rows/<row>.json`, written last. A record carries a digest of everything that
//! determines the row's result (its id, the changed TOML table, the draws
//! overrides, the tool version); a rerun skips rows whose record is `ok` with a
//! matching digest and redoes the others (failed rows are tried again). The
//! combined tables are assembled from the records in row order at the end, so a
//! killed and resumed batch gives the same `results.csv` as an uninterrupted one.
//! Wall times differ from run to run and live in `timings.csv` only.
//!
//! Shards: `shard = (i, n)` runs the i-th of n contiguous slices of the rows
//! (rows ⌊(i−1)N/n⌋+1 … ⌊iN/n⌋); [`merge`] assembles the records of several
//! shard folders (or of one shared folder) into the same tables.

pub mod table;
mod tables;

pub use tables::{assemble, merge};

use crate::error::{Error, Location, Result};
use crate::fit;
use crate::output::{self, write_atomic};
use crate::spec::{self, Overrides};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use sha2::Digest;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::time::Instant;
pub use table::Table;

/// One planned row: the changed TOML table, or why it could not be built.
#[derive(Debug, Clone)]
pub struct PlannedRow {
    pub number: usize,
    pub line: u64,
    pub id: String,
    /// The base table with the row's cells applied, with the key path (as the
    /// belief-file validator renders it) and the cell of each applied column.
    pub table: std::result::Result<toml::Table, String>,
    pub applied: Vec<(String, String, String)>,
    pub digest: String,
}

/// A batch: the base file, the table, and every row's changed TOML.
#[derive(Debug, Clone)]
pub struct Plan {
    pub base_path: PathBuf,
    pub base_text: String,
    pub table_path: PathBuf,
    pub overrides: Overrides,
    pub rows: Vec<PlannedRow>,
}

/// What a finished (or failed) row leaves behind: `rows/<row>.json`.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct RowRecord {
    pub row: usize,
    pub id: String,
    pub digest: String,
    pub status: RowStatus,
    /// Hyperparameter columns, (name, value as written in results.csv).
    pub hyperparameters: Vec<(String, String)>,
    /// Other result columns: discrepancies, verdicts, evaluations.
    pub stats: Vec<(String, String)>,
    pub reason: Option<String>,
    /// Where an error row failed: validating its spec or fitting it.
    pub stage: Option<RowStage>,
    pub wall_time_s: f64,
}

/// How a row ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum RowStatus {
    Ok,
    Error,
}

/// Where an error row failed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum RowStage {
    /// Applying the row's changes and validating the spec.
    Input,
    /// Fitting.
    Fit,
}

impl RowStage {
    pub fn name(&self) -> &'static str {
        match self {
            RowStage::Input => "input",
            RowStage::Fit => "fit",
        }
    }
}

/// Options of a run.
#[derive(Debug, Clone, Default)]
pub struct RunOptions {
    /// (i, n), 1 ≤ i ≤ n.
    pub shard: Option<(usize, usize)>,
    /// What each model folder holds.
    pub model_files: ModelFiles,
    /// Test hook: abort the process (as a crash would) once this many rows
    /// have been fitted and committed in this run. The command line sets it
    /// from the environment variable `PRIORSMITH_TEST_ABORT_AFTER_ROWS`.
    pub abort_after: Option<usize>,
}

/// What `models/<id>/` holds. The fitted numbers are the same either way.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub enum ModelFiles {
    /// fit.json (without held profiles) and summary.txt, plus spec.toml: about
    /// 80 KB a model. `fit` on spec.toml reproduces the row with everything.
    #[default]
    Lean,
    /// Everything `fit` writes: fit.json with the held profiles, summary.txt,
    /// draws.csv (about 0.6 MB at 10,000 draws), so `report` runs on the folder.
    Full,
}

impl ModelFiles {
    pub const NAMES: [&'static str; 2] = ["lean", "full"];

    pub fn parse(s: &str) -> Option<Self> {
        match s {
            "lean" => Some(ModelFiles::Lean),
            "full" => Some(ModelFiles::Full),
            _ => None,
        }
    }
}

/// Where a run stands, for progress displays: rows done of the shard's total,
/// and among them rows found done earlier, rows judged "not met", rows failed.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Tally {
    pub done: usize,
    pub total: usize,
    pub skipped: usize,
    pub not_met: usize,
    pub failed: usize,
}

/// Whether a row's record says its fit is "not met".
pub fn row_not_met(rec: &RowRecord) -> bool {
    rec.status == RowStatus::Ok
        && rec
            .stats
            .iter()
            .any(|(k, v)| k == "verdict" && v == crate::fit::Verdict::NotMet.words())
}

/// Summary of a run.
#[derive(Debug, Clone, Default)]
pub struct RunReport {
    pub rows: usize,
    pub fitted: usize,
    pub skipped: usize,
    pub failed: usize,
    /// Rows fitted (now or earlier) whose verdict is "not met".
    pub not_met: usize,
    /// Ids of those rows, in table order.
    pub not_met_ids: Vec<String>,
    /// Files written at the end (relative names).
    pub tables: Vec<String>,
}

fn sha(parts: &[&str]) -> String {
    let mut h = sha2::Sha256::new();
    for p in parts {
        h.update(p.as_bytes());
        h.update([0u8]);
    }
    format!("{:x}", h.finalize())
}

/// Parse "i/n".
pub fn parse_shard(s: &str) -> std::result::Result<(usize, usize), String> {
    let (a, b) = s
        .split_once('/')
        .ok_or_else(|| format!("--shard {s}: expected i/n, e.g. 2/4"))?;
    let i: usize = a
        .trim()
        .parse()
        .map_err(|_| format!("--shard {s}: `{a}` is not a whole number"))?;
    let n: usize = b
        .trim()
        .parse()
        .map_err(|_| format!("--shard {s}: `{b}` is not a whole number"))?;
    if n == 0 || i == 0 || i > n {
        return Err(format!("--shard {s}: need 1 ≤ i ≤ n"));
    }
    Ok((i, n))
}

/// The 0-based row indices of shard (i, n) of `total` rows.
pub fn shard_range(total: usize, shard: Option<(usize, usize)>) -> std::ops::Range<usize> {
    match shard {
        None => 0..total,
        Some((i, n)) => ((i - 1) * total / n)..(i * total / n),
    }
}

/// Read the base file and the table and apply every row (no validation yet).
pub fn plan(base_path: &Path, table_path: &Path, ov: &Overrides) -> Result<Plan> {
    let base_text =
        crate::limits::read_text(base_path, crate::limits::TEXT_BYTES, "base belief file")?;
    let base = spec::parse_table(&base_text, Some(base_path))?;
    let t = table::read(table_path)?;
    let budget = crate::limits::budget_mb(ov.max_memory_mb);
    let cap = crate::limits::max_batch_rows(budget);
    if t.rows.len() > cap {
        // Each planned row holds a parsed copy of the base file until it runs:
        // about 16 bytes per byte of its text (TOML nodes, keys, strings), at least 4 kB.
        let per_row = (16 * base_text.len()).max(4096) as u64;
        return Err(Error::Limit(format!(
            "{}: the table has {} data rows, over the limit of {cap}; planning them \
             needs about {} MB (a parsed copy of {} per row)\n  hint: split the table, or {}",
            table_path.display(),
            t.rows.len(),
            crate::limits::mb(per_row.saturating_mul(t.rows.len() as u64)),
            base_path.display(),
            crate::limits::hint(budget)
        )));
    }
    let mut seen: BTreeMap<String, usize> = BTreeMap::new();
    let mut rows = Vec::new();
    for r in &t.rows {
        let mut applied = Vec::new();
        let mut tab = base.clone();
        let mut res: std::result::Result<(), String> = table::check_id(&r.id);
        if res.is_ok() {
            if let Some(first) = seen.get(&r.id) {
                res = Err(format!("id \"{}\" repeats the id of row {first}", r.id));
            } else {
                seen.insert(r.id.clone(), r.number);
            }
        }
        if res.is_ok() {
            for (c, cell) in &r.cells {
                let col = &t.columns[*c];
                let value = (cell != "!unset").then(|| table::cell_value(cell));
                match table::apply(&mut tab, &t.segments[*c], value) {
                    Ok(p) => applied.push((col.clone(), cell.clone(), spec::render(&p))),
                    Err(m) => {
                        res = Err(format!(
                            "{}:{}: column `{col}`, row {} (id \"{}\"), value \"{cell}\": {m}",
                            table_path.display(),
                            r.line,
                            r.number,
                            r.id
                        ));
                        break;
                    }
                }
            }
        } else if let Err(m) = &res {
            res = Err(format!(
                "{}:{}: column `id`, row {}: {m}",
                table_path.display(),
                r.line,
                r.number
            ));
        }
        let text = toml::to_string(&tab).unwrap_or_default();
        let digest = sha(&[
            "priorsmith batch row v1",
            env!("CARGO_PKG_VERSION"),
            &r.id,
            &text,
            &format!("{:?} {:?}", ov.draws, ov.max_draws),
        ]);
        rows.push(PlannedRow {
            number: r.number,
            line: r.line,
            id: r.id.clone(),
            table: res.map(|_| tab),
            applied,
            digest,
        });
    }
    let plan = Plan {
        base_path: base_path.to_path_buf(),
        base_text,
        table_path: table_path.to_path_buf(),
        overrides: ov.clone(),
        rows,
    };
    check_columns(&plan, &t.columns)?;
    Ok(plan)
}

/// Refuse the whole batch, before any fit, when a column names no key of the
/// belief file (a misspelt `simulaton.seed`, `prior.cure_logt.sd`): otherwise
/// every row would fail separately with the same error. Each column is checked
/// by validating the first row that sets it; the column is misspelt when the
/// validation error is an unknown name with a "did you mean" hint, located
/// above the column's key path (a bad *value* is the row's own error and is
/// left to that row).
fn check_columns(plan: &Plan, columns: &[String]) -> Result<()> {
    let mut checked: Vec<&str> = Vec::new();
    for r in &plan.rows {
        let Ok(tab) = &r.table else { continue };
        if r.applied
            .iter()
            .all(|(c, _, _)| checked.contains(&c.as_str()))
        {
            continue;
        }
        checked.extend(r.applied.iter().map(|(c, _, _)| c.as_str()));
        let Err(Error::Input { loc, msg, hint }) = spec::from_table(
            tab.clone(),
            &plan.base_text,
            Some(&plan.base_path),
            &plan.overrides,
        ) else {
            continue;
        };
        let Some(h) = hint.filter(|h| h.contains("did you mean")) else {
            continue;
        };
        let bad = r.applied.iter().find(|(col, _, p)| match &loc.key {
            Some(k) => p.starts_with(&format!("{k}.")) || p.starts_with(&format!("{k}[")),
            None => {
                let first = col.split('.').next().unwrap_or(col);
                msg.contains(&format!("unknown field `{first}`"))
            }
        });
        if let Some((col, _, _)) = bad {
            return Err(Error::input(
                Location {
                    file: Some(plan.table_path.clone()),
                    line: None,
                    key: Some(col.clone()),
                },
                format!(
                    "column `{col}` names no key of the belief file {}: {msg} \
                     (checked before any row was fitted; columns: {})",
                    plan.base_path.display(),
                    columns.join(", ")
                ),
            )
            .with_hint(h));
        }
    }
    Ok(())
}

fn one_line(s: &str) -> String {
    s.lines()
        .map(str::trim)
        .filter(|l| !l.is_empty())
        .collect::<Vec<_>>()
        .join(" — ")
}

impl Plan {
    /// Validate a row into a spec; errors name the table file, row, column and value.
    pub fn spec(&self, r: &PlannedRow) -> std::result::Result<spec::Spec, String> {
        let tab = r.table.as_ref().map_err(Clone::clone)?;
        spec::from_table(
            tab.clone(),
            &self.base_text,
            Some(&self.base_path),
            &self.overrides,
        )
        .map_err(|e| self.row_error(r, e))
    }

    fn row_error(&self, r: &PlannedRow, e: Error) -> String {
        let key = match &e {
            Error::Input { loc, .. } => loc.key.clone(),
            _ => None,
        };
        // The applied column whose key path is nearest to the error's key.
        let col = key.as_ref().and_then(|k| {
            r.applied
                .iter()
                .filter(|(_, _, p)| {
                    k == p
                        || k.starts_with(&format!("{p}."))
                        || k.starts_with(&format!("{p}["))
                        || p.starts_with(&format!("{k}."))
                        || p.starts_with(&format!("{k}["))
                })
                .max_by_key(|(_, _, p)| p.len())
        });
        let loc = Location {
            file: Some(self.table_path.clone()),
            line: Some(r.line as usize),
            key: col.map(|c| c.0.clone()),
        };
        let msg = match col {
            Some((_, cell, _)) => {
                format!("row {} (id \"{}\"), value \"{cell}\": {e}", r.number, r.id)
            }
            None => format!(
                "row {} (id \"{}\") with the base file {}: {e}",
                r.number,
                r.id,
                self.base_path.display()
            ),
        };
        one_line(&Error::input(loc, msg).to_string())
    }
}

fn record_path(dir: &Path, row: usize) -> PathBuf {
    dir.join("rows").join(format!("{row:06}.json"))
}

/// Read a row record, if a complete one exists.
pub fn read_record(dir: &Path, row: usize) -> Option<RowRecord> {
    let text = std::fs::read_to_string(record_path(dir, row)).ok()?;
    serde_json::from_str(&text).ok()
}

/// Remove temporary files left by a killed writer (`.<name>.tmp-<pid>`).
fn clean_tmp(dir: &Path) {
    if let Ok(rd) = std::fs::read_dir(dir) {
        for e in rd.flatten() {
            let n = e.file_name().to_string_lossy().to_string();
            if n.starts_with('.') && n.contains(".tmp-") {
                let _ = std::fs::remove_file(e.path());
            }
        }
    }
}

fn fmt(x: f64) -> String {
    output::fmt_csv(x)
}

fn ok_record(r: &PlannedRow, res: &fit::FitResult) -> RowRecord {
    let hyperparameters = res
        .order
        .iter()
        .map(|n| (n.clone(), fmt(res.hyperparameters[n])))
        .collect();
    let mut stats = vec![
        ("fresh_total".to_string(), fmt(res.total.fresh)),
        ("in_sample_total".into(), fmt(res.total.in_sample)),
        ("noise_floor".into(), fmt(res.total.noise_floor)),
        ("verdict".into(), res.verdict.words().to_string()),
    ];
    for (i, b) in res.beliefs.iter().enumerate() {
        let k = i + 1;
        stats.push((format!("belief{k}.fresh"), fmt(b.fresh)));
        stats.push((format!("belief{k}.ratio"), fmt(b.ratio)));
        stats.push((format!("belief{k}.verdict"), b.verdict.words().to_string()));
    }
    stats.push(("evaluations".into(), res.optimiser.evaluations.to_string()));
    RowRecord {
        row: r.number,
        id: r.id.clone(),
        digest: r.digest.clone(),
        status: RowStatus::Ok,
        hyperparameters,
        stats,
        reason: None,
        stage: None,
        wall_time_s: res.wall_time_s,
    }
}

fn err_record(r: &PlannedRow, stage: RowStage, reason: String, t: f64) -> RowRecord {
    RowRecord {
        row: r.number,
        id: r.id.clone(),
        digest: r.digest.clone(),
        status: RowStatus::Error,
        hyperparameters: Vec::new(),
        stats: Vec::new(),
        reason: Some(reason),
        stage: Some(stage),
        wall_time_s: t,
    }
}

/// Validate, fit and commit one row. I/O errors on the output folder abort.
fn run_row(
    plan: &Plan,
    r: &PlannedRow,
    dir: &Path,
    files: ModelFiles,
) -> Result<(RowRecord, bool)> {
    if let Some(rec) = read_record(dir, r.number) {
        if rec.status == RowStatus::Ok && rec.digest == r.digest && rec.id == r.id {
            return Ok((rec, true));
        }
    }
    let started = Instant::now();
    let rec = match plan.spec(r) {
        Err(reason) => err_record(r, RowStage::Input, reason, started.elapsed().as_secs_f64()),
        Ok(mut spec) => {
            spec.fit.profiles = files == ModelFiles::Full;
            // Batches fit at a fixed number of draws (the base file's, or
            // BATCH_DRAWS scrambled Sobol points when it leaves them to precision
            // mode, which would multiply the cost of a row; the row's spec.toml
            // states them). Lean folders skip the Monte Carlo errors as well.
            if spec.precision.take().is_some() {
                spec.draws = BATCH_DRAWS;
            }
            spec.fit.mc_errors = files == ModelFiles::Full;
            let fitted = fit::fit(&spec, None);
            match fitted {
                // A cancelled row leaves no record: a resumed batch refits it.
                Err(Error::Cancelled) => return Err(Error::Cancelled),
                Err(e) => err_record(
                    r,
                    RowStage::Fit,
                    one_line(&format!("row {} (id \"{}\"): {e}", r.number, r.id)),
                    started.elapsed().as_secs_f64(),
                ),
                Ok(res) => {
                    let mdir = dir.join("models").join(&r.id);
                    clean_tmp(&mdir);
                    output::write_fit_files(&mdir, &res, files == ModelFiles::Full)?;
                    if let Ok(tab) = &r.table {
                        // Data paths rewritten to resolve from the model folder,
                        // and the draws it was fitted with stated, so `fit
                        // models/<id>/spec.toml` reproduces the row.
                        let mut tab = tab.clone();
                        spec::rebase_paths(&mut tab, &spec::base_dir(Some(&plan.base_path)), &mdir);
                        pin_draws(&mut tab, res.draws);
                        let text = format!(
                        "# The belief file of batch row {} (id \"{}\"): {} with the row's changes.\n\
                         # Data paths are rewritten to resolve from this folder.\n{}",
                        r.number,
                        r.id,
                        plan.base_path.display(),
                        toml::to_string(&tab).unwrap_or_default()
                    );
                        write_atomic(&mdir.join("spec.toml"), text.as_bytes())?;
                    }
                    ok_record(r, &res)
                }
            }
        }
    };
    let json = serde_json::to_string_pretty(&rec).map_err(|e| Error::Internal(e.to_string()))?;
    write_atomic(&record_path(dir, r.number), json.as_bytes())?;
    Ok((rec, false))
}

/// Draws of a batch row whose belief file leaves them to precision mode: 2¹²
/// scrambled Sobol points. A row then fits in about 0.18 s against 0.22 s at
/// 2¹³ (BENCHMARKS.md, "Batch throughput"), and its hyperparameters vary less
/// from seed to seed than they did at 10,000 independent draws.
pub const BATCH_DRAWS: usize = 1 << 12;

/// Write the draws a row was fitted with into its table (in place of precision
/// mode, or of the file's value when `--draws` overrode it), so that
/// `fit models/<id>/spec.toml` refits the same row.
fn pin_draws(tab: &mut toml::Table, draws: usize) {
    let sim = tab
        .entry("simulation")
        .or_insert_with(|| toml::Value::Table(toml::Table::new()));
    if let toml::Value::Table(sim) = sim {
        sim.remove("precision");
        sim.insert("draws".into(), toml::Value::Integer(draws as i64));
    }
}

/// The manifest `batch.json`: where the batch came from, for `merge`.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Manifest {
    pub base: PathBuf,
    pub table: PathBuf,
    pub draws: Option<usize>,
    pub max_draws: Option<usize>,
    pub rows: usize,
    /// SHA-256 over every planned row's digest (base file, table, overrides,
    /// version): a folder holding another batch is refused by [`run`].
    #[serde(default)]
    pub identity: Option<String>,
}

fn abs(p: &Path) -> PathBuf {
    std::fs::canonicalize(p).unwrap_or_else(|_| p.to_path_buf())
}

/// A batch folder is never swapped: finished rows stay and a rerun of the same
/// batch resumes. So a folder holding anything else — another batch (another
/// base file, table or overrides: its rows would sit beside this one's), or
/// files that are not a batch's — is refused before anything is written.
fn refuse_other_batch(dir: &Path, identity: &str) -> Result<()> {
    let refuse = |why: String| {
        Err(Error::io(
            dir,
            std::io::Error::other(format!("{why}; choose another --out, or remove the folder")),
        ))
    };
    let man_path = dir.join("batch.json");
    if man_path.exists() {
        let text =
            crate::limits::read_text(&man_path, crate::limits::TEXT_BYTES, "batch manifest")?;
        return match serde_json::from_str::<Manifest>(&text) {
            Ok(m) if m.identity.as_deref().is_none_or(|i| i == identity) => Ok(()),
            Ok(m) => refuse(format!(
                "the folder holds another batch (base {}, table {}, {} rows)",
                m.base.display(),
                m.table.display(),
                m.rows
            )),
            Err(e) => refuse(format!("its batch.json cannot be read ({e})")),
        };
    }
    let foreign = std::fs::read_dir(dir)
        .map(|it| {
            it.flatten()
                .any(|e| !e.file_name().to_string_lossy().starts_with('.'))
        })
        .unwrap_or(false);
    if foreign {
        return refuse("the folder holds files that are not a batch's".into());
    }
    Ok(())
}

/// Run (the shard of) a batch into `dir`. `tick` after each row.
pub fn run(
    plan: &Plan,
    dir: &Path,
    opts: &RunOptions,
    tick: &(dyn Fn(&Tally) + Sync),
) -> Result<RunReport> {
    let identity = sha(&plan
        .rows
        .iter()
        .map(|r| r.digest.as_str())
        .collect::<Vec<_>>());
    refuse_other_batch(dir, &identity)?;
    output::ensure_dir(dir)?;
    output::ensure_dir(&dir.join("rows"))?;
    clean_tmp(dir);
    clean_tmp(&dir.join("rows"));
    let man = Manifest {
        base: abs(&plan.base_path),
        table: abs(&plan.table_path),
        draws: plan.overrides.draws,
        max_draws: plan.overrides.max_draws,
        rows: plan.rows.len(),
        identity: Some(identity),
    };
    let mj = serde_json::to_string_pretty(&man).map_err(|e| Error::Internal(e.to_string()))?;
    write_atomic(&dir.join("batch.json"), mj.as_bytes())?;
    let range = shard_range(plan.rows.len(), opts.shard);
    let mine = &plan.rows[range.clone()];
    let tally = std::sync::Mutex::new(Tally {
        total: mine.len(),
        ..Tally::default()
    });
    let fitted = std::sync::atomic::AtomicUsize::new(0);
    let out: Vec<Result<(RowRecord, bool)>> = mine
        .par_iter()
        .with_max_len(1)
        .map(|r| {
            let x = run_row(plan, r, dir, opts.model_files);
            if let (Some(n), Ok((_, false))) = (opts.abort_after, &x) {
                if fitted.fetch_add(1, std::sync::atomic::Ordering::SeqCst) + 1 >= n {
                    std::process::abort();
                }
            }
            // A poisoned lock only loses the display's count, never a row.
            let now = tally.lock().ok().map(|mut t| {
                t.done += 1;
                match &x {
                    Ok((rec, skipped)) => {
                        t.skipped += usize::from(*skipped);
                        t.failed += usize::from(rec.status != RowStatus::Ok);
                        t.not_met += usize::from(row_not_met(rec));
                    }
                    Err(_) => t.failed += 1,
                }
                *t
            });
            if let Some(t) = now {
                tick(&t);
            }
            x
        })
        .collect();
    let mut recs = BTreeMap::new();
    let mut rep = RunReport {
        rows: mine.len(),
        ..Default::default()
    };
    for x in out {
        let (rec, skipped) = x?;
        if skipped {
            rep.skipped += 1;
        } else if rec.status == RowStatus::Ok {
            rep.fitted += 1;
        }
        if rec.status != RowStatus::Ok {
            rep.failed += 1;
        }
        if row_not_met(&rec) {
            rep.not_met += 1;
            rep.not_met_ids.push(rec.id.clone());
        }
        recs.insert(rec.row, rec);
    }
    let suffix = match opts.shard {
        None => String::new(),
        Some((i, n)) => format!("-shard-{i}-of-{n}"),
    };
    let (res, errs, times) = assemble(plan, range, &recs)?;
    for (name, bytes) in [
        (format!("results{suffix}.csv"), res),
        (format!("errors{suffix}.csv"), errs),
        (format!("timings{suffix}.csv"), times),
    ] {
        write_atomic(&dir.join(&name), &bytes)?;
        rep.tables.push(name);
    }
    Ok(rep)
}

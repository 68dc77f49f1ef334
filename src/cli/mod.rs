//! The command line: clap definitions and one function per command. Errors are
//! printed once, as a chain without repeated text, independent of RUST_BACKTRACE.
//!
//! Exit codes (the table in README.md, tested in tests/exit_codes.rs): 0 success;
//! 2 a command-line argument or value ([`Usage`], clap's own errors, and library
//! input errors located at an option `--x`); 3 the contents of a file (belief
//! file, table, design, fit.json); 4 a file could not be read or written; 5 a
//! resource limit would be exceeded; 6 a fit judged "not met" under
//! `--require-met` ([`NotMet`]); 70 an internal fault (a numerical failure the
//! input does not explain, or a bug; 70 is EX_SOFTWARE of BSD sysexits.h);
//! 130 interrupted by Ctrl-C. A closed output pipe ends the program silently,
//! by SIGPIPE as for other Unix filters (the shell reports 141).

use anyhow::{Context, Result};
use clap::{Parser, Subcommand};
use priorsmith::error::Error;
use priorsmith::fit::verdict::fmt_num;
use priorsmith::spec::{self, Overrides, Spec};
use priorsmith::{demo, fit, output, simulate};
use std::path::{Path, PathBuf};

mod batch;
mod conflict;
mod export;
mod history;
mod progress;
mod report;
mod starters;
mod sweep;

/// A command-line argument or value the command cannot use (exit 2).
#[derive(Debug)]
pub struct Usage(pub String);

impl std::fmt::Display for Usage {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for Usage {}

/// A usage error as an `anyhow::Error`.
pub fn usage(msg: impl Into<String>) -> anyhow::Error {
    anyhow::Error::new(Usage(msg.into()))
}

/// A fit judged "not met" while `--require-met` was given (exit 6).
#[derive(Debug)]
pub struct NotMet(pub String);

impl std::fmt::Display for NotMet {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for NotMet {}

#[derive(Parser, Debug)]
#[command(
    name = "priorsmith",
    version,
    about = "Fit prior hyperparameters to beliefs about the quantities a model implies"
)]
pub struct Cli {
    /// Print nothing but errors.
    #[arg(long, short, global = true)]
    pub quiet: bool,
    /// Worker threads (results do not depend on it).
    #[arg(long, global = true)]
    pub threads: Option<usize>,
    /// Working-memory budget in MB (default 4096); work estimated above it is refused.
    #[arg(long, global = true, value_name = "MB")]
    pub max_memory: Option<u64>,
    /// Exit with code 6 when a fit (fit, sweep, batch, demo) or the fit.json
    /// being exported is judged "not met" (for pipelines); outputs are still written.
    #[arg(long, global = true)]
    pub require_met: bool,
    #[command(subcommand)]
    pub command: Command,
}

#[derive(clap::Args, Debug, Clone)]
pub struct SpecArgs {
    /// Belief file (TOML).
    pub spec: PathBuf,
    /// Override [simulation] seed.
    #[arg(long)]
    pub seed: Option<u64>,
    /// Override [simulation] draws.
    #[arg(long)]
    pub draws: Option<usize>,
    /// Raise the cap on draws deliberately.
    #[arg(long)]
    pub max_draws: Option<usize>,
    /// The session's settings (--max-memory, the Ctrl-C token), filled in
    /// before the command runs.
    #[arg(skip)]
    pub session: Overrides,
}

impl SpecArgs {
    fn overrides(&self) -> Overrides {
        Overrides {
            seed: self.seed,
            draws: self.draws,
            max_draws: self.max_draws,
            ..self.session.clone()
        }
    }
}

/// The export languages as command-line values.
#[derive(Debug, Clone, Copy, clap::ValueEnum)]
pub enum LangArg {
    Stan,
    Pymc,
    Brms,
    Json,
}

impl From<LangArg> for priorsmith::export::Lang {
    fn from(l: LangArg) -> Self {
        use priorsmith::export::Lang;
        match l {
            LangArg::Stan => Lang::Stan,
            LangArg::Pymc => Lang::Pymc,
            LangArg::Brms => Lang::Brms,
            LangArg::Json => Lang::Json,
        }
    }
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Fit the free hyperparameters of a belief file and write fit.json, summary.txt, draws.csv.
    Fit {
        #[command(flatten)]
        spec: SpecArgs,
        /// Output folder.
        #[arg(long, short, default_value = "priorsmith-out")]
        out: PathBuf,
        /// Refit from K independent seeds and report the spread of every hyperparameter.
        #[arg(long, value_name = "K")]
        replicates: Option<usize>,
    },
    /// Show what the hyperparameters imply (free ones at their start or bounds' centre, or --set).
    Simulate {
        #[command(flatten)]
        spec: SpecArgs,
        /// Set hyperparameters, e.g. --set cure_logit.mean=-1.2 (repeatable).
        #[arg(long = "set", value_name = "NAME=VALUE")]
        set: Vec<String>,
        /// Print JSON instead of a table.
        #[arg(long)]
        json: bool,
    },
    /// Validate a belief file without fitting.
    Check {
        /// Belief file (TOML).
        spec: PathBuf,
    },
    /// List templates, or describe one.
    Templates {
        /// A template to describe (its parameters and quantities).
        name: Option<String>,
    },
    /// Write a commented starter belief file for a template.
    New {
        /// Template name (see `priorsmith templates`).
        template: String,
        /// Where to write it (default: <template>.toml; '-' for standard output).
        #[arg(long, short)]
        out: Option<PathBuf>,
        /// Overwrite an existing file.
        #[arg(long)]
        force: bool,
    },
    /// Write the fitted prior of DIR/fit.json as code for Stan, PyMC, brms or JSON.
    Export {
        /// Output folder of `priorsmith fit`.
        dir: PathBuf,
        /// Target language.
        #[arg(long, value_enum)]
        to: LangArg,
        /// Write to FILE (atomically) instead of standard output.
        #[arg(long, short)]
        out: Option<PathBuf>,
        /// Write a complete model: the template's likelihood (right-censored, in
        /// our parameterisation) with the prior (survival templates; stan, pymc).
        #[arg(long)]
        with_likelihood: bool,
    },
    /// Write DIR/report.html (and DIR/plots/*.svg) from DIR/fit.json and DIR/draws.csv.
    Report {
        /// Output folder of `priorsmith fit`.
        dir: PathBuf,
    },
    /// Refit with the beliefs widened or narrowed by each factor; write a table and a plot.
    Sweep {
        #[command(flatten)]
        spec: SpecArgs,
        /// Width factors, e.g. 0.5,0.75,1,1.5,2 (1 = the beliefs as stated).
        #[arg(long, default_value = "0.5,0.75,1,1.5,2")]
        widths: String,
        /// Widen only these beliefs (1-based, e.g. 1,3); default all.
        #[arg(long)]
        beliefs: Option<String>,
        /// Output folder.
        #[arg(long, short, default_value = "priorsmith-sweep")]
        out: PathBuf,
    },
    /// Fit one model per row of a table of changes to a base belief file.
    Batch(batch::BatchArgs),
    /// Assemble the results of batch shards (or of one batch folder) into one table.
    Merge(batch::MergeArgs),
    /// Historical survival data (or events/total) → a discounted [[belief]] block.
    History(history::HistoryArgs),
    /// Check new data against a fitted prior (Kaplan–Meier survival at a horizon).
    Conflict(conflict::ConflictArgs),
    /// Fit every shipped demo scenario and print a summary table.
    Demo {
        /// Output folder (one sub-folder per scenario).
        #[arg(long, short, default_value = "priorsmith-demo")]
        out: PathBuf,
    },
}

/// Exit code for an error chain (see the module documentation).
pub fn exit_code(e: &anyhow::Error) -> i32 {
    for c in e.chain() {
        if c.downcast_ref::<Usage>().is_some() {
            return 2;
        }
        if c.downcast_ref::<NotMet>().is_some() {
            return 6;
        }
        if let Some(err) = c.downcast_ref::<Error>() {
            return match err {
                // An input error located at an option (`--horizon`) has no file.
                Error::Input { loc, .. }
                    if loc.file.is_none()
                        && loc.key.as_deref().is_some_and(|k| k.starts_with("--")) =>
                {
                    2
                }
                Error::Input { .. } | Error::Dist(_) => 3,
                Error::Io { .. } => 4,
                Error::Limit(_) => 5,
                Error::Numeric(_) | Error::Internal(_) => 70,
                // 128 + SIGINT, as shells report an interrupted command (common practice).
                Error::Cancelled => 130,
            };
        }
        if c.downcast_ref::<std::io::Error>().is_some() {
            return 4;
        }
    }
    70
}

/// The error chain as printed: the first message, then each cause whose text
/// the messages before it do not already contain (an I/O error's text is part
/// of `Error::Io`'s message and is not repeated).
pub fn error_text(e: &anyhow::Error) -> String {
    let mut out = format!("error: {e}");
    let mut seen = e.to_string();
    for c in e.chain().skip(1) {
        let t = c.to_string();
        if t.is_empty() || seen.contains(&t) {
            continue;
        }
        out.push_str(&format!("\n  caused by: {t}"));
        seen.push_str(&t);
    }
    out
}

/// Restore the default action of SIGPIPE (Rust ignores it, which turns a
/// closed output pipe into a panic inside `println!`): the program then ends
/// silently when, say, `priorsmith templates | head -1` closes the pipe. Files
/// are always written whole before anything is printed about them.
fn end_quietly_on_closed_pipe() {
    #[cfg(unix)]
    // SAFETY: setting a signal's disposition to SIG_DFL at start-up, before any
    // thread exists, has no preconditions.
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
}

pub fn main() -> i32 {
    end_quietly_on_closed_pipe();
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let _ = e.print();
            return if e.use_stderr() { 2 } else { 0 };
        }
    };
    match run(cli) {
        Ok(()) => 0,
        Err(e) => {
            eprintln!("{}", error_text(&e));
            exit_code(&e)
        }
    }
}

pub fn run(cli: Cli) -> Result<()> {
    if let Some(t) = cli.threads {
        // More threads than cores only adds switching (10,000 threads made a
        // 0.6 s fit take 53 s): cap at twice the cores, and say so.
        let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
        let cap = 2 * cores;
        let t = t.max(1);
        if t > cap && !cli.quiet {
            eprintln!("note: --threads {t} capped at {cap} (twice the {cores} cores here); results do not depend on it");
        }
        rayon::ThreadPoolBuilder::new()
            .num_threads(t.min(cap))
            .build_global()
            .context("could not set up the thread pool")?;
    }
    let mem = cli.max_memory;
    if mem == Some(0) {
        return Err(usage(
            "--max-memory 0: give the budget in MB, e.g. --max-memory 8192",
        ));
    }
    let quiet = cli.quiet;
    let require_met = cli.require_met;
    // Ctrl-C asks the work to stop (see `priorsmith::cancel`): a fit stops
    // between evaluations and writes nothing; a batch keeps its finished rows.
    let cancel = priorsmith::cancel::Cancel::new();
    {
        let c = cancel.clone();
        // Fails only when a handler is already installed (tests calling run twice).
        let _ = ctrlc::set_handler(move || c.cancel());
    }
    let session = Overrides {
        max_memory_mb: mem,
        cancel,
        ..Overrides::default()
    };
    let mut command = cli.command;
    match &mut command {
        Command::Fit { spec, .. }
        | Command::Simulate { spec, .. }
        | Command::Sweep { spec, .. } => spec.session = session.clone(),
        Command::Batch(a) => a.session = session.clone(),
        Command::Merge(a) => a.max_memory = mem,
        _ => {}
    }
    let mem_only = session;
    match command {
        Command::Fit {
            spec,
            out,
            replicates,
        } => cmd_fit(&spec, &out, replicates, quiet, require_met),
        Command::Simulate { spec, set, json } => cmd_simulate(&spec, &set, json),
        Command::Check { spec } => cmd_check(&spec, quiet, &mem_only),
        Command::Templates { name } => starters::cmd_templates(name.as_deref()),
        Command::New {
            template,
            out,
            force,
        } => starters::cmd_new(&template, out.as_deref(), force, quiet),
        Command::Demo { out } => cmd_demo(&out, quiet, require_met, &mem_only),
        Command::Export {
            dir,
            to,
            out,
            with_likelihood,
        } => export::run(
            &dir,
            to.into(),
            out.as_deref(),
            with_likelihood,
            quiet,
            require_met,
        ),
        Command::Report { dir } => report::run(&dir, quiet),
        Command::Sweep {
            spec,
            widths,
            beliefs,
            out,
        } => sweep::cmd_sweep(&spec, &widths, beliefs.as_deref(), &out, quiet, require_met),
        Command::Batch(a) => batch::cmd_batch(&a, quiet, require_met),
        Command::Merge(a) => batch::cmd_merge(&a, quiet),
        Command::History(a) => history::run(&a),
        Command::Conflict(a) => conflict::run(&a, &mem_only),
    }
}

fn load(a: &SpecArgs) -> Result<Spec> {
    Ok(spec::load(&a.spec, &a.overrides())?)
}

/// Beliefs the template cannot meet, named before fitting (stderr, even when quiet).
fn print_warnings(spec: &Spec) {
    for w in &spec.warnings {
        eprintln!("warning: {w}");
    }
}

/// Print a fit's warnings (not met, undetermined) on standard error, unless
/// quiet; under `--require-met` a not-met fit becomes exit 6.
pub fn escalate(what: &str, r: &fit::FitResult, quiet: bool, require_met: bool) -> Result<()> {
    if !quiet {
        for l in output::explain::warnings(what, r) {
            eprintln!("{l}");
        }
    }
    if require_met && r.verdict == fit::Verdict::NotMet {
        return Err(anyhow::Error::new(NotMet(format!(
            "{what}: not met ({}), and --require-met was given",
            output::explain::overall_words(r)
        ))));
    }
    Ok(())
}

/// Fit and write outputs into `out` (a staging folder, see
/// [`output::folder`]); `extra` writes more files (spec.toml) before the report,
/// which reads them. Shared by `fit` and `demo`.
pub fn fit_and_write(
    spec: &Spec,
    out: &Path,
    quiet: bool,
    extra: impl FnOnce(&Path) -> Result<()>,
) -> Result<fit::FitResult> {
    output::ensure_dir(out)?;
    let pb = progress::Progress::new(quiet, "fitting");
    let cb = |done: usize, total: usize| {
        if let Some(pb) = &pb {
            pb.update(done, total, "");
        }
    };
    let r = fit::fit(spec, Some(&cb))?;
    if let Some(pb) = pb {
        pb.finish();
    }
    output::write_fit(out, &r)?;
    extra(out)?;
    priorsmith::report::write(out)?;
    Ok(r)
}

/// Say where the previous results of `out` are kept after a replacement.
pub(crate) fn note_previous(out: &Path, kept: Option<std::path::PathBuf>, quiet: bool) {
    if let (Some(k), false) = (kept, quiet) {
        eprintln!(
            "note: {} replaced as a whole; its previous files are kept in {}",
            out.display(),
            k.display()
        );
    }
}

fn cmd_fit(
    a: &SpecArgs,
    out: &Path,
    replicates: Option<usize>,
    quiet: bool,
    require_met: bool,
) -> Result<()> {
    let mut spec = load(a)?;
    print_warnings(&spec);
    if let Some(k) = replicates {
        if !(2..=100).contains(&k) {
            return Err(usage(format!(
                "--replicates {k}: use between 2 and 100 seeds"
            )));
        }
        spec.fit.replicates = k;
    }
    // The whole folder is built beside `out` and swapped in at the end: an
    // interruption leaves the previous set, never a mix (output::folder).
    let stage = output::folder::Staging::begin(out)?;
    let mut copied = false;
    let r = fit_and_write(&spec, stage.path(), quiet, |dir| {
        copied = write_spec_copy(a, out, dir)?;
        Ok(())
    })?;
    note_previous(out, stage.commit()?, quiet);
    if !quiet {
        print!("{}", output::summary::render(&r));
        println!(
            "\nwrote {}/fit.json, summary.txt, draws.csv, report.html{}",
            out.display(),
            if copied { ", spec.toml" } else { "" }
        );
    }
    escalate(
        &format!("fit of {}", a.spec.display()),
        &r,
        quiet,
        require_met,
    )
}

/// Write the belief file that was fitted as OUT/spec.toml: normalised (the
/// parsed table; its digest is the record's `spec_digest`), with relative data
/// paths rewritten to resolve from OUT, so `priorsmith fit OUT/spec.toml`
/// refits it and `priorsmith conflict OUT` finds it. It is written into `dir`,
/// the folder being built for OUT; when OUT/spec.toml is the fitted file
/// itself it is copied as it is. Returns whether it was rewritten.
fn write_spec_copy(a: &SpecArgs, out: &Path, dir: &Path) -> Result<bool> {
    let target = dir.join("spec.toml");
    let text =
        priorsmith::limits::read_text(&a.spec, priorsmith::limits::TEXT_BYTES, "belief file")?;
    if let (Ok(x), Ok(y)) = (a.spec.canonicalize(), out.join("spec.toml").canonicalize()) {
        if x == y {
            output::write_atomic(&target, text.as_bytes())?;
            return Ok(false);
        }
    }
    let mut table = spec::parse_table(&text, Some(&a.spec))?;
    spec::rebase_paths(&mut table, &spec::base_dir(Some(&a.spec)), out);
    let body =
        toml::to_string(&table).map_err(|e| Error::Internal(format!("writing spec.toml: {e}")))?;
    let mut overrides = Vec::new();
    if let Some(s) = a.seed {
        overrides.push(format!("--seed {s}"));
    }
    if let Some(d) = a.draws {
        overrides.push(format!("--draws {d}"));
    }
    let note = if overrides.is_empty() {
        String::new()
    } else {
        format!(
            "# Fitted with {} (fit.json records the seed and draws used).\n",
            overrides.join(" ")
        )
    };
    let head = format!(
        "# The belief file fitted into this folder: {} as parsed (comments dropped,\n\
         # data paths rewritten to resolve from here). `priorsmith fit` on this file\n\
         # refits it; `priorsmith conflict` reads it by default.\n{note}",
        a.spec.display()
    );
    output::write_atomic(&target, format!("{head}{body}").as_bytes())?;
    Ok(true)
}

fn cmd_check(path: &Path, quiet: bool, ov: &Overrides) -> Result<()> {
    let spec = spec::load(path, ov)?;
    print_warnings(&spec);
    if !quiet {
        println!(
            "{}: valid — template {}, {} hyperparameters ({} free), {} beliefs, {} draws, seed {}",
            path.display(),
            spec.model.template(),
            spec.hypers().len(),
            spec.free().len(),
            spec.beliefs.len(),
            spec.draws,
            spec.seed
        );
        for b in &spec.beliefs {
            println!("  belief: {} — {}", b.label, b.stated_as);
        }
    }
    Ok(())
}

fn cmd_simulate(a: &SpecArgs, set: &[String], json: bool) -> Result<()> {
    let spec = load(a)?;
    let mut h: Vec<f64> = spec.hypers().iter().map(|x| x.default_value()).collect();
    for s in set {
        let (k, v) = s.split_once('=').ok_or_else(|| {
            usage(format!(
                "--set {s}: expected NAME=VALUE, e.g. cure_logit.mean=-1.2"
            ))
        })?;
        let names: Vec<&str> = spec.hypers().iter().map(|x| x.name.as_str()).collect();
        let i = names.iter().position(|n| *n == k.trim()).ok_or_else(|| {
            usage(format!(
                "--set {s}: unknown hyperparameter `{k}`; {}",
                priorsmith::error::choice_hint(k, &names)
            ))
        })?;
        let x: f64 = v
            .trim()
            .parse()
            .map_err(|_| usage(format!("--set {s}: `{v}` is not a number")))?;
        h[i] = x;
    }
    // Validate the values by building the priors: the file validated, so a
    // failure here comes from a --set value (a command-line value, exit 2).
    spec.model
        .simulate(&h, &spec.model.draw_base(100, &spec.plan()), &[], &mut [])
        .map_err(|e| {
            if set.is_empty() {
                anyhow::Error::from(e)
            } else {
                usage(format!("--set {}: {e}", set.join(" --set ")))
            }
        })?;
    let sums = simulate::summarise(&spec, &h)?;
    if json {
        let names: Vec<&str> = spec.hypers().iter().map(|x| x.name.as_str()).collect();
        let v = serde_json::json!({
            "hyperparameters": names.iter().zip(&h).map(|(n, v)| (n.to_string(), *v)).collect::<std::collections::BTreeMap<_, _>>(),
            "quantities": sums,
        });
        println!("{}", serde_json::to_string_pretty(&v)?);
        return Ok(());
    }
    println!("Hyperparameters");
    for (x, v) in spec.hypers().iter().zip(&h) {
        println!(
            "  {:<28} {:>12}{}",
            x.name,
            fmt_num(*v),
            if x.is_free() {
                "  (free; value used here)"
            } else {
                ""
            }
        );
    }
    println!("\nImplied by {} draws (seed {})", spec.draws, spec.seed);
    for q in sums {
        println!("  {}", q.label);
        println!(
            "    mean {}  sd {}  P(inf) {:.2} %",
            q.mean.map_or("—".into(), fmt_num),
            q.sd.map_or("—".into(), fmt_num),
            100.0 * q.mass_at_inf
        );
        let row: Vec<String> = q
            .probs
            .iter()
            .zip(&q.quantiles)
            .map(|(p, v)| format!("{}%: {}", p * 100.0, fmt_num(*v)))
            .collect();
        println!("    implied  {}", row.join("  "));
        let row: Vec<String> = q
            .probs
            .iter()
            .zip(&q.believed)
            .map(|(p, v)| format!("{}%: {}", p * 100.0, fmt_num(*v)))
            .collect();
        println!("    believed {}", row.join("  "));
        for (at, m) in q.atom_masses {
            println!("    atom at {}: implied {:.2} %", fmt_num(at), 100.0 * m);
        }
    }
    Ok(())
}

fn cmd_demo(out: &Path, quiet: bool, require_met: bool, ov: &Overrides) -> Result<()> {
    let stage = output::folder::Staging::begin(out)?;
    let mut rows = Vec::new();
    for s in demo::SCENARIOS {
        let dir = stage.path().join(s.name);
        let spec_path = out.join(s.name).join("spec.toml");
        let spec = spec::parse(s.text, Some(&spec_path), ov)
            .with_context(|| format!("demo scenario {}", s.name))?;
        let r = fit_and_write(&spec, &dir, quiet, |dir| {
            Ok(output::write_atomic(
                &dir.join("spec.toml"),
                s.text.as_bytes(),
            )?)
        })?;
        rows.push((s.name, r));
    }
    note_previous(out, stage.commit()?, quiet);
    if !quiet {
        println!(
            "{:<20} {:<14} {:>6} {:>8} {:>11} {:>11}  verdict",
            "scenario", "template", "free", "time s", "fresh D", "floor"
        );
        for (name, r) in &rows {
            println!(
                "{:<20} {:<14} {:>6} {:>8.2} {:>11.3e} {:>11.3e}  {}",
                name,
                r.template,
                r.free.len(),
                r.wall_time_s,
                r.total.fresh,
                r.total.noise_floor,
                output::explain::overall_words(r)
            );
        }
        println!(
            "\noutputs under {}/<scenario>/ (fit.json, summary.txt, draws.csv, report.html)",
            out.display()
        );
        println!("{}", output::summary::CAUTION);
    }
    for (name, r) in &rows {
        escalate(&format!("demo scenario {name}"), r, quiet, require_met)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every error kind's exit code, as in README's table (the codes the binary
    /// cannot be driven to from outside: 70 and 130, included).
    #[test]
    fn exit_codes_of_each_error() {
        let loc = |file: Option<&str>, key: &str| priorsmith::error::Location {
            file: file.map(PathBuf::from),
            line: None,
            key: Some(key.into()),
        };
        let io = || std::io::Error::new(std::io::ErrorKind::NotFound, "gone");
        let cases: Vec<(anyhow::Error, i32)> = vec![
            (usage("--widths 0"), 2),
            (
                Error::input(loc(None, "--horizon"), "must be > 0").into(),
                2,
            ),
            (
                Error::input(loc(Some("a.toml"), "fit.tolerance"), "bad").into(),
                3,
            ),
            (Error::io("a.toml", io()).into(), 4),
            (anyhow::Error::new(io()), 4),
            (Error::Limit("too many".into()).into(), 5),
            (anyhow::Error::new(NotMet("not met".into())), 6),
            (Error::Numeric("no finite start".into()).into(), 70),
            (Error::Internal("poisoned lock".into()).into(), 70),
            (anyhow::anyhow!("an error of no known kind"), 70),
            (Error::Cancelled.into(), 130),
            // The kind is found under added context.
            (
                anyhow::Error::from(Error::Limit("x".into())).context("demo scenario"),
                5,
            ),
        ];
        for (e, want) in cases {
            assert_eq!(exit_code(&e), want, "{e:#}");
        }
    }

    /// An I/O error's text is not repeated as its cause.
    #[test]
    fn error_text_prints_each_message_once() {
        let e: anyhow::Error = Error::io(
            "x.toml",
            std::io::Error::new(std::io::ErrorKind::NotFound, "No such file"),
        )
        .into();
        let t = error_text(&e);
        assert_eq!(t.matches("No such file").count(), 1, "{t}");
        let e = anyhow::Error::from(Error::Limit("over".into())).context("demo scenario x");
        assert_eq!(error_text(&e), "error: demo scenario x\n  caused by: over");
    }
}

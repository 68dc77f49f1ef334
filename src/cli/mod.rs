//! The command line: clap definitions and one function per command. Errors are
//! printed once, as a chain, independent of RUST_BACKTRACE.
//!
//! Exit codes: 0 success; 1 numerical failure; 2 command-line usage error;
//! 3 invalid input (belief file, table, design); 4 a file could not be read or
//! written; 5 a resource limit would be exceeded.

use anyhow::{Context, Result};
use clap::{Parser, Subcommand};
use indicatif::{ProgressBar, ProgressStyle};
use priorsmith::error::Error;
use priorsmith::fit::verdict::fmt_num;
use priorsmith::spec::{self, Overrides, Spec};
use priorsmith::{demo, fit, output, simulate, templates};
use std::path::{Path, PathBuf};

mod batch;
mod conflict;
mod export;
mod history;
mod report;
mod sweep;

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
    Check { spec: PathBuf },
    /// List templates, or describe one.
    Templates { name: Option<String> },
    /// Write a commented starter belief file for a template.
    New {
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

/// Exit code for an error chain.
pub fn exit_code(e: &anyhow::Error) -> i32 {
    for c in e.chain() {
        if let Some(err) = c.downcast_ref::<Error>() {
            return match err {
                Error::Input { .. } | Error::Dist(_) => 3,
                Error::Io { .. } => 4,
                Error::Limit(_) => 5,
                Error::Numeric(_) | Error::Internal(_) => 1,
                // 128 + SIGINT, as shells report an interrupted command (common practice).
                Error::Cancelled => 130,
            };
        }
    }
    1
}

pub fn main() -> i32 {
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
            eprintln!("error: {e}");
            for c in e.chain().skip(1) {
                eprintln!("  caused by: {c}");
            }
            exit_code(&e)
        }
    }
}

pub fn run(cli: Cli) -> Result<()> {
    if let Some(t) = cli.threads {
        rayon::ThreadPoolBuilder::new()
            .num_threads(t.max(1))
            .build_global()
            .context("could not set up the thread pool")?;
    }
    let mem = cli.max_memory;
    if mem == Some(0) {
        anyhow::bail!("--max-memory 0: give the budget in MB, e.g. --max-memory 8192");
    }
    let quiet = cli.quiet;
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
        } => cmd_fit(&spec, &out, replicates, quiet),
        Command::Simulate { spec, set, json } => cmd_simulate(&spec, &set, json),
        Command::Check { spec } => cmd_check(&spec, quiet, &mem_only),
        Command::Templates { name } => cmd_templates(name.as_deref()),
        Command::New {
            template,
            out,
            force,
        } => cmd_new(&template, out.as_deref(), force, quiet),
        Command::Demo { out } => cmd_demo(&out, quiet, &mem_only),
        Command::Export {
            dir,
            to,
            out,
            with_likelihood,
        } => export::run(&dir, to.into(), out.as_deref(), with_likelihood, quiet),
        Command::Report { dir } => report::run(&dir, quiet),
        Command::Sweep {
            spec,
            widths,
            beliefs,
            out,
        } => sweep::cmd_sweep(&spec, &widths, beliefs.as_deref(), &out, quiet),
        Command::Batch(a) => batch::cmd_batch(&a, quiet),
        Command::Merge(a) => batch::cmd_merge(&a, quiet),
        Command::History(a) => history::run(&a),
        Command::Conflict(a) => conflict::run(&a, &mem_only),
    }
}

fn load(a: &SpecArgs) -> Result<Spec> {
    Ok(spec::load(&a.spec, &a.overrides())?)
}

fn progress_bar(quiet: bool, what: &str) -> Option<ProgressBar> {
    if quiet {
        return None;
    }
    let pb = ProgressBar::new(0);
    pb.set_style(
        ProgressStyle::with_template("{spinner} {msg} [{bar:30}] {pos}/{len} ({elapsed})")
            .unwrap_or_else(|_| ProgressStyle::default_bar())
            .progress_chars("=> "),
    );
    pb.set_message(what.to_string());
    // Only show when the work lasts longer than a second.
    pb.enable_steady_tick(std::time::Duration::from_millis(1000));
    Some(pb)
}

/// Fit and write outputs; shared by `fit` and `demo`.
pub fn fit_and_write(spec: &Spec, out: &Path, quiet: bool) -> Result<fit::FitResult> {
    output::ensure_dir(out)?;
    let pb = progress_bar(quiet, "fitting");
    let cb = |done: usize, total: usize| {
        if let Some(pb) = &pb {
            pb.set_length(total as u64);
            pb.set_position(done as u64);
        }
    };
    let r = fit::fit(spec, Some(&cb))?;
    if let Some(pb) = pb {
        pb.finish_and_clear();
    }
    output::write_fit(out, &r)?;
    priorsmith::report::write(out)?;
    Ok(r)
}

fn cmd_fit(a: &SpecArgs, out: &Path, replicates: Option<usize>, quiet: bool) -> Result<()> {
    let mut spec = load(a)?;
    if let Some(k) = replicates {
        if !(2..=100).contains(&k) {
            anyhow::bail!("--replicates {k}: use between 2 and 100 seeds");
        }
        spec.fit.replicates = k;
    }
    let r = fit_and_write(&spec, out, quiet)?;
    if !quiet {
        print!("{}", output::summary::render(&r));
        println!(
            "\nwrote {}/fit.json, summary.txt, draws.csv, report.html",
            out.display()
        );
    }
    Ok(())
}

fn cmd_check(path: &Path, quiet: bool, ov: &Overrides) -> Result<()> {
    let spec = spec::load(path, ov)?;
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
            anyhow::anyhow!("--set {s}: expected NAME=VALUE, e.g. cure_logit.mean=-1.2")
        })?;
        let names: Vec<&str> = spec.hypers().iter().map(|x| x.name.as_str()).collect();
        let i = names.iter().position(|n| *n == k.trim()).ok_or_else(|| {
            anyhow::anyhow!(
                "--set {s}: unknown hyperparameter `{k}`; {}",
                priorsmith::error::choice_hint(k, &names)
            )
        })?;
        let x: f64 = v
            .trim()
            .parse()
            .map_err(|_| anyhow::anyhow!("--set {s}: `{v}` is not a number"))?;
        h[i] = x;
    }
    // Validate the values by building the priors.
    spec.model
        .simulate(&h, &spec.model.draw_base(100, &spec.plan()), &[], &mut [])?;
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

fn cmd_templates(name: Option<&str>) -> Result<()> {
    match name {
        None => {
            for t in templates::TEMPLATES {
                println!("{:<16} {}", t.name, t.about);
            }
            println!("\n`priorsmith templates NAME` for parameters and quantities; `priorsmith new NAME` for a starter file.");
            println!("Families: {}", priorsmith::dist::family_names().join(", "));
        }
        Some(n) => {
            let t = templates::find(n).ok_or_else(|| {
                Error::input(Default::default(), format!("unknown template \"{n}\""))
                    .with_hint(priorsmith::error::choice_hint(n, &templates::names()))
            })?;
            println!("{} — {}\n\n[model] keys:", t.name, t.about);
            for (k, v) in t.options {
                println!("  {k:<12} {v}");
            }
            println!("\nparameters ([prior.<name>] tables):");
            for (k, v) in t.parameters {
                println!("  {k:<20} {v}");
            }
            println!("\nquantities ([[belief]] quantity = …):");
            for q in t.quantities {
                println!("  {:<16} {} [{}]", q.name, q.about, q.needs);
            }
        }
    }
    Ok(())
}

fn cmd_new(template: &str, out: Option<&Path>, force: bool, quiet: bool) -> Result<()> {
    let t = templates::find(template).ok_or_else(|| {
        Error::input(
            Default::default(),
            format!("unknown template \"{template}\""),
        )
        .with_hint(priorsmith::error::choice_hint(
            template,
            &templates::names(),
        ))
    })?;
    let default = PathBuf::from(format!("{}.toml", t.name));
    let path = out.unwrap_or(&default);
    if path == Path::new("-") {
        print!("{}", t.starter);
        return Ok(());
    }
    if path.exists() && !force {
        return Err(Error::io(
            path,
            std::io::Error::new(
                std::io::ErrorKind::AlreadyExists,
                "file exists (use --force to overwrite)",
            ),
        )
        .into());
    }
    output::write_atomic(path, t.starter.as_bytes())?;
    if !quiet {
        println!(
            "wrote {} — edit the beliefs, then `priorsmith fit {}`",
            path.display(),
            path.display()
        );
    }
    Ok(())
}

fn cmd_demo(out: &Path, quiet: bool, ov: &Overrides) -> Result<()> {
    output::ensure_dir(out)?;
    let mut rows = Vec::new();
    for s in demo::SCENARIOS {
        let dir = out.join(s.name);
        let spec_path = dir.join("spec.toml");
        output::ensure_dir(&dir)?;
        output::write_atomic(&spec_path, s.text.as_bytes())?;
        let spec = spec::parse(s.text, Some(&spec_path), ov)
            .with_context(|| format!("demo scenario {}", s.name))?;
        let r = fit_and_write(&spec, &dir, quiet)?;
        rows.push((s.name, r));
    }
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
                r.verdict.words()
            );
        }
        println!(
            "\noutputs under {}/<scenario>/ (fit.json, summary.txt, draws.csv, report.html)",
            out.display()
        );
        println!("{}", output::summary::CAUTION);
    }
    Ok(())
}

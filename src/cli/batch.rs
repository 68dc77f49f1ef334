//! `priorsmith batch` and `priorsmith merge`: many models from one base belief
//! file and a table of changes (see [`priorsmith::batch`] and docs/sweep-and-batch.md).

use super::progress_bar;
use anyhow::{anyhow, Result};
use priorsmith::batch::{self, ModelFiles, RunOptions};
use priorsmith::error::Error;
use priorsmith::output;
use priorsmith::spec::Overrides;
use std::path::PathBuf;

#[derive(clap::Args, Debug, Clone)]
pub struct BatchArgs {
    /// Table of models (CSV): an `id` column plus columns naming belief-file keys.
    pub table: PathBuf,
    /// Base belief file that every row changes.
    #[arg(long)]
    pub spec: PathBuf,
    /// Output folder (models/<id>/, rows/, results.csv, errors.csv, timings.csv).
    #[arg(long, short, default_value = "priorsmith-batch")]
    pub out: PathBuf,
    /// Run only the i-th of n slices of the rows, e.g. 3/8 (for job arrays).
    #[arg(long, value_name = "i/n")]
    pub shard: Option<String>,
    /// Override [simulation] draws for every row.
    #[arg(long)]
    pub draws: Option<usize>,
    /// Raise the cap on draws deliberately.
    #[arg(long)]
    pub max_draws: Option<usize>,
    /// What each models/<id>/ folder holds: lean (fit.json without held profiles,
    /// summary.txt, spec.toml) or full (also draws.csv and the profiles, for `report`)
    #[arg(long, value_parser = ModelFiles::NAMES, default_value = "lean")]
    pub model_files: String,
    /// The session's settings (--max-memory, the Ctrl-C token), filled in
    /// before the command runs.
    #[arg(skip)]
    pub session: Overrides,
}

#[derive(clap::Args, Debug, Clone)]
pub struct MergeArgs {
    /// Batch output folders (one per shard, or one shared folder).
    #[arg(required = true)]
    pub dirs: Vec<PathBuf>,
    /// Where to write results.csv, errors.csv, timings.csv (default: the first folder).
    #[arg(long, short)]
    pub out: Option<PathBuf>,
    /// The global --max-memory, filled in before the command runs.
    #[arg(skip)]
    pub max_memory: Option<u64>,
}

pub fn cmd_batch(a: &BatchArgs, quiet: bool) -> Result<()> {
    let shard = match &a.shard {
        Some(s) => Some(batch::parse_shard(s).map_err(|m| anyhow!(m))?),
        None => None,
    };
    let ov = Overrides {
        seed: None,
        draws: a.draws,
        max_draws: a.max_draws,
        ..a.session.clone()
    };
    let model_files = ModelFiles::parse(&a.model_files).ok_or_else(|| {
        anyhow!(
            "--model-files: expected lean or full, found \"{}\"",
            a.model_files
        )
    })?;
    let plan = batch::plan(&a.spec, &a.table, &ov)?;
    let pb = progress_bar(quiet, "models");
    let tick = |done: usize, total: usize| {
        if let Some(pb) = &pb {
            pb.set_length(total as u64);
            pb.set_position(done as u64);
        }
    };
    // Fault injection for the crash-and-resume test (tests/batch.rs).
    let abort_after = std::env::var("PRIORSMITH_TEST_ABORT_AFTER_ROWS")
        .ok()
        .and_then(|v| v.parse().ok());
    let opts = RunOptions {
        shard,
        model_files,
        abort_after,
    };
    let rep = batch::run(&plan, &a.out, &opts, &tick)?;
    if let Some(pb) = pb {
        pb.finish_and_clear();
    }
    if !quiet {
        println!(
            "{} rows{}: {} fitted, {} already done (skipped), {} failed",
            rep.rows,
            shard.map_or(String::new(), |(i, n)| format!(" (shard {i} of {n})")),
            rep.fitted,
            rep.skipped,
            rep.failed
        );
        println!(
            "wrote {}/{} and models/<id>/ (fit.json, summary.txt, draws.csv, spec.toml)",
            a.out.display(),
            rep.tables.join(", ")
        );
        println!("{}", output::summary::CAUTION);
    }
    if rep.failed > 0 {
        return Err(Error::input(
            priorsmith::error::Location {
                file: Some(a.table.clone()),
                ..Default::default()
            },
            format!(
                "{} of {} rows failed; the reasons are in {}/{}",
                rep.failed,
                rep.rows,
                a.out.display(),
                rep.tables.get(1).map_or("errors.csv", String::as_str)
            ),
        )
        .into());
    }
    Ok(())
}

pub fn cmd_merge(a: &MergeArgs, quiet: bool) -> Result<()> {
    let out = a.out.clone().unwrap_or_else(|| a.dirs[0].clone());
    let rep = batch::merge(&a.dirs, &out, a.max_memory)?;
    if !quiet {
        println!(
            "merged {} rows from {} folder(s) ({} failed): wrote {}/{}",
            rep.rows,
            a.dirs.len(),
            rep.failed,
            out.display(),
            rep.tables.join(", ")
        );
    }
    Ok(())
}

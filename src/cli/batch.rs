//! `priorsmith batch` and `priorsmith merge`: many models from one base belief
//! file and a table of changes (see [`priorsmith::batch`] and docs/sweep-and-batch.md).

use super::{progress::Progress, usage, NotMet};
use anyhow::Result;
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

/// Rows committed in `out/rows/` (finished records), for the Ctrl-C message.
fn committed_rows(out: &std::path::Path) -> usize {
    std::fs::read_dir(out.join("rows")).map_or(0, |d| {
        d.filter_map(|e| e.ok())
            .filter(|e| e.path().extension().is_some_and(|x| x == "json"))
            .count()
    })
}

pub fn cmd_batch(a: &BatchArgs, quiet: bool, require_met: bool) -> Result<()> {
    let shard = match &a.shard {
        Some(s) => Some(batch::parse_shard(s).map_err(usage)?),
        None => None,
    };
    let ov = Overrides {
        seed: None,
        draws: a.draws,
        max_draws: a.max_draws,
        ..a.session.clone()
    };
    let model_files = ModelFiles::parse(&a.model_files).ok_or_else(|| {
        usage(format!(
            "--model-files: expected lean or full, found \"{}\"",
            a.model_files
        ))
    })?;
    let plan = batch::plan(&a.spec, &a.table, &ov)?;
    let pb = Progress::new(quiet, "models");
    let tick = |t: &batch::Tally| {
        if let Some(pb) = &pb {
            let mut extra = vec![
                format!("{} not met", t.not_met),
                format!("{} failed", t.failed),
            ];
            if t.skipped > 0 {
                extra.push(format!("{} done earlier", t.skipped));
            }
            pb.update(t.done, t.total, &extra.join(", "));
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
    let rep = match batch::run(&plan, &a.out, &opts, &tick) {
        Ok(r) => r,
        Err(Error::Cancelled) => {
            if let Some(pb) = pb {
                pb.finish();
            }
            eprintln!(
                "interrupted: {} row(s) are committed in {}; run the same command again to \
                 resume (finished rows are kept, the rows cut short are fitted again)",
                committed_rows(&a.out),
                a.out.join("rows").display()
            );
            return Err(Error::Cancelled.into());
        }
        Err(e) => return Err(e.into()),
    };
    if let Some(pb) = pb {
        pb.finish();
    }
    if !quiet {
        println!(
            "{} rows{}: {} fitted, {} already done (skipped), {} not met, {} failed",
            rep.rows,
            shard.map_or(String::new(), |(i, n)| format!(" (shard {i} of {n})")),
            rep.fitted,
            rep.skipped,
            rep.not_met,
            rep.failed
        );
        println!(
            "wrote {}/{} and models/<id>/ ({})",
            a.out.display(),
            rep.tables.join(", "),
            match model_files {
                ModelFiles::Lean => "fit.json, summary.txt, spec.toml",
                ModelFiles::Full => "fit.json, summary.txt, draws.csv, spec.toml",
            }
        );
        println!("{}", output::summary::CAUTION);
    }
    if rep.not_met > 0 && !quiet {
        const SHOWN: usize = 10;
        let mut ids = rep.not_met_ids[..rep.not_met_ids.len().min(SHOWN)].join(", ");
        if rep.not_met_ids.len() > SHOWN {
            ids.push_str(&format!(", … ({} more)", rep.not_met_ids.len() - SHOWN));
        }
        eprintln!(
            "warning: {} of {} models are not met: {ids}; see the `verdict` column of {}/{} \
             and models/<id>/summary.txt",
            rep.not_met,
            rep.rows,
            a.out.display(),
            rep.tables.first().map_or("results.csv", String::as_str)
        );
        eprintln!("  {}", output::explain::NEXT_STEP_NOT_MET);
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
    if require_met && rep.not_met > 0 {
        return Err(anyhow::Error::new(NotMet(format!(
            "{} of {} models are not met, and --require-met was given",
            rep.not_met, rep.rows
        ))));
    }
    Ok(())
}

pub fn cmd_merge(a: &MergeArgs, quiet: bool) -> Result<()> {
    let out = a.out.clone().unwrap_or_else(|| a.dirs[0].clone());
    let rep = batch::merge(&a.dirs, &out, a.max_memory)?;
    if !quiet {
        println!(
            "merged {} rows from {} folder(s) ({} not met, {} failed): wrote {}/{}",
            rep.rows,
            a.dirs.len(),
            rep.not_met,
            rep.failed,
            out.display(),
            rep.tables.join(", ")
        );
    }
    Ok(())
}

//! `priorsmith export DIR --to LANG [--out FILE]`: the fitted prior of DIR/fit.json
//! as ready-to-paste code (see `priorsmith::export`).

use anyhow::Result;
use priorsmith::export::{self, Lang};
use priorsmith::output;
use std::path::Path;

pub fn run(
    dir: &Path,
    to: Lang,
    out: Option<&Path>,
    likelihood: bool,
    quiet: bool,
    require_met: bool,
) -> Result<()> {
    let text = export::export_dir_with(dir, to, likelihood)?;
    // The code carries the verdict as a comment only: say it where it is seen.
    let rec = priorsmith::fit::record::read(&dir.join("fit.json"))?;
    let what = format!("export of {}", dir.display());
    if require_met && rec.verdict == priorsmith::fit::Verdict::NotMet {
        // Nothing is written for a pipeline that asked for met fits only.
        return super::escalate(&what, &rec, quiet, true);
    }
    match out {
        Some(p) if p != Path::new("-") => {
            output::write_atomic(p, text.as_bytes())?;
            if !quiet {
                eprintln!(
                    "wrote {} ({} prior for {})",
                    p.display(),
                    to.name(),
                    dir.display()
                );
            }
        }
        _ => print!("{text}"),
    }
    super::escalate(&what, &rec, quiet, false)
}

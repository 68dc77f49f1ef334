//! `priorsmith export DIR --to LANG [--out FILE]`: the fitted prior of DIR/fit.json
//! as ready-to-paste code (see `priorsmith::export`).

use anyhow::Result;
use priorsmith::export::{self, Lang};
use priorsmith::output;
use std::path::Path;

pub fn run(dir: &Path, to: Lang, out: Option<&Path>, likelihood: bool, quiet: bool) -> Result<()> {
    let text = export::export_dir_with(dir, to, likelihood)?;
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
    Ok(())
}

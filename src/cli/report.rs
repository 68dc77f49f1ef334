//! `priorsmith report DIR`: DIR/report.html and DIR/plots/*.svg from DIR/fit.json
//! and DIR/draws.csv (see `priorsmith::report`).

use anyhow::Result;
use std::path::Path;

pub fn run(dir: &Path, quiet: bool) -> Result<()> {
    let files = priorsmith::report::write_folder(dir)?;
    if !quiet {
        println!(
            "wrote {} and {} plot(s) in {}",
            dir.join("report.html").display(),
            files.len().saturating_sub(1),
            dir.join("plots").display()
        );
    }
    Ok(())
}

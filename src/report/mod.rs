//! The report: one self-contained HTML page, `DIR/report.html`, with inline SVG
//! plots (also written as `DIR/plots/*.svg`), built from `DIR/fit.json` and
//! `DIR/draws.csv`; only the prior-predictive survival curves, the regression
//! picture and the experts' curves of a pooled belief re-read `DIR/spec.toml` (the
//! normalised belief file `fit` writes), see [`predictive`], [`regression`] and
//! [`experts`].
//!
//! For every belief: the believed CDF (from `believed_curve` in fit.json: atoms
//! as vertical jumps, mass at +∞ in a separate "never reached" column right of
//! a broken axis) overlaid on the empirical CDF of the implied draws; the
//! believed density over a histogram of the implied draws (histogram heights
//! are count / (N · bin width), so both integrate to the mass shown); the
//! verdict, the discrepancy against its noise floor, and quantiles. Then the
//! fitted prior, the hyperparameters within their bounds, optional diagnostics
//! (`identifiability`, `pareto`, `sweep` keys, rendered when present) and the
//! caution text. "What the fitted prior implies": survival bands per profile
//! (survival templates), the response per profile and the R²-type quantities
//! (regression templates), and pairwise scatter plots of the implied quantities. The page has no external resources, prints to PDF (print CSS)
//! and carries a small script that only marks, for tests, that every plot
//! rendered.

pub use crate::output::svg;
mod assets;
pub mod experts;
mod html;
mod plots;
mod plots_regression;
pub mod predictive;
pub mod regression;
mod view;

pub use html::render;
pub use plots::{cdf_plot, density_plot, hyper_plot};
pub use view::{beliefs, read_draws, BeliefView, Curve};

use crate::error::Result;
use crate::output;
use std::path::{Path, PathBuf};

/// `priorsmith report DIR`: rebuild DIR with a new report.html and plots/ and
/// swap it in as a whole ([`output::folder`]): the fit's own files are carried
/// over unchanged, the old report and plots are not, and an interruption leaves
/// the whole old set. Returns the paths of the new files as they are in DIR.
pub fn write_folder(dir: &Path) -> Result<Vec<PathBuf>> {
    let stage = output::folder::Staging::begin_rewrite(dir)?;
    // Read and render from DIR itself (the lock is held, so it cannot change),
    // so that errors name DIR's files; write into the staging folder.
    let files = render(dir)?;
    output::folder::carry_over(dir, stage.path(), &["report.html", "plots"])?;
    output::ensure_dir(&stage.path().join("plots"))?;
    let staged: Vec<(PathBuf, Vec<u8>)> = files
        .iter()
        .map(|(rel, bytes)| (stage.path().join(rel), bytes.clone()))
        .collect();
    output::write_all_atomic(&staged)?;
    stage.commit()?;
    Ok(files.into_iter().map(|(rel, _)| dir.join(rel)).collect())
}

/// Render and write `dir/report.html` and `dir/plots/*.svg` in place (into a
/// staging folder being built); returns the paths.
pub fn write(dir: &Path) -> Result<Vec<PathBuf>> {
    // Render everything before writing anything.
    let files = render(dir)?;
    output::ensure_dir(&dir.join("plots"))?;
    let mut out = Vec::new();
    for (rel, bytes) in files {
        let p = dir.join(rel);
        output::write_atomic(&p, &bytes)?;
        out.push(p);
    }
    Ok(out)
}

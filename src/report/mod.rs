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
pub mod predictive;
pub mod regression;
mod view;

pub use html::render;
pub use plots::{cdf_plot, density_plot, hyper_plot};
pub use view::{beliefs, read_draws, BeliefView, Curve};

use crate::error::Result;
use crate::output;
use std::path::{Path, PathBuf};

/// Render and write `dir/report.html` and `dir/plots/*.svg`; returns the paths.
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

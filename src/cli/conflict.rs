//! `priorsmith conflict`: is new data's Kaplan–Meier survival at a horizon
//! surprising under a fitted prior? The check is `priorsmith::conflict::check_fit`;
//! this file reads the options and prints.

use anyhow::Result;
use priorsmith::conflict;
use std::path::PathBuf;

#[derive(clap::Args, Debug)]
pub struct ConflictArgs {
    /// Output folder of `priorsmith fit`.
    pub dir: PathBuf,
    /// The belief file that was fitted (default DIR/spec.toml, which `fit` writes).
    #[arg(long)]
    pub spec: Option<PathBuf>,
    /// New data: CSV with `time`, `event` (and `arm` with --arm).
    #[arg(long)]
    pub data: PathBuf,
    /// Keep only rows of the new data whose `arm` column equals this.
    #[arg(long)]
    pub arm: Option<String>,
    /// Horizon at which Kaplan–Meier survival is compared.
    #[arg(long)]
    pub horizon: f64,
    /// Flag when the two-sided tail probability is below this.
    #[arg(long, default_value_t = 0.05)]
    pub level: f64,
    /// Print JSON instead of words.
    #[arg(long)]
    pub json: bool,
}

pub fn run(a: &ConflictArgs, ov: &priorsmith::spec::Overrides) -> Result<()> {
    let spec_path = a.spec.clone().unwrap_or_else(|| a.dir.join("spec.toml"));
    let r = conflict::check_fit(
        &a.dir.join("fit.json"),
        &spec_path,
        &a.data,
        a.arm.as_deref(),
        a.horizon,
        a.level,
        ov,
    )?;
    let c = &r.conflict;
    if a.json {
        println!("{}", serde_json::to_string_pretty(c)?);
    } else {
        println!(
            "new data: {} patients, {} events; Kaplan–Meier S({}) = {:.4} (Greenwood se {:.4}, {} effective patients)",
            r.patients, r.events, a.horizon, c.observed, c.observed_se, c.trials
        );
        println!(
            "prior-predictive: P(below) {:.4}, P(equal) {:.4}, P(above) {:.4}; prior S({}) 5/50/95 %: {:.3} / {:.3} / {:.3} ({} draws, seed {})",
            c.prob_below, c.prob_equal, c.prob_above, a.horizon,
            c.prior_quantiles[0], c.prior_quantiles[1], c.prior_quantiles[2],
            r.draws, r.seed
        );
        println!("{}", c.words);
        println!("{}", priorsmith::output::summary::CAUTION);
    }
    Ok(())
}

//! `priorsmith conflict`: is new data's Kaplan–Meier survival at a horizon
//! surprising under a fitted prior? (see `history::conflict`). The fitted
//! hyperparameters come from DIR/fit.json, the model from the belief file that
//! produced it (default DIR/spec.toml; its digest must match fit.json's).

use crate::history::{conflict, km::KaplanMeier, read_csv};
use crate::spec::{self, Overrides};
use anyhow::{bail, Context, Result};
use std::path::PathBuf;

#[derive(clap::Args, Debug)]
pub struct ConflictArgs {
    /// Output folder of `priorsmith fit`.
    pub dir: PathBuf,
    /// The belief file that was fitted (default DIR/spec.toml).
    #[arg(long)]
    pub spec: Option<PathBuf>,
    /// New data: CSV with `time`, `event` (and `arm` with --arm).
    #[arg(long)]
    pub data: PathBuf,
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

pub fn run(a: &ConflictArgs) -> Result<()> {
    if !(a.horizon > 0.0 && a.horizon.is_finite()) {
        bail!("--horizon {}: must be > 0", a.horizon);
    }
    if !(a.level > 0.0 && a.level < 1.0) {
        bail!("--level {}: must lie in (0, 1)", a.level);
    }
    let fit_path = a.dir.join("fit.json");
    let text = std::fs::read_to_string(&fit_path).map_err(|e| crate::Error::io(&fit_path, e))?;
    let fit: serde_json::Value = serde_json::from_str(&text)
        .with_context(|| format!("{} is not valid JSON", fit_path.display()))?;
    let spec_path = a.spec.clone().unwrap_or_else(|| a.dir.join("spec.toml"));
    let spec_text = std::fs::read_to_string(&spec_path)
        .map_err(|e| crate::Error::io(&spec_path, e))
        .context("the conflict check needs the fitted belief file (--spec)")?;
    let orig = spec::parse(&spec_text, Some(&spec_path), &Overrides::default())?;
    if fit.get("spec_digest").and_then(|v| v.as_str()) != Some(orig.digest.as_str()) {
        bail!(
            "{} was not fitted from {} (spec digests differ); pass the belief file with --spec",
            fit_path.display(),
            spec_path.display()
        );
    }
    // The same belief file with one more belief: survival at the horizon.
    let mut table = spec::parse_table(&spec_text, Some(&spec_path))?;
    let mut extra = toml::Table::new();
    extra.insert("quantity".into(), "survival_prob".into());
    extra.insert("horizon".into(), toml::Value::Float(a.horizon));
    let mut dist = toml::Table::new();
    dist.insert("family".into(), "uniform".into());
    dist.insert("lower".into(), toml::Value::Float(0.0));
    dist.insert("upper".into(), toml::Value::Float(1.0));
    extra.insert("distribution".into(), toml::Value::Table(dist));
    match table.get_mut("belief").and_then(|b| b.as_array_mut()) {
        Some(arr) => arr.push(toml::Value::Table(extra)),
        None => {
            table.insert(
                "belief".into(),
                toml::Value::Array(vec![toml::Value::Table(extra)]),
            );
        }
    }
    let spec = spec::from_table(table, &spec_text, Some(&spec_path), &Overrides::default())
        .context("the conflict check needs a template with the quantity survival_prob")?;
    let hyp = fit
        .get("hyperparameters")
        .and_then(|v| v.as_object())
        .with_context(|| format!("{} lacks `hyperparameters`", fit_path.display()))?;
    let mut h = Vec::new();
    for x in spec.hypers() {
        let v = hyp
            .get(&x.name)
            .and_then(crate::export::record::number)
            .with_context(|| {
                format!("{}: hyperparameters.{} missing", fit_path.display(), x.name)
            })?;
        h.push(v);
    }
    let req = &spec.beliefs[spec.beliefs.len() - 1].request;
    let base = spec
        .model
        .draw_base(spec.draws, &crate::rng::Plan::fresh(spec.seed));
    let mut out = vec![Vec::new()];
    spec.model.simulate(&h, &base, &[req], &mut out)?;
    let obs = read_csv(&a.data, a.arm.as_deref())?;
    let km = KaplanMeier::new(&obs);
    if a.horizon > km.last_time {
        bail!(
            "{}: horizon {} lies beyond the last follow-up time {}",
            a.data.display(),
            a.horizon,
            km.last_time
        );
    }
    let (s, se) = km.at(a.horizon);
    let m = conflict::trials(s, se, km.n);
    let c = conflict::check(&out[0], a.horizon, s, se, m, a.level);
    if a.json {
        println!("{}", serde_json::to_string_pretty(&c)?);
    } else {
        println!(
            "new data: {} patients, {} events; Kaplan–Meier S({}) = {:.4} (Greenwood se {:.4}, {} effective patients)",
            km.n, km.events, a.horizon, s, se, m
        );
        println!(
            "prior-predictive: P(below) {:.4}, P(equal) {:.4}, P(above) {:.4}; prior S({}) 5/50/95 %: {:.3} / {:.3} / {:.3} ({} draws, seed {})",
            c.prob_below, c.prob_equal, c.prob_above, a.horizon,
            c.prior_quantiles[0], c.prior_quantiles[1], c.prior_quantiles[2],
            spec.draws, spec.seed
        );
        println!("{}", c.words);
        println!("{}", crate::output::summary::CAUTION);
    }
    Ok(())
}

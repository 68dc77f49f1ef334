//! `priorsmith history`: historical survival data (or events/total) → a
//! discounted `[[belief]]` block to paste into a belief file (see `history::belief`).

use super::usage;
use anyhow::Result;
use priorsmith::error::{Error, Location};
use priorsmith::history::{belief, km::KaplanMeier, read_csv};
use std::path::PathBuf;

#[derive(clap::Args, Debug)]
pub struct HistoryArgs {
    /// Historical data: CSV with a header naming `time` and `event` (1 = event, 0 = censored) and optionally `arm`.
    pub data: Option<PathBuf>,
    /// Keep only rows whose `arm` column equals this.
    #[arg(long)]
    pub arm: Option<String>,
    /// survival_prob (at --horizon), plateau (evidence about the cure fraction) or median.
    #[arg(long, default_value = "survival_prob")]
    pub summary: String,
    /// Horizon for survival_prob, in the data's time unit.
    #[arg(long)]
    pub horizon: Option<f64>,
    /// Weight in (0, 1] on the historical patients (1 = borrow in full).
    #[arg(long)]
    pub discount: f64,
    /// Extra between-trial standard deviation (probability scale; log scale for the median).
    #[arg(long, default_value_t = 0.0)]
    pub extra_sd: f64,
    /// Binary outcome instead of a CSV: number of events …
    #[arg(long)]
    pub events: Option<u64>,
    /// … out of this many patients.
    #[arg(long)]
    pub total: Option<u64>,
    /// Also print the Kaplan–Meier table (as comments).
    #[arg(long)]
    pub table: bool,
}

pub fn run(a: &HistoryArgs) -> Result<()> {
    let d = belief::Discount::new(a.discount, a.extra_sd).map_err(|m| usage(format!("--{m}")))?;
    let hb = match (&a.data, a.events, a.total) {
        (Some(path), None, None) => {
            let summary = belief::Summary::parse(&a.summary).ok_or_else(|| {
                usage(format!(
                    "--summary {}: {}",
                    a.summary,
                    priorsmith::error::choice_hint(&a.summary, &belief::SUMMARIES)
                ))
            })?;
            if summary == belief::Summary::SurvivalProb && a.horizon.is_none() {
                return Err(usage(
                    "--summary survival_prob needs --horizon (the time at which survival is read), \
                     e.g. --horizon 24",
                ));
            }
            let obs = read_csv(path, a.arm.as_deref())?;
            let km = KaplanMeier::new(&obs);
            if let Some(h) = a
                .horizon
                .filter(|_| summary == belief::Summary::SurvivalProb)
            {
                if !(h > 0.0 && h <= km.last_time) {
                    return Err(usage(format!(
                        "--horizon {h}: must lie in (0, {}], the follow-up of {}",
                        km.last_time,
                        path.display()
                    )));
                }
            }
            if a.table {
                println!(
                    "# Kaplan–Meier of {} ({} rows, {} events)",
                    path.display(),
                    km.n,
                    km.events
                );
                println!(
                    "# {:>10} {:>8} {:>7} {:>10} {:>10}",
                    "time", "at risk", "events", "survival", "se"
                );
                for s in &km.steps {
                    println!(
                        "# {:>10} {:>8} {:>7} {:>10.6} {:>10.6}",
                        s.time, s.at_risk, s.events, s.surv, s.se
                    );
                }
            }
            // What remains is about the data (no events, median not reached).
            belief::HistBelief::from_km(&km, summary, a.horizon, d).map_err(|m| {
                Error::input(
                    Location {
                        file: Some(path.clone()),
                        ..Location::default()
                    },
                    m,
                )
            })?
        }
        (None, Some(e), Some(n)) => belief::HistBelief::from_binary(e, n, a.horizon, d)
            .map_err(|m| usage(format!("--events/--total: {m}")))?,
        _ => return Err(usage("give a DATA.csv, or --events and --total (not both)")),
    };
    print!("{}", hb.toml_block());
    Ok(())
}

//! Prior–data conflict of a fitted folder: new data's Kaplan–Meier survival at a
//! horizon against the prior recorded in DIR/fit.json, with the model rebuilt from
//! the belief file that produced it (its digest must match the record's). The
//! statistics are `history::conflict`'s.

use crate::error::{Error, Location, Result};
use crate::history::conflict::{self, Conflict};
use crate::spec::{self, Overrides};
use std::path::Path;

/// What the conflict check of a fitted folder found: the new data's summary and
/// the check against the fitted prior's draws of S(h).
#[derive(Debug, Clone)]
pub struct FitCheck {
    /// Patients and events in the new data.
    pub patients: usize,
    pub events: usize,
    pub conflict: Conflict,
    /// Fresh prior draws used, and their seed.
    pub draws: usize,
    pub seed: u64,
}

/// A command-line value that is out of range.
fn bad_option(key: &str, msg: String) -> Error {
    Error::input(
        Location {
            file: None,
            line: None,
            key: Some(key.to_string()),
        },
        msg,
    )
}

/// Check new data (`data`, optionally one `arm`) against the prior fitted in
/// `fit_path` from the belief file `spec_path` (their digests must agree): the
/// Kaplan–Meier survival at `horizon` against the fitted prior's S(horizon),
/// flagged below the two-sided tail probability `level`. `ov`: the memory budget
/// (its seed and draws must be left unset: the record's own are used).
pub fn check_fit(
    fit_path: &Path,
    spec_path: &Path,
    data: &Path,
    arm: Option<&str>,
    horizon: f64,
    level: f64,
    ov: &Overrides,
) -> Result<FitCheck> {
    if !(horizon > 0.0 && horizon.is_finite()) {
        return Err(bad_option("--horizon", format!("{horizon}: must be > 0")));
    }
    if !(level > 0.0 && level < 1.0) {
        return Err(bad_option(
            "--level",
            format!("{level}: must lie in (0, 1)"),
        ));
    }
    let fit = crate::fit::record::read(fit_path)?;
    let spec_text = crate::limits::read_text(spec_path, crate::limits::TEXT_BYTES, "belief file")?;
    let mut table = spec::parse_table(&spec_text, Some(spec_path))?;
    if fit.spec_digest != spec::digest(&table, &spec::base_dir(Some(spec_path))) {
        return Err(crate::fit::record::bad(
            fit_path,
            "spec_digest",
            format!(
                "not fitted from {} (spec digests differ); pass the belief file with --spec",
                spec_path.display()
            ),
        ));
    }
    // The same belief file with one more belief: survival at the horizon.
    let mut extra = toml::Table::new();
    extra.insert("quantity".into(), "survival_prob".into());
    extra.insert("horizon".into(), toml::Value::Float(horizon));
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
    let spec = spec::from_table(table, &spec_text, Some(spec_path), ov).map_err(|e| {
        e.with_hint("the conflict check needs a template with the quantity survival_prob")
    })?;
    let mut h = Vec::new();
    for x in spec.hypers() {
        let v = fit.hyperparameters.get(&x.name).copied().ok_or_else(|| {
            crate::fit::record::bad(
                fit_path,
                &format!("hyperparameters.{}", x.name),
                "missing: the record does not match the belief file",
            )
        })?;
        h.push(v);
    }
    let req = &spec.beliefs[spec.beliefs.len() - 1].request;
    let base = spec
        .model
        .draw_base(spec.draws, &crate::rng::Plan::fresh(spec.seed));
    let mut out = vec![Vec::new()];
    spec.model.simulate(&h, &base, &[req], &mut out)?;
    let obs = crate::history::read_csv(data, arm)?;
    let km = crate::history::km::KaplanMeier::new(&obs);
    if horizon > km.last_time {
        return Err(bad_option(
            "--horizon",
            format!(
                "{horizon} lies beyond the last follow-up time {} of {}",
                km.last_time,
                data.display()
            ),
        ));
    }
    let (s, se) = km.at(horizon);
    let m = conflict::trials(s, se, km.n);
    Ok(FitCheck {
        patients: km.n,
        events: km.events,
        conflict: conflict::check(&out[0], horizon, s, se, m, level),
        draws: spec.draws,
        seed: spec.seed,
    })
}

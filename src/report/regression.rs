//! The prior-predictive picture of the regression templates (linear, logistic,
//! poisson and their multilevel forms), the analogue of the survival bands of
//! [`super::predictive`].
//!
//! Two pictures, each a column of intervals (pointwise 50 / 80 / 95 % of the
//! prior-predictive distribution, with its median):
//! - the model's response in its own terms at every profile: the event
//!   probability logistic(η) (logistic templates), the rate exp(η) per unit
//!   exposure (poisson templates) or the mean response η (linear templates), at
//!   the reference profile (the design mean) and at every `[profile.NAME]` of
//!   the belief file; and across the design rows (up to [`MAX_ROWS`], evenly
//!   spaced, each spelled out as a profile of its raw covariate values), sorted
//!   by implied median and drawn as pointwise bands over the rows' ranks;
//! - how much the model explains: the template's R²-type quantities (Bayesian R²
//!   over the design — Gelman, Goodrich, Gabry & Vehtari 2019 —, the latent-scale
//!   R² of McKelvey & Zavoina 1975 for logistic, the marginal and conditional R²
//!   of Nakagawa & Schielzeth 2013 and the intraclass correlation for the
//!   multilevel templates), all on [0, 1].
//!
//! A belief about one of these quantities (at the same profile) is drawn beside
//! its interval in blue: the believed 10–90 % interval and median, from fit.json.
//!
//! As for the survival bands, draws.csv holds only the believed quantities, so
//! the picture is re-simulated from the folder's `spec.toml`: its beliefs are
//! replaced by requests for the quantities above (the template's own quantities,
//! no formula repeated here), the base draws come from the record's seed through
//! `crate::rng` ([`super::predictive::CURVE_DRAWS`] of them), and
//! `Model::simulate` runs once at the fitted hyperparameters. Deterministic:
//! same folder, same picture.

use super::predictive::{band_quantiles, resimulate, str_of};
use crate::error::Result;
use crate::export::record::FitRecord as Record;
use std::path::Path;

/// Profiles drawn at most (the reference profile first, then the file's).
pub const MAX_PROFILES: usize = 12;
/// Design rows drawn at most (evenly spaced through the design), and the most
/// covariate values they may spell out in total (rows × columns).
pub const MAX_ROWS: usize = 40;
const MAX_ROW_CELLS: usize = 200_000;

/// The R²-type quantities drawn, in this order, where the template has them.
const SHARE_QUANTITIES: [&str; 5] = ["r2", "r2_latent", "r2_fixed", "r2_conditional", "icc"];

/// One interval of the picture: a quantity (at a profile) over prior draws.
#[derive(Debug, Clone)]
pub struct Interval {
    /// The quantity's name (a fit.json key, e.g. `event_prob`).
    pub quantity: String,
    /// The profile (`reference` for the design mean); empty for design-level quantities.
    pub profile: String,
    /// Pointwise quantiles at [`BAND_PROBS`].
    pub q: Vec<f64>,
    /// A belief about the same quantity (at the same profile): its 1-based
    /// number and believed 10 %, 50 %, 90 % quantiles.
    pub belief: Option<(usize, [f64; 3])>,
}

/// The regression picture of one fit folder.
#[derive(Debug, Clone)]
pub struct RegressionPicture {
    /// The response quantity (`event_prob`, `rate` or `mean_response`).
    pub response: String,
    /// One interval per profile.
    pub profiles: Vec<Interval>,
    /// The R²-type quantities.
    pub shares: Vec<Interval>,
    /// The response at design rows (1-based row numbers in `profile`, "row 17"),
    /// sorted by their implied median.
    pub rows: Vec<Interval>,
    /// Rows in the design.
    pub design_rows: usize,
}

/// A belief's believed 10 / 50 / 90 % quantiles from the record (NaN where the
/// record has no such probability).
fn believed3(r: &crate::fit::BeliefReport) -> [f64; 3] {
    let q = |p: f64| {
        r.probs
            .iter()
            .position(|x| (x - p).abs() < 1e-12)
            .map_or(f64::NAN, |i| r.believed_quantiles[i])
    };
    [q(0.1), q(0.5), q(0.9)]
}

/// The picture of a regression fit folder; `None` for other templates or when
/// the folder has no spec.toml.
pub fn regression_picture(dir: &Path, rec: &Record) -> Result<Option<RegressionPicture>> {
    let Some(info) = crate::templates::find(&rec.header.template) else {
        return Ok(None);
    };
    let has = |n: &str| info.quantities.iter().any(|q| q.name == n);
    // Regression templates are those with a mean response and no survival curve.
    if !has("mean_response") || has("survival_prob") {
        return Ok(None);
    }
    let path = dir.join("spec.toml");
    if !path.is_file() {
        return Ok(None);
    }
    let response = if has("event_prob") {
        "event_prob"
    } else if has("rate") {
        "rate"
    } else {
        "mean_response"
    };
    let shares: Vec<&str> = SHARE_QUANTITIES
        .iter()
        .copied()
        .filter(|q| has(q))
        .collect();
    let text = crate::limits::read_text(&path, crate::limits::TEXT_BYTES, "belief file")?;
    let mut table = crate::spec::parse_table(&text, Some(&path))?;
    let beliefs: Vec<toml::Table> = table
        .get("belief")
        .and_then(|b| b.as_array())
        .map(|a| a.iter().filter_map(|x| x.as_table().cloned()).collect())
        .unwrap_or_default();
    // Profiles: the reference, the file's [profile.NAME] tables, then any a
    // belief names (in order of first mention).
    let mut profiles = vec!["reference".to_string()];
    let mut add = |p: String| {
        if !profiles.contains(&p) && profiles.len() < MAX_PROFILES {
            profiles.push(p);
        }
    };
    if let Some(t) = table.get("profile").and_then(|p| p.as_table()) {
        for k in t.keys() {
            add(k.clone());
        }
    }
    for b in &beliefs {
        if let Some(p) = str_of(b.get("profile")) {
            add(p);
        }
    }
    // Design rows, evenly spaced, as profiles of their raw covariate values
    // (the design stores them centred, and scaled when standardised).
    let design = {
        let raw: crate::spec::raw::RawSpec =
            toml::Value::Table(table.clone())
                .try_into()
                .map_err(|e: toml::de::Error| {
                    crate::error::Error::input(
                        crate::error::Location {
                            file: Some(path.clone()),
                            line: None,
                            key: None,
                        },
                        e.to_string(),
                    )
                })?;
        let map = crate::spec::SourceMap::new(&text);
        let ctx = crate::spec::Ctx::new(Some(&path), &map, &raw);
        crate::design::from_ctx(&ctx)?
    };
    let (n_rows, p_cols) = (design.rows(), design.cols());
    let m = MAX_ROWS.min(n_rows).min(MAX_ROW_CELLS / p_cols.max(1));
    let row_ids: Vec<usize> = (0..m).map(|k| k * n_rows / m.max(1)).collect();
    let mut row_names = Vec::new();
    {
        let prof = table
            .entry("profile")
            .or_insert_with(|| toml::Value::Table(toml::Table::new()));
        if let Some(prof) = prof.as_table_mut() {
            for &r in &row_ids {
                let mut t = toml::Table::new();
                for (j, name) in design.names.iter().enumerate() {
                    let v = design.xc[(r, j)] * design.stored_scale(j) + design.raw_means[j];
                    t.insert(name.clone(), toml::Value::Float(v));
                }
                // A name no user profile can clash with (the file's names are kept).
                let mut name = format!("design row {}", r + 1);
                while prof.contains_key(&name) {
                    name.push('\'');
                }
                prof.insert(name.clone(), toml::Value::Table(t));
                row_names.push(name);
            }
        }
    }
    // A distribution on the quantity's range for each request (it only
    // satisfies validation; nothing is fitted).
    let placeholder = |q: &str| {
        let mut d = toml::Table::new();
        if q == "rate" || (q == "mean_response" && has("rate")) {
            d.insert("family".into(), "lognormal".into());
            d.insert("meanlog".into(), 0.into());
            d.insert("sdlog".into(), 1.into());
        } else if q == "mean_response" && !has("event_prob") {
            d.insert("family".into(), "normal".into());
            d.insert("mean".into(), 0.into());
            d.insert("sd".into(), 1.into());
        } else {
            d.insert("family".into(), "beta".into());
            d.insert("alpha".into(), 1.into());
            d.insert("beta".into(), 1.into());
        }
        toml::Value::Table(d)
    };
    let mut synth = Vec::new();
    for p in &profiles {
        let mut b = toml::Table::new();
        b.insert("quantity".into(), response.into());
        if p != "reference" {
            b.insert("profile".into(), p.clone().into());
        }
        b.insert("distribution".into(), placeholder(response));
        synth.push(toml::Value::Table(b));
    }
    for p in &row_names {
        let mut b = toml::Table::new();
        b.insert("quantity".into(), response.into());
        b.insert("profile".into(), p.clone().into());
        b.insert("distribution".into(), placeholder(response));
        synth.push(toml::Value::Table(b));
    }
    for q in &shares {
        let mut b = toml::Table::new();
        b.insert("quantity".into(), (*q).into());
        b.insert("distribution".into(), placeholder(q));
        synth.push(toml::Value::Table(b));
    }
    let out = resimulate(table, synth, &path, rec)?;
    let fit = &rec.fit;
    let quantiles = band_quantiles;
    // The record's beliefs about the drawn quantities.
    let belief_of = |q: &str, profile: &str| -> Option<(usize, [f64; 3])> {
        beliefs
            .iter()
            .zip(&fit.beliefs)
            .enumerate()
            .find(|(_, (b, r))| {
                r.quantity == q
                    && (profile.is_empty()
                        || str_of(b.get("profile")).unwrap_or_else(|| "reference".into())
                            == profile)
            })
            .map(|(k, (_, r))| (k + 1, believed3(r)))
    };
    let mut picture = RegressionPicture {
        response: response.to_string(),
        profiles: Vec::new(),
        shares: Vec::new(),
        rows: Vec::new(),
        design_rows: n_rows,
    };
    let np = profiles.len();
    for (k, &r) in row_ids.iter().enumerate() {
        picture.rows.push(Interval {
            quantity: response.to_string(),
            profile: format!("row {}", r + 1),
            q: quantiles(&out[np + k]),
            belief: None,
        });
    }
    picture.rows.sort_by(|a, b| a.q[3].total_cmp(&b.q[3]));
    for (k, p) in profiles.iter().enumerate() {
        picture.profiles.push(Interval {
            quantity: response.to_string(),
            profile: p.clone(),
            q: quantiles(&out[k]),
            belief: belief_of(response, p),
        });
    }
    for (k, q) in shares.iter().enumerate() {
        picture.shares.push(Interval {
            quantity: (*q).to_string(),
            profile: String::new(),
            q: quantiles(&out[np + row_ids.len() + k]),
            belief: belief_of(q, ""),
        });
    }
    Ok(Some(picture))
}

//! The prior-predictive picture in the model's own terms, for the report.
//!
//! Survival templates (every template with a `survival_prob` quantity:
//! mixture cure, promotion-time cure, parametric survival): the population
//! survival curve S(t) implied by the fitted prior, per profile the beliefs name, as pointwise 50 / 80 / 95 % bands over a
//! time grid plus a few sample curves, with the survival and median beliefs drawn
//! on it (believed 10–90 % interval and median).
//!
//! draws.csv holds one column per belief, not whole curves, so the curves are
//! re-simulated here from the fit folder's `spec.toml` (which `fit` writes, paths
//! resolving from the folder): its beliefs are replaced by `survival_prob`
//! requests at the grid's times (the template's own quantity, so no formula is
//! repeated), the model's base draws are taken from the record's seed through
//! `crate::rng` (a fixed [`CURVE_DRAWS`] draws), and `Model::simulate` runs once at
//! the fitted hyperparameters. Each simulated row is one prior draw's curve
//! (common base draws across times). Deterministic: same folder, same picture.
//! Without spec.toml (records written before it existed) there is no picture and
//! the report says so.
//!
//! Pairwise plots of the implied quantities use the unsorted rows of draws.csv:
//! the fit matches each quantity's marginal distribution only, never their joint
//! behaviour, and the scatter shows what the prior implies jointly.

use crate::error::Result;
use crate::export::record::FitRecord as Record;
use std::path::Path;

/// Prior draws behind each survival band (fixed, so the picture does not depend
/// on the fit's draws or precision mode).
pub const CURVE_DRAWS: usize = 2000;
/// Intervals of the even time grid (the belief horizons are added to it).
pub const GRID: usize = 60;
/// Sample curves drawn over the bands.
pub const SAMPLE_CURVES: usize = 8;

/// A belief drawn on the survival plot.
#[derive(Debug, Clone)]
pub struct Marker {
    /// 1-based belief number.
    pub belief: usize,
    /// `survival_prob` at a horizon (vertical interval) or `median_survival`
    /// (horizontal interval at S = ½).
    pub kind: MarkerKind,
    /// Believed 10 %, 50 %, 90 % quantiles (may be infinite).
    pub q: [f64; 3],
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum MarkerKind {
    SurvivalAt(f64),
    Median,
}

/// Pointwise bands of the survival curve for one profile.
#[derive(Debug, Clone)]
pub struct SurvivalBands {
    /// Profile name ("" for the reference profile).
    pub profile: String,
    pub time_unit: String,
    /// t = 0 first.
    pub times: Vec<f64>,
    /// Pointwise quantiles at [`BAND_PROBS`], one vector per probability.
    pub bands: Vec<Vec<f64>>,
    /// A few whole curves.
    pub samples: Vec<Vec<f64>>,
    pub markers: Vec<Marker>,
}

/// Probabilities of the pointwise bands: 95 %, 80 %, 50 % intervals and the median.
pub const BAND_PROBS: [f64; 7] = [0.025, 0.1, 0.25, 0.5, 0.75, 0.9, 0.975];

pub(super) fn str_of(v: Option<&toml::Value>) -> Option<String> {
    v.and_then(|x| x.as_str()).map(str::to_string)
}

/// The [`BAND_PROBS`] quantiles of one column of draws (NaN draws left out;
/// NaN when none is left).
pub(super) fn band_quantiles(c: &[f64]) -> Vec<f64> {
    let mut s: Vec<f64> = c.iter().copied().filter(|v| !v.is_nan()).collect();
    s.sort_by(f64::total_cmp);
    BAND_PROBS
        .iter()
        .map(|p| {
            if s.is_empty() {
                f64::NAN
            } else {
                crate::fit::verdict::empirical_quantile(&s, *p)
            }
        })
        .collect()
}

/// Re-simulate a fit: the folder's spec.toml (`table`, read from `path`) with
/// its beliefs replaced by `synth` (one per quantity to draw, their
/// distributions placeholders), at [`CURVE_DRAWS`] draws from the record's
/// seed and the fitted hyperparameters (fixed ones at their stated value).
/// One column of draws per entry of `synth`, in order.
pub(super) fn resimulate(
    mut table: toml::Table,
    synth: Vec<toml::Value>,
    path: &Path,
    rec: &Record,
) -> Result<Vec<Vec<f64>>> {
    table.insert("belief".into(), toml::Value::Array(synth));
    let mut sim = toml::Table::new();
    sim.insert("draws".into(), (CURVE_DRAWS as i64).into());
    sim.insert("seed".into(), (rec.header.seed as i64).into());
    table.insert("simulation".into(), toml::Value::Table(sim));
    let synth_text = toml::to_string(&table).unwrap_or_default();
    let spec = crate::spec::from_table(
        table,
        &synth_text,
        Some(path),
        &crate::spec::Overrides::default(),
    )?;
    let h: Vec<f64> = spec
        .hypers()
        .iter()
        .map(|hy| {
            rec.fit
                .hyperparameters
                .get(&hy.name)
                .copied()
                .unwrap_or_else(|| hy.default_value())
        })
        .collect();
    let base = spec.model.draw_base(CURVE_DRAWS, &spec.plan());
    let reqs: Vec<&crate::templates::Request> = spec.beliefs.iter().map(|b| &b.request).collect();
    let mut out = vec![Vec::new(); reqs.len()];
    spec.model.simulate(&h, &base, &reqs, &mut out)?;
    Ok(out)
}

fn num_of(v: Option<&toml::Value>) -> Option<f64> {
    v.and_then(|x| x.as_float().or_else(|| x.as_integer().map(|i| i as f64)))
}

/// The survival bands of a survival template's fit folder, one per profile its beliefs
/// name (the reference profile when none); `None` for other templates or when
/// the folder has no spec.toml.
pub fn survival_bands(dir: &Path, rec: &Record) -> Result<Option<Vec<SurvivalBands>>> {
    // Every template with a survival-probability quantity (the survival
    // templates) draws its curves through it.
    let survival = crate::templates::find(&rec.header.template)
        .is_some_and(|t| t.quantities.iter().any(|q| q.name == "survival_prob"));
    if !survival {
        return Ok(None);
    }
    let path = dir.join("spec.toml");
    if !path.is_file() {
        return Ok(None);
    }
    let text = crate::limits::read_text(&path, crate::limits::TEXT_BYTES, "belief file")?;
    let table = crate::spec::parse_table(&text, Some(&path))?;
    let beliefs: Vec<toml::Table> = table
        .get("belief")
        .and_then(|b| b.as_array())
        .map(|a| a.iter().filter_map(|x| x.as_table().cloned()).collect())
        .unwrap_or_default();
    let time_unit = table
        .get("model")
        .and_then(|m| m.get("time_unit"))
        .and_then(|v| v.as_str())
        .unwrap_or("months")
        .to_string();
    // Profiles the beliefs name, in order of first mention.
    let mut profiles: Vec<String> = Vec::new();
    let mut add = |p: String| {
        if !profiles.contains(&p) {
            profiles.push(p);
        }
    };
    for b in &beliefs {
        if let Some(p) = str_of(b.get("profile")) {
            add(p);
        } else if let Some(ps) = b.get("profiles").and_then(|v| v.as_array()) {
            for p in ps.iter().filter_map(|v| v.as_str()) {
                add(p.to_string());
            }
        } else {
            add(String::new());
        }
    }
    if profiles.is_empty() {
        profiles.push(String::new());
    }
    // Markers per profile, and the time range: beyond every horizon and every
    // finite believed median quantile.
    let fit = &rec.fit;
    let mut t_max: f64 = 0.0;
    let mut markers: Vec<(String, Marker)> = Vec::new();
    for (k, (b, r)) in beliefs.iter().zip(&fit.beliefs).enumerate() {
        let q = |p: f64| {
            r.probs
                .iter()
                .position(|x| (x - p).abs() < 1e-12)
                .map_or(f64::NAN, |i| r.believed_quantiles[i])
        };
        let q3 = [q(0.1), q(0.5), q(0.9)];
        let profile = str_of(b.get("profile")).unwrap_or_default();
        let kind = match r.quantity.as_str() {
            "survival_prob" => num_of(b.get("horizon")).map(MarkerKind::SurvivalAt),
            "median_survival" => Some(MarkerKind::Median),
            _ => None,
        };
        match kind {
            Some(MarkerKind::SurvivalAt(h)) => t_max = t_max.max(h),
            Some(MarkerKind::Median) => {
                for v in q3.iter().filter(|v| v.is_finite()) {
                    t_max = t_max.max(*v);
                }
            }
            None => {
                if let Some(h) = num_of(b.get("horizon")) {
                    t_max = t_max.max(h);
                }
            }
        }
        if let Some(kind) = kind {
            markers.push((
                profile,
                Marker {
                    belief: k + 1,
                    kind,
                    q: q3,
                },
            ));
        }
    }
    if t_max <= 0.0 || !t_max.is_finite() {
        t_max = 60.0;
    }
    let t_max = nice_ceiling(1.25 * t_max);
    // An even grid plus every belief horizon, so a survival belief sits on it.
    let mut times: Vec<f64> = (0..=GRID).map(|i| t_max * i as f64 / GRID as f64).collect();
    for (_, m) in &markers {
        if let MarkerKind::SurvivalAt(h) = m.kind {
            if h > 0.0 && h < t_max {
                times.push(h);
            }
        }
    }
    times.sort_by(f64::total_cmp);
    times.dedup();
    // The same belief file with survival_prob requests on the grid instead of its beliefs.
    let uniform = {
        let mut d = toml::Table::new();
        d.insert("family".into(), "beta".into());
        d.insert("alpha".into(), 1.into());
        d.insert("beta".into(), 1.into());
        d
    };
    let mut synth = Vec::new();
    for p in &profiles {
        for t in &times[1..] {
            let mut b = toml::Table::new();
            b.insert("quantity".into(), "survival_prob".into());
            b.insert("horizon".into(), toml::Value::Float(*t));
            if !p.is_empty() {
                b.insert("profile".into(), p.clone().into());
            }
            b.insert("distribution".into(), toml::Value::Table(uniform.clone()));
            synth.push(toml::Value::Table(b));
        }
    }
    let out = resimulate(table, synth, &path, rec)?;
    let g = times.len() - 1;
    let mut result = Vec::new();
    for (pi, p) in profiles.iter().enumerate() {
        let cols = &out[pi * g..(pi + 1) * g];
        let mut bands = vec![vec![1.0]; BAND_PROBS.len()];
        for c in cols {
            for (band, q) in bands.iter_mut().zip(band_quantiles(c)) {
                band.push(q);
            }
        }
        // Sample curves: evenly spaced draws (the base draws are already random).
        let step = (CURVE_DRAWS / SAMPLE_CURVES).max(1);
        let samples = (0..SAMPLE_CURVES)
            .map(|s| {
                let i = s * step;
                std::iter::once(1.0)
                    .chain(cols.iter().map(|c| c.get(i).copied().unwrap_or(f64::NAN)))
                    .collect()
            })
            .collect();
        result.push(SurvivalBands {
            profile: p.clone(),
            time_unit: time_unit.clone(),
            times: times.clone(),
            bands,
            samples,
            markers: markers
                .iter()
                .filter(|(mp, _)| mp == p || (mp.is_empty() && p.is_empty()))
                .map(|(_, m)| m.clone())
                .collect(),
        });
    }
    Ok(Some(result))
}

/// The smallest 1, 2, 2.5 or 5 × 10^k at or above `x` (x > 0).
fn nice_ceiling(x: f64) -> f64 {
    let e = 10f64.powf(x.log10().floor());
    for m in [1.0, 2.0, 2.5, 5.0, 10.0] {
        if m * e >= x * (1.0 - 1e-12) {
            return m * e;
        }
    }
    10.0 * e
}

/// Spearman rank correlation of paired draws (ties by average rank; +∞ ranks last).
pub fn spearman(x: &[f64], y: &[f64]) -> f64 {
    let rank = |v: &[f64]| -> Vec<f64> {
        let mut idx: Vec<usize> = (0..v.len()).collect();
        idx.sort_by(|a, b| v[*a].total_cmp(&v[*b]));
        let mut r = vec![0.0; v.len()];
        let mut i = 0;
        while i < idx.len() {
            let mut j = i;
            while j + 1 < idx.len() && v[idx[j + 1]] == v[idx[i]] {
                j += 1;
            }
            let avg = 0.5 * (i + j) as f64 + 1.0;
            for k in i..=j {
                r[idx[k]] = avg;
            }
            i = j + 1;
        }
        r
    };
    let (rx, ry) = (rank(x), rank(y));
    let n = rx.len() as f64;
    let m = (n + 1.0) / 2.0;
    let (mut sxy, mut sxx, mut syy) = (0.0, 0.0, 0.0);
    for (a, b) in rx.iter().zip(&ry) {
        sxy += (a - m) * (b - m);
        sxx += (a - m) * (a - m);
        syy += (b - m) * (b - m);
    }
    if sxx == 0.0 || syy == 0.0 {
        f64::NAN
    } else {
        sxy / (sxx * syy).sqrt()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spearman_of_monotone_and_reversed() {
        // Exact by definition: a strictly increasing map has ρ = 1, a decreasing one −1.
        let x = [1.0, 2.0, 3.0, 4.0, 5.0];
        let y = [1.0, 8.0, 27.0, 64.0, f64::INFINITY];
        assert!((spearman(&x, &y) - 1.0).abs() < 1e-12);
        let z = [5.0, 4.0, 3.0, 2.0, 1.0];
        assert!((spearman(&x, &z) + 1.0).abs() < 1e-12);
        // By hand, 1 − 6Σd²/(n(n² − 1)) with d = (1, 1, 1, 1, 0): 1 − 24/120 = 0.8.
        assert!((spearman(&x, &[2.0, 1.0, 4.0, 3.0, 5.0]) - 0.8).abs() < 1e-12);
    }

    #[test]
    fn nice_ceilings() {
        assert_eq!(nice_ceiling(45.0), 50.0);
        assert_eq!(nice_ceiling(60.0), 100.0);
        assert_eq!(nice_ceiling(20.0), 20.0);
        assert_eq!(nice_ceiling(21.0), 25.0);
    }
}

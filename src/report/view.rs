//! The report's view of a fit: the record's beliefs with the draws of draws.csv.

use crate::error::{Error, Result};
use crate::export::record;
use crate::fit::{BeliefReport, FitResult};
use serde_json::Value;
use std::path::Path;

/// The believed distribution as tabulated in fit.json.
#[derive(Debug, Clone, Default)]
pub struct Curve {
    pub x: Vec<f64>,
    pub cdf: Vec<f64>,
    pub pdf: Vec<f64>,
    /// (location, mass), +∞ included.
    pub atoms: Vec<(f64, f64)>,
}

impl Curve {
    pub(super) fn inf_mass(&self) -> f64 {
        self.atoms
            .iter()
            .filter(|a| a.0.is_infinite())
            .map(|a| a.1)
            .sum()
    }
    /// x where F reaches `p` (linear between points), None outside the table.
    pub(super) fn quantile(&self, p: f64) -> Option<f64> {
        let k = self.cdf.iter().position(|c| *c >= p)?;
        if k == 0 {
            return self.x.first().copied();
        }
        let (c0, c1) = (self.cdf[k - 1], self.cdf[k]);
        let t = if c1 > c0 { (p - c0) / (c1 - c0) } else { 1.0 };
        Some(self.x[k - 1] + t * (self.x[k] - self.x[k - 1]))
    }
}

/// One belief as the report sees it: the record's report of it, its believed
/// curve in plotting form, and the implied draws of draws.csv.
#[derive(Debug, Clone)]
pub struct BeliefView {
    pub r: BeliefReport,
    pub curve: Option<Curve>,
    /// Implied draws, sorted ascending (+∞ last).
    pub draws: Vec<f64>,
    /// Each expert of a pooled belief (empty otherwise; filled by
    /// [`super::experts::attach`] from spec.toml).
    pub experts: Vec<super::experts::Expert>,
}

/// A record part as a JSON value, for display.
pub(super) fn as_value<T: serde::Serialize>(x: &T) -> Value {
    serde_json::to_value(x).unwrap_or(Value::Null)
}

/// The beliefs of a fit record with the draws of draws.csv attached; `file`
/// (the fit.json) names the record in errors.
pub fn beliefs(file: &Path, fit: &FitResult, draws_csv: &Path) -> Result<Vec<BeliefView>> {
    let cols = read_draws(draws_csv, fit)?;
    let mut out = Vec::new();
    for (k, (b, mut draws)) in fit.beliefs.iter().zip(cols).enumerate() {
        let c = &b.believed_curve;
        if c.x.len() != c.cdf.len() || c.x.len() != c.pdf.len() {
            return Err(record::bad(
                file,
                &format!("beliefs[{k}].believed_curve"),
                "x, cdf and pdf differ in length",
            ));
        }
        let curve = Some(Curve {
            x: c.x.clone(),
            cdf: c.cdf.clone(),
            pdf: c.pdf.clone(),
            atoms: c.atoms.iter().map(|a| (a.at, a.mass)).collect(),
        });
        draws.sort_by(f64::total_cmp);
        out.push(BeliefView {
            r: b.clone(),
            curve,
            draws,
            experts: Vec::new(),
        });
    }
    Ok(out)
}

/// Columns 2.. of draws.csv (column 1 is the draw number), one per belief of
/// the record `fit`, checked against it: the header is `draw` and the beliefs'
/// labels in order, the rows are numbered 1, 2, … and there are exactly
/// `fit.draws` of them (a truncated file is refused), every value is a number
/// (±inf allowed: a quantity such as a median survival time can be infinite;
/// NaN is not). Errors name the file, the line, the column and the value.
pub fn read_draws(path: &Path, fit: &FitResult) -> Result<Vec<Vec<f64>>> {
    let n = fit.beliefs.len();
    let text = crate::limits::read_text(path, crate::limits::TABLE_BYTES, "draws table")?;
    let bad = |line: usize, key: Option<String>, msg: String| {
        Error::input(
            crate::error::Location {
                file: Some(path.to_path_buf()),
                line: Some(line),
                key,
            },
            msg,
        )
    };
    let mut rd = csv::ReaderBuilder::new()
        .flexible(true)
        .from_reader(text.as_bytes());
    let header = rd
        .headers()
        .map_err(|e| bad(1, None, e.to_string()))?
        .clone();
    let want: Vec<&str> = std::iter::once("draw")
        .chain(fit.beliefs.iter().map(|b| b.label.as_str()))
        .collect();
    if header.len() != want.len() {
        return Err(bad(
            1,
            None,
            format!(
                "expected {} columns (draw + one per belief in fit.json), found {}",
                want.len(),
                header.len()
            ),
        ));
    }
    for (j, (h, w)) in header.iter().zip(&want).enumerate() {
        if h != *w {
            return Err(bad(
                1,
                None,
                format!(
                    "column {} is `{h}`, but fit.json's belief {} is `{w}`: draws.csv is not \
                     this fit's",
                    j + 1,
                    j
                ),
            ));
        }
    }
    let mut cols = vec![Vec::new(); n];
    let mut rows = 0usize;
    for (i, rec) in rd.records().enumerate() {
        let line = i + 2;
        let rec = rec.map_err(|e| bad(line, None, e.to_string()))?;
        if rec.len() != want.len() {
            return Err(bad(
                line,
                None,
                format!("{} fields, the header has {}", rec.len(), want.len()),
            ));
        }
        rows += 1;
        if rows > fit.draws {
            return Err(bad(
                line,
                None,
                format!("more rows than the {} draws fit.json records", fit.draws),
            ));
        }
        let d = rec.get(0).unwrap_or_default();
        if d.trim().parse::<usize>().ok() != Some(rows) {
            return Err(bad(
                line,
                Some("draw".into()),
                format!("`{d}` where draw number {rows} was expected"),
            ));
        }
        for (j, col) in cols.iter_mut().enumerate() {
            let s = rec.get(j + 1).unwrap_or_default();
            let v: f64 = s.trim().parse().map_err(|_| {
                bad(
                    line,
                    Some(want[j + 1].to_string()),
                    format!("`{s}` is not a number"),
                )
            })?;
            if v.is_nan() {
                return Err(bad(
                    line,
                    Some(want[j + 1].to_string()),
                    format!("`{s}`: NaN is not a draw"),
                ));
            }
            col.push(v);
        }
    }
    if rows != fit.draws {
        return Err(bad(
            rows + 2,
            None,
            format!(
                "{rows} draws, but fit.json records {}: the file is truncated or not this fit's",
                fit.draws
            ),
        ));
    }
    Ok(cols)
}

/// Mass of sorted draws ≤ x.
pub(super) fn ecdf(s: &[f64], x: f64) -> f64 {
    s.partition_point(|v| *v <= x) as f64 / s.len() as f64
}

pub(super) fn ecdf_left(s: &[f64], x: f64) -> f64 {
    s.partition_point(|v| *v < x) as f64 / s.len() as f64
}

pub(super) fn emp_q(s: &[f64], p: f64) -> f64 {
    crate::fit::verdict::empirical_quantile(s, p)
}

pub(super) fn pct(x: f64) -> String {
    if x.is_nan() {
        "—".into()
    } else {
        format!("{:.1} %", 100.0 * x)
    }
}

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
    let cols = read_draws(draws_csv, fit.beliefs.len())?;
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

/// Columns 2.. of draws.csv (column 1 is the draw number), `n` of them.
pub fn read_draws(path: &Path, n: usize) -> Result<Vec<Vec<f64>>> {
    let text = crate::limits::read_text(path, crate::limits::TABLE_BYTES, "draws table")?;
    let bad = |line: usize, msg: String| {
        Error::input(
            crate::error::Location {
                file: Some(path.to_path_buf()),
                line: Some(line),
                key: None,
            },
            msg,
        )
    };
    let mut rd = csv::Reader::from_reader(text.as_bytes());
    let header = rd.headers().map_err(|e| bad(1, e.to_string()))?.clone();
    if header.len() != n + 1 {
        return Err(bad(
            1,
            format!(
                "expected {} columns (draw + one per belief in fit.json), found {}",
                n + 1,
                header.len()
            ),
        ));
    }
    let mut cols = vec![Vec::new(); n];
    for (i, rec) in rd.records().enumerate() {
        let line = i + 2;
        let rec = rec.map_err(|e| bad(line, e.to_string()))?;
        for (j, col) in cols.iter_mut().enumerate() {
            let s = rec.get(j + 1).unwrap_or_default();
            let v: f64 = s.trim().parse().map_err(|_| {
                bad(
                    line,
                    format!("column `{}`: `{s}` is not a number", &header[j + 1]),
                )
            })?;
            if v.is_nan() {
                return Err(bad(line, format!("column `{}`: NaN", &header[j + 1])));
            }
            col.push(v);
        }
    }
    if cols.first().is_some_and(Vec::is_empty) {
        return Err(bad(2, "no draws".into()));
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

//! Beliefs from historical data, the prior effective sample size, and a
//! prior–data conflict check.
//!
//! * [`km`]: Kaplan–Meier estimate with Greenwood standard errors (Kaplan & Meier
//!   1958, JASA 53; Greenwood 1926), read from a CSV of `(time, event[, arm])` rows.
//! * [`belief`]: a summary of the estimate (survival at a horizon, the plateau, the
//!   median) or a binary count turned into a belief, discounted by a power-prior
//!   style weight w ∈ (0, 1] that scales the effective number of patients
//!   (Ibrahim & Chen 2000, Statistical Science 15) and/or an extra between-trial
//!   standard deviation τ.
//! * [`ess`]: prior effective sample size of probability-type quantities, the
//!   moment-matched Beta's a + b = m(1 − m)/v − 1.
//! * [`conflict`]: a prior-predictive check of the Kaplan–Meier survival at a
//!   horizon in new data (Box 1980, JRSS A 143; Evans & Moshonov 2006, Bayesian
//!   Analysis 1).

pub mod belief;
pub mod conflict;
pub use crate::target::ess;
pub mod km;

use crate::error::{Error, Location, Result};
use std::path::Path;

/// One observation: follow-up time and whether the event was seen (false = censored).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Obs {
    pub time: f64,
    pub event: bool,
}

fn bad(file: &Path, line: Option<usize>, key: &str, msg: impl Into<String>) -> Error {
    Error::input(
        Location {
            file: Some(file.to_path_buf()),
            line,
            key: Some(key.to_string()),
        },
        msg,
    )
}

fn header_line_of(lines: &[usize]) -> Option<usize> {
    lines.first().copied()
}

/// Read `(time, event)` rows from a CSV with a header naming `time` and `event`
/// columns (and an `arm` column when `arm` is given: only rows of that arm are kept).
/// `event` is 1/0 (also true/false). Errors name the file, line, column and value.
pub fn read_csv(path: &Path, arm: Option<&str>) -> Result<Vec<Obs>> {
    let text = crate::limits::read_text(path, crate::limits::TABLE_BYTES, "history table")?;
    parse_csv(&text, path, arm)
}

/// [`read_csv`] on text already read (`path` names it in errors).
pub fn parse_csv(text: &str, path: &Path, arm: Option<&str>) -> Result<Vec<Obs>> {
    // Comment (#) and blank lines are dropped; `lines` keeps the true line numbers
    // (one record per line: this format has no quoted multi-line fields).
    let (mut kept, mut lines) = (Vec::new(), Vec::new());
    for (i, l) in text.lines().enumerate() {
        let t = l.trim_start();
        if !(t.is_empty() || t.starts_with('#')) {
            kept.push(l);
            lines.push(i + 1);
        }
    }
    let cleaned = kept.join("\n");
    let mut rdr = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(cleaned.as_bytes());
    let header = rdr
        .headers()
        .map_err(|e| {
            bad(
                path,
                Some(1),
                "header",
                format!("cannot read the header: {e}"),
            )
        })?
        .clone();
    // A column named twice would be read from its first copy only: refuse it.
    for (j, h) in header.iter().enumerate() {
        if let Some(first) = header
            .iter()
            .take(j)
            .position(|g| g.eq_ignore_ascii_case(h))
        {
            return Err(bad(
                path,
                header_line_of(&lines),
                "header",
                format!(
                    "column `{h}` appears twice (columns {} and {}): which one holds the data?",
                    first + 1,
                    j + 1
                ),
            )
            .with_hint("rename or remove one of them"));
        }
    }
    let col = |name: &str| header.iter().position(|h| h.eq_ignore_ascii_case(name));
    let (ti, ei) = match (col("time"), col("event")) {
        (Some(t), Some(e)) => (t, e),
        _ => {
            return Err(bad(
                path,
                header_line_of(&lines),
                "header",
                format!(
                    "the header must name `time` and `event` columns; found {}",
                    header.iter().collect::<Vec<_>>().join(", ")
                ),
            )
            .with_hint("e.g. `time,event` with event 1 = event seen, 0 = censored"))
        }
    };
    let ai = match arm {
        Some(_) => Some(col("arm").ok_or_else(|| {
            bad(
                path,
                Some(1),
                "arm",
                "--arm was given but the file has no `arm` column",
            )
        })?),
        None => None,
    };
    let mut out = Vec::new();
    let mut arms_seen: Vec<String> = Vec::new();
    for (k, rec) in rdr.records().enumerate() {
        let line = lines.get(k + 1).copied();
        let rec = rec.map_err(|e| bad(path, line, "row", format!("malformed row: {e}")))?;
        if let (Some(a), Some(want)) = (ai, arm) {
            let v = rec.get(a).unwrap_or("");
            if !arms_seen.iter().any(|s| s == v) {
                arms_seen.push(v.to_string());
            }
            if v != want {
                continue;
            }
        }
        let t_s = rec.get(ti).unwrap_or("");
        let time: f64 = t_s.parse().map_err(|_| {
            bad(
                path,
                line,
                "time",
                format!("time \"{t_s}\" is not a number"),
            )
        })?;
        if !(time.is_finite() && time >= 0.0) {
            return Err(bad(
                path,
                line,
                "time",
                format!("time {t_s} must be a finite number ≥ 0"),
            ));
        }
        let e_s = rec.get(ei).unwrap_or("");
        let event = match e_s.to_ascii_lowercase().as_str() {
            "1" | "true" => true,
            "0" | "false" => false,
            _ => {
                return Err(bad(
                    path,
                    line,
                    "event",
                    format!("event \"{e_s}\" must be 1 (event) or 0 (censored)"),
                ))
            }
        };
        out.push(Obs { time, event });
    }
    if out.is_empty() {
        let msg = match arm {
            Some(a) => format!(
                "no rows with arm \"{a}\"; arms in the file: {}",
                arms_seen.join(", ")
            ),
            None => "no data rows".to_string(),
        };
        return Err(bad(path, None, "arm", msg));
    }
    if !out.iter().any(|o| o.event) {
        return Err(bad(
            path,
            None,
            "event",
            "no events in the data: the Kaplan–Meier curve is flat at 1",
        ));
    }
    Ok(out)
}

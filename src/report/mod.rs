//! The report: one self-contained HTML page, `DIR/report.html`, with inline SVG
//! plots (also written as `DIR/plots/*.svg`), built from `DIR/fit.json` and
//! `DIR/draws.csv` only — never from the spec.
//!
//! For every belief: the believed CDF (from `believed_curve` in fit.json: atoms
//! as vertical jumps, mass at +∞ in a separate "never reached" column right of
//! a broken axis) overlaid on the empirical CDF of the implied draws; the
//! believed density over a histogram of the implied draws (histogram heights
//! are count / (N · bin width), so both integrate to the mass shown); the
//! verdict, the discrepancy against its noise floor, and quantiles. Then the
//! fitted prior, the hyperparameters within their bounds, optional diagnostics
//! (`identifiability`, `pareto`, `sweep` keys, rendered when present) and the
//! caution text. The page has no external resources, prints to PDF (print CSS)
//! and carries a small script that only marks, for tests, that every plot
//! rendered.

pub mod svg;

use crate::error::{Error, Result};
use crate::export::record;
use crate::fit::{FitResult, Verdict};
use crate::output::{self, summary::CAUTION};
use serde_json::Value;
use std::fmt::Write;
use std::path::{Path, PathBuf};
use svg::{esc, Plot, BLUE, GREY, ORANGE, SKY, VERMILLION};

/// A finite atom or +∞ with believed and implied masses.
#[derive(Debug, Clone)]
pub struct AtomView {
    pub at: f64,
    pub believed: f64,
    pub implied: f64,
}

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
    fn inf_mass(&self) -> f64 {
        self.atoms
            .iter()
            .filter(|a| a.0.is_infinite())
            .map(|a| a.1)
            .sum()
    }
    /// x where F reaches `p` (linear between points), None outside the table.
    fn quantile(&self, p: f64) -> Option<f64> {
        let k = self.cdf.iter().position(|c| *c >= p)?;
        if k == 0 {
            return self.x.first().copied();
        }
        let (c0, c1) = (self.cdf[k - 1], self.cdf[k]);
        let t = if c1 > c0 { (p - c0) / (c1 - c0) } else { 1.0 };
        Some(self.x[k - 1] + t * (self.x[k] - self.x[k - 1]))
    }
}

/// One belief as the report sees it.
#[derive(Debug, Clone)]
pub struct BeliefView {
    pub label: String,
    /// Prior effective sample size (implied, believed), probability quantities only.
    pub ess: Option<f64>,
    pub believed_ess: Option<f64>,
    pub quantity: String,
    pub unit: Option<String>,
    pub stated_as: String,
    pub verdict: String,
    pub how: Vec<String>,
    pub fresh: f64,
    pub noise_floor: f64,
    pub ratio: f64,
    pub rms: f64,
    pub weight: f64,
    pub probs: Vec<f64>,
    pub believed_q: Vec<f64>,
    pub implied_q: Vec<f64>,
    pub atoms: Vec<AtomView>,
    pub implied_inf: f64,
    pub curve: Option<Curve>,
    /// Implied draws, sorted ascending (+∞ last).
    pub draws: Vec<f64>,
}

/// A record part as a JSON value, for display.
fn as_value<T: serde::Serialize>(x: &T) -> Value {
    serde_json::to_value(x).unwrap_or(Value::Null)
}

/// A JSON number, or ±inf written as a string (the record's convention).
fn number(v: &Value) -> Option<f64> {
    match v {
        Value::Number(n) => n.as_f64(),
        Value::String(s) if s == "inf" => Some(f64::INFINITY),
        Value::String(s) if s == "-inf" => Some(f64::NEG_INFINITY),
        _ => None,
    }
}

/// The code of a verdict (CSS class and mark).
fn verdict_code(v: Verdict) -> &'static str {
    match v {
        Verdict::MetWithinNoise => "met_within_noise",
        Verdict::MetApproximately => "met_approximately",
        Verdict::NotMet => "not_met",
    }
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
            label: b.label.clone(),
            quantity: b.quantity.clone(),
            unit: b.unit.clone(),
            stated_as: b.stated_as.clone(),
            verdict: verdict_code(b.verdict).to_string(),
            how: b.how.clone(),
            ess: b.ess,
            believed_ess: b.believed_ess,
            fresh: b.fresh,
            noise_floor: b.noise_floor,
            ratio: b.ratio,
            rms: b.rms_cdf_gap,
            weight: b.weight,
            probs: b.probs.clone(),
            believed_q: b.believed_quantiles.clone(),
            implied_q: b.implied_quantiles.clone(),
            atoms: b
                .atoms
                .iter()
                .map(|a| AtomView {
                    at: a.at,
                    believed: a.believed,
                    implied: a.implied,
                })
                .collect(),
            implied_inf: b.implied_mass_at_inf,
            curve,
            draws,
        });
    }
    Ok(out)
}

/// Columns 2.. of draws.csv (column 1 is the draw number), `n` of them.
pub fn read_draws(path: &Path, n: usize) -> Result<Vec<Vec<f64>>> {
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
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
fn ecdf(s: &[f64], x: f64) -> f64 {
    s.partition_point(|v| *v <= x) as f64 / s.len() as f64
}

fn ecdf_left(s: &[f64], x: f64) -> f64 {
    s.partition_point(|v| *v < x) as f64 / s.len() as f64
}

fn emp_q(s: &[f64], p: f64) -> f64 {
    crate::fit::verdict::empirical_quantile(s, p)
}

fn pct(x: f64) -> String {
    if x.is_nan() {
        "—".into()
    } else {
        format!("{:.1} %", 100.0 * x)
    }
}

use crate::numerics::format::html as fnum;

/// The x range shown for a belief: 1–99 % of the finite parts of both
/// distributions, plus the finite atoms, padded by 4 %.
fn x_range(b: &BeliefView) -> (f64, f64) {
    let fin: Vec<f64> = b.draws.iter().copied().filter(|v| v.is_finite()).collect();
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    if !fin.is_empty() {
        lo = lo.min(emp_q(&fin, 0.01));
        hi = hi.max(emp_q(&fin, 0.99));
    }
    if let Some(c) = &b.curve {
        let m = 1.0 - c.inf_mass();
        if let (Some(a), Some(z)) = (c.quantile(0.01 * m), c.quantile(0.99 * m)) {
            lo = lo.min(a);
            hi = hi.max(z);
        }
        for (at, _) in &c.atoms {
            if at.is_finite() {
                lo = lo.min(*at);
                hi = hi.max(*at);
            }
        }
    } else {
        for q in b.believed_q.iter().filter(|q| q.is_finite()) {
            lo = lo.min(*q);
            hi = hi.max(*q);
        }
    }
    if !lo.is_finite() || !hi.is_finite() {
        return (0.0, 1.0);
    }
    if hi <= lo {
        let d = if lo == 0.0 { 1.0 } else { 0.1 * lo.abs() };
        return (lo - d, hi + d);
    }
    let pad = 0.04 * (hi - lo);
    let (mut a, z) = (lo - pad, hi + pad);
    // Start at zero for non-negative quantities close to it.
    if lo >= 0.0 && (a < 0.0 || lo < 0.3 * (hi - lo)) {
        a = 0.0;
    }
    (a, z)
}

fn axis_label(b: &BeliefView) -> String {
    match &b.unit {
        Some(u) => format!("{} ({u})", b.label),
        None => b.label.clone(),
    }
}

const INF_COL: f64 = 104.0;

/// Believed and implied CDFs overlaid.
pub fn cdf_plot(id: &str, b: &BeliefView) -> String {
    let (lo, hi) = x_range(b);
    let bel_inf = b.curve.as_ref().map_or(0.0, Curve::inf_mass);
    let has_inf = bel_inf > 0.0 || b.implied_inf > 0.0;
    let mut p = Plot::new(
        id,
        &format!("{}: believed and implied cumulative distribution", b.label),
        (lo, hi, false),
        (0.0, 1.0),
        if has_inf { INF_COL } else { 0.0 },
    );
    p.axes(&axis_label(b), "probability of a value ≤ x");
    // Implied: empirical CDF on a fine grid, with exact jumps at atoms.
    let s = &b.draws;
    let mut xs: Vec<f64> = (0..=400)
        .map(|k| lo + (hi - lo) * k as f64 / 400.0)
        .collect();
    let atom_locs: Vec<f64> = b
        .atoms
        .iter()
        .map(|a| a.at)
        .filter(|a| a.is_finite())
        .collect();
    xs.extend(&atom_locs);
    xs.sort_by(f64::total_cmp);
    let mut imp = Vec::new();
    for x in &xs {
        if atom_locs.contains(x) {
            imp.push((*x, ecdf_left(s, *x)));
        }
        imp.push((*x, ecdf(s, *x)));
    }
    // Believed.
    let mut bel = Vec::new();
    if let Some(c) = &b.curve {
        let atoms: Vec<(f64, f64)> = c
            .atoms
            .iter()
            .copied()
            .filter(|a| a.0.is_finite())
            .collect();
        // Left of the first tabulated point the CDF stays at that point's left limit.
        if let (Some(x0), Some(f0)) = (c.x.first(), c.cdf.first()) {
            let left = atoms.iter().find(|a| a.0 == *x0).map_or(*f0, |a| f0 - a.1);
            bel.push((lo.min(*x0), left));
        }
        for (x, f) in c.x.iter().zip(&c.cdf) {
            if let Some((_, m)) = atoms.iter().find(|a| a.0 == *x) {
                bel.push((*x, f - m));
            }
            bel.push((*x, *f));
        }
        if let Some(l) = c.cdf.last() {
            bel.push((hi.max(c.x.last().copied().unwrap_or(hi)), *l));
        }
        bel.sort_by(|a, b| a.0.total_cmp(&b.0));
    }
    p.line(
        &imp,
        VERMILLION,
        2.2,
        Some("6 3"),
        "implied by the fitted prior (empirical CDF of the draws)",
    );
    if b.curve.is_some() {
        p.line(&bel, BLUE, 2.2, None, "believed");
    } else {
        for (q, pr) in b.believed_q.iter().zip(&b.probs) {
            p.point(
                *q,
                *pr,
                BLUE,
                4.0,
                &format!("believed {}% quantile", pr * 100.0),
            );
        }
    }
    if has_inf {
        let xe = p.x.p1;
        let xc = xe + INF_COL - 40.0;
        let (y0, y1) = (p.y.p0, p.y.p1);
        // Broken-axis marks and the ∞ column.
        p.raw_line(xe + 8.0, y0 + 4.0, xe + 14.0, y0 - 4.0, GREY, 1.2, None);
        p.raw_line(xe + 13.0, y0 + 4.0, xe + 19.0, y0 - 4.0, GREY, 1.2, None);
        p.raw_line(xe + 22.0, y0, xe + INF_COL - 4.0, y0, GREY, 1.0, None);
        p.raw_line(xc, y1, xc, y0, "#bbb", 1.0, Some("2 3"));
        p.text(xc, y0 + 18.0, "middle", "", "∞");
        p.text(xc, y0 + 31.0, "middle", "note", "never reached");
        let mut series = Vec::new();
        if let Some(c) = &b.curve {
            series.push((
                c.cdf.last().copied().unwrap_or(1.0 - bel_inf),
                1.0 - bel_inf,
                BLUE,
                None,
            ));
        }
        series.push((ecdf(s, hi), 1.0 - b.implied_inf, VERMILLION, Some("6 3")));
        for (k, (edge, below, col, dash)) in series.into_iter().enumerate() {
            // Side by side, so both jumps stay visible when their masses agree.
            let xj = xc + if k == 0 { -4.0 } else { 4.0 };
            let (ye, yb, yt) = (p.y.px(edge), p.y.px(below), p.y.px(1.0));
            p.raw_line(xe, ye, xj, yb, col, 1.6, Some("1 3"));
            p.raw_line(xj, yb, xj, yt, col, 3.0, dash);
        }
        let ym = 0.5 * (y0 + y1);
        p.text(xc, ym - 8.0, "middle", "note", "mass at ∞");
        p.text(
            xc,
            ym + 8.0,
            "middle",
            "note",
            &format!("believed {}", pct(bel_inf)),
        );
        p.text(
            xc,
            ym + 22.0,
            "middle",
            "note",
            &format!("implied {}", pct(b.implied_inf)),
        );
    }
    p.legend(&[
        (BLUE, None, "believed"),
        (VERMILLION, Some("6 3"), "implied by the fitted prior"),
    ]);
    p.finish(false)
}

/// Believed density over a histogram of the implied draws.
pub fn density_plot(id: &str, b: &BeliefView) -> String {
    let (lo, hi) = x_range(b);
    let n = b.draws.len() as f64;
    let atom_locs: Vec<f64> = b
        .atoms
        .iter()
        .map(|a| a.at)
        .filter(|a| a.is_finite())
        .collect();
    let fin: Vec<f64> = b
        .draws
        .iter()
        .copied()
        .filter(|v| v.is_finite() && !atom_locs.contains(v))
        .collect();
    // Freedman–Diaconis bin width (Freedman & Diaconis 1981), 15–60 bins over the range.
    let bins = if fin.len() > 3 {
        let iqr = emp_q(&fin, 0.75) - emp_q(&fin, 0.25);
        let w = 2.0 * iqr / (fin.len() as f64).cbrt();
        if w > 0.0 {
            ((hi - lo) / w).round().clamp(15.0, 60.0) as usize
        } else {
            30
        }
    } else {
        30
    };
    let bw = (hi - lo) / bins as f64;
    let mut counts = vec![0usize; bins];
    for v in &fin {
        if *v >= lo && *v <= hi {
            counts[(((v - lo) / bw) as usize).min(bins - 1)] += 1;
        }
    }
    let bars: Vec<(f64, f64, f64)> = counts
        .iter()
        .enumerate()
        .map(|(k, c)| {
            (
                lo + k as f64 * bw,
                lo + (k + 1) as f64 * bw,
                *c as f64 / (n * bw),
            )
        })
        .collect();
    let mut ymax = bars.iter().map(|b| b.2).fold(0.0, f64::max);
    let bel: Vec<(f64, f64)> = b
        .curve
        .as_ref()
        .map(|c| {
            c.x.iter()
                .zip(&c.pdf)
                .filter(|(x, _)| **x >= lo && **x <= hi && !atom_locs.contains(x))
                .map(|(x, d)| (*x, *d))
                .collect()
        })
        .unwrap_or_default();
    ymax = bel.iter().map(|p| p.1).fold(ymax, f64::max);
    if ymax.is_nan() || ymax <= 0.0 {
        ymax = 1.0;
    }
    let mut p = Plot::new(
        id,
        &format!(
            "{}: believed density and histogram of the implied draws",
            b.label
        ),
        (lo, hi, false),
        (0.0, ymax * 1.1),
        0.0,
    );
    let ylab = match &b.unit {
        Some(u) => format!("density (per {u})"),
        None => "density".into(),
    };
    p.axes(&axis_label(b), &ylab);
    p.bars(
        &bars,
        "#f3c9ad",
        "#c0693a",
        "histogram of the implied draws",
    );
    if !bel.is_empty() {
        p.line(&bel, BLUE, 2.4, None, "believed density");
    }
    let mut note_y = p.y.p1 + 14.0;
    let right = p.x.p1 - 4.0;
    for a in &b.atoms {
        let place = if a.at.is_infinite() {
            "never reached (∞)".to_string()
        } else {
            format!("at {}", fnum(a.at))
        };
        p.text(
            right,
            note_y,
            "end",
            "note",
            &format!(
                "point mass {place}: believed {}, implied {}",
                pct(a.believed),
                pct(a.implied)
            ),
        );
        note_y += 14.0;
        if a.at.is_finite() && a.at >= lo && a.at <= hi {
            let x = p.x.px(a.at);
            p.raw_line(x, p.y.p0, x, p.y.p1 + 4.0, SKY, 2.0, Some("2 2"));
        }
    }
    if b.implied_inf > 0.0 && !b.atoms.iter().any(|a| a.at.is_infinite()) {
        p.text(
            right,
            note_y,
            "end",
            "note",
            &format!("implied never reached (∞): {}", pct(b.implied_inf)),
        );
    }
    p.legend(&[
        (BLUE, None, "believed"),
        ("#c0693a", None, "implied (histogram)"),
    ]);
    p.finish(false)
}

/// Free hyperparameters within their fitting bounds, one track each.
pub fn hyper_plot(id: &str, fit: &FitResult) -> Option<String> {
    let free = &fit.free;
    if free.is_empty() {
        return None;
    }
    let row = 40.0;
    let h = 40.0 + row * free.len() as f64;
    let (x0, x1) = (200.0, svg::W - 60.0);
    let mut b = String::new();
    let _ = writeln!(b, "<svg class=\"plot\" id=\"{id}\" viewBox=\"0 0 {} {h}\" width=\"{}\" height=\"{h}\" role=\"img\" aria-labelledby=\"{id}-title\" font-family=\"system-ui, -apple-system, 'Segoe UI', Roboto, 'DejaVu Sans', sans-serif\"><title id=\"{id}-title\">Fitted hyperparameters within their bounds</title>", svg::W, svg::W);
    let _ = writeln!(
        b,
        "<rect class=\"bg\" x=\"0\" y=\"0\" width=\"{}\" height=\"{h}\" fill=\"#fff\"/>",
        svg::W
    );
    let _ = writeln!(b, "<text class=\"note\" x=\"10\" y=\"18\">fitted value (dot) within the bounds it was fitted in; log scale where the bounds span ≥ 100×</text>");
    for (k, name) in free.iter().enumerate() {
        let y = 44.0 + row * k as f64;
        let v = fit.hyperparameters.get(name).copied().unwrap_or(f64::NAN);
        let Some(&(lo, hi)) = fit.bounds.get(name) else {
            continue;
        };
        let log = lo > 0.0 && hi / lo >= 100.0;
        let t = if log {
            (v.ln() - lo.ln()) / (hi.ln() - lo.ln())
        } else {
            (v - lo) / (hi - lo)
        };
        let px = x0 + t.clamp(0.0, 1.0) * (x1 - x0);
        let near = !(0.001..=0.999).contains(&t);
        let _ = writeln!(
            b,
            "<text x=\"10\" y=\"{:.1}\">{}</text>",
            y + 4.0,
            esc(name)
        );
        let _ = writeln!(
            b,
            "<text class=\"note\" x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\">{}</text>",
            x0 - 6.0,
            y + 4.0,
            esc(&fnum(lo))
        );
        let _ = writeln!(
            b,
            "<text class=\"note\" x=\"{:.1}\" y=\"{:.1}\">{}</text>",
            x1 + 6.0,
            y + 4.0,
            esc(&fnum(hi))
        );
        let _ = writeln!(b, "<line x1=\"{x0}\" x2=\"{x1}\" y1=\"{y}\" y2=\"{y}\" stroke=\"#bbb\" stroke-width=\"6\" stroke-linecap=\"round\"/>");
        let col = if near { ORANGE } else { BLUE };
        let _ = writeln!(b, "<circle cx=\"{px:.1}\" cy=\"{y}\" r=\"7\" fill=\"{col}\" stroke=\"#fff\" stroke-width=\"1.5\"><title>{} = {}</title></circle>", esc(name), esc(&fnum(v)));
        let _ = writeln!(
            b,
            "<text class=\"note\" x=\"{px:.1}\" y=\"{:.1}\" text-anchor=\"middle\">{}{}</text>",
            y - 11.0,
            esc(&fnum(v)),
            if near { " (at a bound)" } else { "" }
        );
    }
    b.push_str("</svg>\n");
    Some(b)
}

/// A numeric table found in a diagnostics value: (key path, column names, rows).
fn numeric_table(v: &Value) -> Option<(Vec<String>, Vec<Vec<f64>>)> {
    let arr = match v {
        Value::Array(a) => a,
        Value::Object(o) => return o.values().find_map(numeric_table),
        _ => return None,
    };
    let first = arr.first()?.as_object()?;
    let cols: Vec<String> = first
        .iter()
        .filter(|(_, x)| number(x).is_some())
        .map(|(k, _)| k.clone())
        .collect();
    if cols.len() < 2 {
        return None;
    }
    let rows: Vec<Vec<f64>> = arr
        .iter()
        .map(|r| {
            cols.iter()
                .map(|c| r.get(c).and_then(number).unwrap_or(f64::NAN))
                .collect()
        })
        .collect();
    Some((cols, rows))
}

/// A scatter (and, for sweeps, a line) of the first two numeric columns.
fn diagnostic_plot(id: &str, key: &str, v: &Value) -> Option<String> {
    let (cols, rows) = numeric_table(v)?;
    let xi = cols.iter().position(|c| c == "kappa").unwrap_or(0);
    let yi = (0..cols.len()).find(|i| *i != xi)?;
    let mut pts: Vec<(f64, f64)> = rows
        .iter()
        .map(|r| (r[xi], r[yi]))
        .filter(|(x, y)| x.is_finite() && y.is_finite())
        .collect();
    if pts.is_empty() {
        return None;
    }
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    let ext = |f: fn(&(f64, f64)) -> f64| {
        let lo = pts.iter().map(f).fold(f64::INFINITY, f64::min);
        let hi = pts.iter().map(f).fold(f64::NEG_INFINITY, f64::max);
        let pad = if hi > lo {
            0.06 * (hi - lo)
        } else {
            0.5 * lo.abs().max(1e-9)
        };
        (lo - pad, hi + pad)
    };
    let (xl, xh) = ext(|p| p.0);
    let (yl, yh) = ext(|p| p.1);
    let mut p = Plot::new(
        id,
        &format!("{key}: {} against {}", cols[yi], cols[xi]),
        (xl, xh, false),
        (yl, yh),
        0.0,
    );
    p.axes(&cols[xi], &cols[yi]);
    if key == "sweep" {
        p.line(&pts, BLUE, 1.8, None, key);
    }
    for (x, y) in &pts {
        p.point(
            *x,
            *y,
            BLUE,
            3.5,
            &format!("{} = {}, {} = {}", cols[xi], fnum(*x), cols[yi], fnum(*y)),
        );
    }
    Some(p.finish(false))
}

/// Everything the report writes: (relative path, bytes).
pub fn render(dir: &Path) -> Result<Vec<(PathBuf, Vec<u8>)>> {
    let rec = record::read(&dir.join("fit.json"))?;
    let fit = &rec.fit;
    let bs = beliefs(&rec.file, fit, &dir.join("draws.csv"))?;
    let h = &rec.header;
    let mut files: Vec<(PathBuf, Vec<u8>)> = Vec::new();
    let mut svgs = |name: &str, inline: &str| {
        // Standalone copy: add the namespace and the plot styles.
        let standalone = inline
            .replacen("<svg ", "<svg xmlns=\"http://www.w3.org/2000/svg\" ", 1)
            .replacen(
                "</title>\n",
                &format!("</title>\n{}", svg::STANDALONE_STYLE),
                1,
            );
        files.push((
            PathBuf::from("plots").join(format!("{name}.svg")),
            standalone.into_bytes(),
        ));
    };
    let mut html = String::new();
    let discrepancy = match fit.discrepancy {
        crate::discrepancy::Kind::CramerVonMises => "cramer-von-mises",
        crate::discrepancy::Kind::AndersonDarling => "anderson-darling",
    };
    let _ = writeln!(html, "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<meta name=\"generator\" content=\"priorsmith {ver}\">\n<title>Prior report — {title}</title>\n<style>{CSS}</style>\n</head>\n<body>\n<main>\n<header>\n<p class=\"kicker\">priorsmith prior report</p>\n<h1>{title}</h1>\n<p class=\"meta\">template <b>{tpl}</b> · {draws} prior draws · seed {seed} · discrepancy {disc} · priorsmith {ver} · spec sha256 <code title=\"{dig}\">{dshort}</code> · report written {date}</p>",
        ver = esc(&h.tool_version),
        title = esc(&h.title),
        tpl = esc(&h.template),
        draws = h.draws,
        seed = h.seed,
        disc = esc(discrepancy),
        dig = esc(&h.spec_digest),
        dshort = esc(&h.spec_digest[..12.min(h.spec_digest.len())]),
        date = esc(&h.date),
    );
    let overall = verdict_code(fit.verdict);
    let _ = writeln!(html, "<p class=\"verdict {overall}\"><span class=\"mark\">{}</span> Overall: beliefs {}</p>\n<aside class=\"caution\" role=\"note\"><b>Caution.</b> {}</aside>\n</header>",
        mark(overall),
        esc(&h.verdict),
        esc(CAUTION.trim_start_matches("Caution: "))
    );
    // Summary table.
    html.push_str("<section>\n<h2>How well the fitted prior meets each belief</h2>\n<table class=\"summary\"><thead><tr><th>belief</th><th>stated as</th><th>weight</th><th title=\"discrepancy on fresh draws\">discrepancy</th><th title=\"Monte Carlo noise floor\">noise floor</th><th>ratio</th><th title=\"root-mean-square CDF gap beyond noise\">CDF gap</th><th>verdict</th><th title=\"prior effective sample size, moment-matched Beta a + b: believed / implied\">ESS</th></tr></thead><tbody>\n");
    for (k, b) in bs.iter().enumerate() {
        let ess = match (b.believed_ess, b.ess) {
            (None, None) => "—".to_string(),
            (x, y) => format!(
                "{} / {}",
                x.map_or("—".into(), |v| format!("{v:.1}")),
                y.map_or("—".into(), |v| format!("{v:.1}"))
            ),
        };
        let _ = writeln!(
            html,
            "<tr><td><a href=\"#belief-{k}\">{}</a></td><td>{}</td><td>{:.2}</td><td>{:.3e}</td><td>{:.3e}</td><td>{:.2}</td><td>{:.4}</td><td class=\"v {}\"><span class=\"mark\">{}</span> {}</td><td>{}</td></tr>",
            esc(&b.label), esc(&b.stated_as), b.weight, b.fresh, b.noise_floor, b.ratio, b.rms, b.verdict, mark(&b.verdict), esc(&b.verdict.replace('_', " ")), esc(&ess)
        );
    }
    html.push_str("</tbody></table>\n<p class=\"help\">The discrepancy is computed on fresh prior draws, independent of those the fit used. A ratio near 1 means the believed and implied distributions cannot be told apart with this many draws (<i>met within noise</i>); <i>met approximately</i> means the root-mean-square gap between the CDFs, beyond noise, is within the tolerance.</p>\n</section>\n");
    // One section per belief.
    for (k, b) in bs.iter().enumerate() {
        let cdf = cdf_plot(&format!("belief-{k}-cdf"), b);
        let den = density_plot(&format!("belief-{k}-density"), b);
        svgs(&format!("belief-{k}-cdf"), &cdf);
        svgs(&format!("belief-{k}-density"), &den);
        let _ = writeln!(html, "<section class=\"belief\" id=\"belief-{k}\">\n<h2>{}</h2>\n<p class=\"sub\">quantity <code>{}</code>{} · stated as {} · <span class=\"v {}\"><span class=\"mark\">{}</span> {}</span></p>",
            esc(&b.label),
            esc(&b.quantity),
            b.unit.as_ref().map(|u| format!(" in {}", esc(u))).unwrap_or_default(),
            esc(&b.stated_as),
            b.verdict,
            mark(&b.verdict),
            esc(&b.verdict.replace('_', " "))
        );
        if !b.how.is_empty() {
            html.push_str("<ul class=\"how\">");
            for x in &b.how {
                let _ = write!(html, "<li>{}</li>", esc(x));
            }
            html.push_str("</ul>\n");
        }
        let _ = writeln!(html, "<div class=\"figs\">\n<figure>{cdf}<figcaption>Cumulative distribution: believed (solid blue) and implied by the fitted prior (dashed vermillion, {} draws). Point masses appear as vertical jumps{}.</figcaption></figure>\n<figure>{den}<figcaption>Density of the continuous part: believed (blue line) over a histogram of the implied draws; bar areas are fractions of all draws. The x range covers 1–99 % of both distributions.</figcaption></figure>\n</div>",
            b.draws.len(),
            if b.implied_inf > 0.0 || b.curve.as_ref().is_some_and(|c| c.inf_mass() > 0.0) {
                "; the column at ∞ holds the mass that is never reached"
            } else {
                ""
            }
        );
        html.push_str("<table class=\"quant\"><thead><tr><th>probability</th>");
        for p in &b.probs {
            let _ = write!(html, "<th>{}</th>", esc(&format!("{} %", p * 100.0)));
        }
        html.push_str("</tr></thead><tbody><tr><th>believed</th>");
        for q in &b.believed_q {
            let _ = write!(html, "<td>{}</td>", fnum(*q));
        }
        html.push_str("</tr><tr><th>implied</th>");
        for q in &b.implied_q {
            let _ = write!(html, "<td>{}</td>", fnum(*q));
        }
        html.push_str("</tr></tbody></table>\n");
        if !b.atoms.is_empty() {
            html.push_str("<table class=\"atoms\"><thead><tr><th>point mass at</th><th>believed</th><th>implied</th></tr></thead><tbody>");
            for a in &b.atoms {
                let _ = write!(
                    html,
                    "<tr><td>{}</td><td>{}</td><td>{}</td></tr>",
                    if a.at.is_infinite() {
                        "∞ (never reached)".into()
                    } else {
                        fnum(a.at)
                    },
                    pct(a.believed),
                    pct(a.implied)
                );
            }
            html.push_str("</tbody></table>\n");
        }
        html.push_str("</section>\n");
    }
    // The prior.
    html.push_str("<section id=\"prior\">\n<h2>The fitted prior</h2>\n<table class=\"prior\"><thead><tr><th>parameter</th><th>meaning</th><th>family</th><th>parameters</th></tr></thead><tbody>\n");
    for st in &fit.prior {
        let params = if st.code.is_some() || st.params.is_empty() {
            "(supplied by the template)".to_string()
        } else {
            st.params
                .iter()
                .map(|(n, v)| format!("{n} = {}", fnum(*v)))
                .collect::<Vec<_>>()
                .join(", ")
        };
        let _ = writeln!(
            html,
            "<tr><td><code>{}</code></td><td>{}</td><td>{}</td><td>{}</td></tr>",
            esc(&st.parameter),
            esc(&st.about),
            esc(&st.family),
            esc(&params)
        );
    }
    html.push_str("</tbody></table>\n<p class=\"help\"><code>priorsmith export DIR --to stan|pymc|brms|json</code> writes this prior as code.</p>\n");
    html.push_str("<h3>Hyperparameters</h3>\n<table class=\"hyper\"><thead><tr><th>hyperparameter</th><th>value</th><th>how set</th></tr></thead><tbody>\n");
    for name in &fit.order {
        let v = fit.hyperparameters.get(name).copied().unwrap_or(f64::NAN);
        let how = match fit.bounds.get(name) {
            Some(&(lo, hi)) => {
                let near = (v - lo).abs() < 1e-3 * (hi - lo) || (hi - v).abs() < 1e-3 * (hi - lo);
                format!(
                    "fitted in [{}, {}]{}",
                    fnum(lo),
                    fnum(hi),
                    if near { " — at a bound" } else { "" }
                )
            }
            _ => "fixed in the belief file".into(),
        };
        let _ = writeln!(
            html,
            "<tr><td><code>{}</code></td><td>{}</td><td>{}</td></tr>",
            esc(name),
            fnum(v),
            esc(&how)
        );
    }
    html.push_str("</tbody></table>\n");
    if let Some(hp) = hyper_plot("hyperparameters", fit) {
        svgs("hyperparameters", &hp);
        let _ = writeln!(html, "<figure class=\"wide\">{hp}<figcaption>Each free hyperparameter's fitted value (dot) within the bounds it was fitted in; orange marks a value at a bound, where the bounds rather than the beliefs decided.</figcaption></figure>");
    }
    html.push_str("</section>\n");
    // Optional diagnostics, present when other parts of the program wrote them.
    // The record's diagnostics as JSON values: shown as recorded, and plotted
    // when they hold a numeric table.
    let mut diag: Vec<(&str, &str, Value)> = vec![(
        "identifiability",
        "Directions the beliefs leave undetermined",
        as_value(&fit.identifiability),
    )];
    if let Some(front) = &fit.pareto {
        diag.push((
            "pareto",
            "Pareto front: faithfulness against spread",
            as_value(front),
        ));
    }
    if !diag.is_empty() {
        html.push_str("<section id=\"diagnostics\">\n<h2>Diagnostics</h2>\n");
        for (key, title, v) in diag {
            let _ = writeln!(html, "<h3>{}</h3>", esc(title));
            if let Some(p) = diagnostic_plot(&format!("diag-{key}"), key, &v) {
                svgs(&format!("diag-{key}"), &p);
                let _ = writeln!(html, "<figure>{p}<figcaption>From the <code>{key}</code> entry of fit.json.</figcaption></figure>");
            }
            let pretty = serde_json::to_string_pretty(&v).unwrap_or_default();
            let _ = writeln!(html, "<details><summary>{key} (as recorded in fit.json)</summary><pre>{}</pre></details>", esc(&pretty));
        }
        html.push_str("</section>\n");
    }
    let _ = writeln!(html, "<footer><p>{}</p><p>Written by <code>priorsmith report</code> from fit.json and draws.csv in this folder; the plots are also in <code>plots/</code> as SVG files.</p></footer>\n</main>\n<script>{JS}</script>\n</body>\n</html>",
        esc(CAUTION)
    );
    files.push((PathBuf::from("report.html"), html.into_bytes()));
    Ok(files)
}

fn mark(verdict: &str) -> &'static str {
    match verdict {
        "met_within_noise" => "✓",
        "met_approximately" => "≈",
        "not_met" => "✗",
        _ => "?",
    }
}

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

const CSS: &str = r#"
:root{--ink:#1d1d1f;--muted:#555;--rule:#ddd;--blue:#0072B2;--verm:#D55E00;--green:#009E73;--orange:#E69F00}
*{box-sizing:border-box}
body{margin:0;background:#f6f6f4;color:var(--ink);font:15px/1.5 system-ui,-apple-system,"Segoe UI",Roboto,"DejaVu Sans",sans-serif}
main{max-width:1180px;margin:0 auto;padding:28px 28px 48px;background:#fff}
h1{font-size:26px;line-height:1.25;margin:2px 0 6px}
h2{font-size:19px;margin:34px 0 6px;padding-top:10px;border-top:1px solid var(--rule)}
h3{font-size:16px;margin:22px 0 6px}
.kicker{margin:0;color:var(--muted);font-size:13px;letter-spacing:.06em;text-transform:uppercase}
.meta,.sub,.help,figcaption{color:var(--muted);font-size:13px}
.meta{margin:0 0 12px}
code{font:12.5px ui-monospace,SFMono-Regular,Menlo,Consolas,monospace}
.verdict{font-size:17px;font-weight:600;margin:10px 0}
.mark{display:inline-block;width:1.3em;text-align:center;font-weight:700}
.met_within_noise .mark,.v.met_within_noise .mark{color:var(--green)}
.met_approximately .mark,.v.met_approximately .mark{color:var(--orange)}
.not_met .mark,.v.not_met .mark{color:var(--verm)}
.caution{border-left:4px solid var(--orange);background:#fdf6e7;padding:10px 14px;margin:12px 0 4px;font-size:14px}
table{border-collapse:collapse;margin:8px 0 4px;font-size:13.5px}
th,td{padding:4px 10px;border-bottom:1px solid var(--rule);text-align:left;vertical-align:top}
thead th{border-bottom:2px solid #999;font-weight:600}
table.quant td,table.summary td:nth-child(n+3):not(:last-child){text-align:right;font-variant-numeric:tabular-nums}
table.quant td{text-align:right;font-variant-numeric:tabular-nums}
.how{margin:4px 0 8px;padding-left:20px;color:#6b2d00}
.figs{display:flex;flex-wrap:wrap;gap:18px}
figure{margin:8px 0;flex:1 1 520px;max-width:580px}
figure.wide{max-width:620px}
svg.plot{width:100%;height:auto;display:block}
svg.plot text{font-size:12px;fill:#222}
svg.plot .label{font-size:13px}
svg.plot .note{font-size:11px;fill:#444}
svg.plot .grid line{stroke:#e6e6e6;stroke-width:1}
svg.plot .axis line{stroke:#444;stroke-width:1}
details{margin:6px 0}
pre{background:#f4f4f4;padding:8px;overflow:auto;font-size:12px}
footer{margin-top:36px;padding-top:10px;border-top:1px solid var(--rule);color:var(--muted);font-size:12.5px}
@media print{
  @page{size:A4;margin:14mm}
  body{background:#fff;font-size:11pt}
  main{max-width:none;padding:0}
  h2{break-after:avoid}
  section.belief,figure,table{break-inside:avoid}
  .figs{gap:8px}
  figure{flex:1 1 45%}
  a{color:inherit;text-decoration:none}
  details{display:none}
}
"#;

/// Marks for automated checks (headless browser): the number of plots that
/// rendered with a non-empty box, and any script error. Nothing visible.
const JS: &str = r#"
(function(){
  var errs=[];
  window.addEventListener('error',function(e){errs.push(String(e.message));document.documentElement.setAttribute('data-errors',errs.join(' | '));});
  function check(){
    var plots=document.querySelectorAll('svg.plot'),ok=0;
    for(var i=0;i<plots.length;i++){var r=plots[i].getBoundingClientRect();if(r.width>50&&r.height>50&&plots[i].querySelector('path,rect,circle,line'))ok++;}
    document.documentElement.setAttribute('data-plots',String(plots.length));
    document.documentElement.setAttribute('data-plots-rendered',String(ok));
  }
  if(document.readyState==='complete'){check();}else{window.addEventListener('load',check);}
})();
"#;

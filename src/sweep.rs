//! Sensitivity of a fit to the width of the beliefs.
//!
//! For each width factor w the chosen beliefs are widened about their medians
//! (see [`crate::target::widened`]: F_w(x) = F(g⁻¹(m + (g(x) − m)/w)) on the
//! quantity's working scale g, atoms unchanged) and the free hyperparameters are
//! refitted. At w = 1 the original belief is used unchanged, and that fit is a
//! cold start exactly as `fit` runs it, so its hyperparameters equal `fit`'s bit
//! for bit (same spec, same seed).
//!
//! Warm starts: the fit at the width nearest 1 (on the log scale) is the anchor;
//! the wider widths are fitted in increasing order and the narrower ones in
//! decreasing order, each adding the previous width's optimum as an extra start
//! (`fit::fit_point(.., warm, ..)`). The two chains run in parallel (rayon::join), and
//! every fit is a deterministic function of its spec, seed and warm start, so the
//! sweep gives the same numbers on any thread count.
//!
//! Outputs: a table with one row per width (every hyperparameter, total
//! discrepancies, verdict, and each belief's believed and implied quantiles at
//! [`crate::fit::verdict::PROBS`]) and an SVG plot of the same against width
//! (drawn with `output::svg`).

use crate::error::{Error, Result};
use crate::fit::verdict::PROBS;
use crate::fit::{self, FitResult};
use crate::spec::Spec;
use crate::target::quantiles::Scale;
use crate::target::widened::widen;
use crate::target::Target;
use std::time::Instant;

/// One refit of the sweep.
#[derive(Debug, Clone)]
pub struct SweepPoint {
    pub width: f64,
    pub result: FitResult,
}

/// Check and sort width factors (finite, > 0, distinct).
/// Narrowest and widest width factors a sweep takes.
pub const MIN_WIDTH: f64 = 0.01;
pub const MAX_WIDTH: f64 = 100.0;

pub fn check_widths(widths: &[f64]) -> std::result::Result<Vec<f64>, String> {
    if widths.is_empty() {
        return Err("give at least one width factor".into());
    }
    let mut w = widths.to_vec();
    for x in &w {
        if !(x.is_finite() && *x > 0.0) {
            return Err(format!("width factor {x} must be a finite number > 0"));
        }
        if !(MIN_WIDTH..=MAX_WIDTH).contains(x) {
            return Err(format!(
                "width factor {x:e} is outside [{MIN_WIDTH}, {MAX_WIDTH}] (a belief {MAX_WIDTH}× wider or narrower says nothing more)"
            ));
        }
    }
    w.sort_by(f64::total_cmp);
    if let Some(d) = w.windows(2).find(|p| p[0] == p[1]) {
        return Err(format!("width factor {} is given twice", d[0]));
    }
    Ok(w)
}

/// `spec` with the beliefs at 0-based indices `which` widened by `w`. At w = 1
/// the spec is returned unchanged.
pub fn widened_spec(spec: &Spec, w: f64, which: &[usize]) -> Result<Spec> {
    let mut s = spec.clone();
    if w == 1.0 {
        return Ok(s);
    }
    for &i in which {
        let b = s.beliefs.get_mut(i).ok_or_else(|| {
            Error::input(
                crate::error::Location {
                    key: Some("--beliefs".into()),
                    ..Default::default()
                },
                format!(
                    "belief {} does not exist (the file has {})",
                    i + 1,
                    spec.beliefs.len()
                ),
            )
        })?;
        let scale = Scale::for_support(b.request.support);
        let d = widen(&b.target.dist, scale, w)
            .map_err(|m| Error::Numeric(format!("widening belief {}: {m}", b.label)))?;
        b.target = Target::new(d);
        b.stated_as = format!("{}, widened ×{w} on the {scale:?} scale", b.stated_as);
    }
    s.title = format!("{} (beliefs widened ×{w})", spec.title);
    Ok(s)
}

fn fit_at(spec: &Spec, w: f64, which: &[usize], warm: Option<&[f64]>) -> Result<SweepPoint> {
    let started = Instant::now();
    let s = widened_spec(spec, w, which)?;
    let p = fit::fit_point(&s, warm, None)?;
    Ok(SweepPoint {
        width: w,
        result: fit::assemble(&s, p, started)?,
    })
}

fn chain(
    spec: &Spec,
    widths: &[f64],
    which: &[usize],
    mut warm: Vec<f64>,
    tick: &(dyn Fn() + Sync),
) -> Result<Vec<SweepPoint>> {
    let mut out = Vec::new();
    for &w in widths {
        let p = fit_at(spec, w, which, Some(&warm))?;
        warm = p.result.full.clone();
        out.push(p);
        tick();
    }
    Ok(out)
}

/// Refit at every width (sorted ascending in the result). `which` = the 0-based
/// beliefs to widen (all when None). `tick` is called after each refit.
pub fn run(
    spec: &Spec,
    widths: &[f64],
    which: Option<&[usize]>,
    tick: &(dyn Fn() + Sync),
) -> Result<Vec<SweepPoint>> {
    let widths = check_widths(widths).map_err(Error::Numeric)?;
    let all: Vec<usize> = (0..spec.beliefs.len()).collect();
    let which = which.unwrap_or(&all);
    // Anchor: the width nearest 1 on the log scale (the smaller on a tie).
    let a = (0..widths.len())
        .min_by(|&i, &j| {
            widths[i]
                .ln()
                .abs()
                .total_cmp(&widths[j].ln().abs())
                .then(i.cmp(&j))
        })
        .unwrap_or(0);
    let anchor = if widths[a] == 1.0 {
        // Exactly what `fit` does.
        let r = fit::fit(spec, None)?;
        SweepPoint {
            width: 1.0,
            result: r,
        }
    } else {
        fit_at(spec, widths[a], which, None)?
    };
    tick();
    let up: Vec<f64> = widths[a + 1..].to_vec();
    let down: Vec<f64> = widths[..a].iter().rev().copied().collect();
    let warm = anchor.result.full.clone();
    let (hi, lo) = rayon::join(
        || chain(spec, &up, which, warm.clone(), tick),
        || chain(spec, &down, which, warm.clone(), tick),
    );
    let mut pts: Vec<SweepPoint> = lo?.into_iter().rev().collect();
    pts.push(anchor);
    pts.extend(hi?);
    Ok(pts)
}

fn pname(p: f64) -> String {
    format!("q{p}")
}

/// The sweep table as CSV: one row per width.
pub fn table_csv(points: &[SweepPoint]) -> Result<Vec<u8>> {
    let Some(first) = points.first() else {
        return Err(Error::Numeric("empty sweep".into()));
    };
    let r0 = &first.result;
    let mut header = vec!["width".to_string()];
    header.extend(r0.order.iter().cloned());
    header.extend(
        [
            "fresh_total",
            "noise_floor",
            "verdict",
            "evaluations",
            "wall_time_s",
        ]
        .map(String::from),
    );
    for i in 0..r0.beliefs.len() {
        for what in ["believed", "implied"] {
            for p in PROBS {
                header.push(format!("belief{}.{what}.{}", i + 1, pname(p)));
            }
        }
    }
    let mut w = csv::Writer::from_writer(Vec::new());
    let e = |e: csv::Error| Error::Numeric(e.to_string());
    w.write_record(&header).map_err(e)?;
    for pt in points {
        let r = &pt.result;
        let mut row = vec![format!("{}", pt.width)];
        row.extend(
            r.order
                .iter()
                .map(|n| crate::output::fmt_csv(r.hyperparameters[n])),
        );
        row.push(format!("{}", r.total.fresh));
        row.push(format!("{}", r.total.noise_floor));
        row.push(r.verdict.words().to_string());
        row.push(r.optimiser.evaluations.to_string());
        row.push(format!("{:.3}", r.wall_time_s));
        for b in &r.beliefs {
            row.extend(
                b.believed_quantiles
                    .iter()
                    .map(|x| crate::output::fmt_csv(*x)),
            );
            row.extend(
                b.implied_quantiles
                    .iter()
                    .map(|x| crate::output::fmt_csv(*x)),
            );
        }
        w.write_record(&row).map_err(e)?;
    }
    w.into_inner().map_err(|e| Error::Numeric(e.to_string()))
}

/// An SVG figure: one panel per hyperparameter (value against width) and one per
/// belief (believed and implied 5 %, 50 %, 95 % quantiles against width), with a
/// logarithmic width axis; panels drawn with `output::svg`, three to a row.
pub fn plot_svg(points: &[SweepPoint]) -> Result<String> {
    use crate::fit::SetBy;
    use crate::numerics::format::sig;
    use crate::output::labels;
    use crate::output::plots::padded_range;
    use crate::output::svg::{esc, Plot, BLUE, GREY, H, ORANGE, STANDALONE_STYLE, VERMILLION, W};
    use std::fmt::Write;
    let Some(first) = points.first() else {
        return Err(Error::Numeric("empty sweep".into()));
    };
    // The beliefs as stated (width 1) name the sweep; otherwise the first width.
    let r0 = &points
        .iter()
        .find(|p| p.width == 1.0)
        .unwrap_or(first)
        .result;
    let title = r0
        .title
        .split(" (beliefs widened ×")
        .next()
        .unwrap_or(&r0.title)
        .to_string();
    let xs: Vec<f64> = points.iter().map(|p| p.width).collect();
    let (xlo, xhi) = (xs[0] / 1.15, xs[xs.len() - 1] * 1.15);
    let not_met: Vec<f64> = points
        .iter()
        .filter(|p| p.result.verdict == crate::fit::Verdict::NotMet)
        .map(|p| p.width)
        .collect();
    let ws = |v: &[f64]| v.iter().map(|w| sig(*w, 3)).collect::<Vec<_>>().join(", ");
    // (label, colour, dash, values per width, marked per width)
    type Series = (
        String,
        &'static str,
        Option<&'static str>,
        Vec<f64>,
        Vec<bool>,
    );
    // (caption, note under the caption, series)
    let mut panels: Vec<(String, String, Vec<Series>)> = Vec::new();
    for n in &r0.order {
        let v: Vec<f64> = points.iter().map(|p| p.result.hyperparameters[n]).collect();
        let at_bound: Vec<bool> = points
            .iter()
            .map(|p| p.result.set_by.get(n) == Some(&SetBy::Bound))
            .collect();
        let fixed = !r0.free.contains(n);
        let tb = points
            .iter()
            .any(|p| p.result.set_by.get(n) == Some(&SetBy::TieBreak));
        let note = match (at_bound.iter().any(|b| *b), tb) {
            (true, _) => "orange: at a bound of its range".to_string(),
            (false, true) => "set by the tie-break at some widths".to_string(),
            _ => String::new(),
        };
        panels.push((
            format!("{n}{}", if fixed { " (fixed)" } else { "" }),
            note,
            vec![("fitted".into(), GREY, None, v, at_bound)],
        ));
    }
    let qi = [0usize, 3, 6]; // 5 %, 50 %, 95 % in PROBS
    for (i, b) in r0.beliefs.iter().enumerate() {
        let mut ser = Vec::new();
        let mut infinite: Vec<String> = Vec::new();
        // The report's colours: believed blue, implied vermillion.
        for (who, col) in [("believed", BLUE), ("implied", VERMILLION)] {
            for &j in &qi {
                let dash = (j != 3).then_some("2 3");
                let vals: Vec<f64> = points
                    .iter()
                    .map(|p| {
                        let r = &p.result.beliefs[i];
                        if who == "believed" {
                            r.believed_quantiles[j]
                        } else {
                            r.implied_quantiles[j]
                        }
                    })
                    .collect();
                let inf: Vec<f64> = xs
                    .iter()
                    .zip(&vals)
                    .filter(|(_, v)| !v.is_finite())
                    .map(|(w, _)| *w)
                    .collect();
                if !inf.is_empty() {
                    infinite.push(format!(
                        "{who} {} % infinite at width {}",
                        sig(PROBS[j] * 100.0, 2),
                        ws(&inf)
                    ));
                }
                let marks = vec![false; vals.len()];
                ser.push((
                    format!("{who} {} %", sig(PROBS[j] * 100.0, 2)),
                    col,
                    dash,
                    vals,
                    marks,
                ));
            }
        }
        panels.push((
            format!(
                "belief {}: {} — 5, 50, 95 % quantiles",
                i + 1,
                labels::with_unit(b)
            ),
            if infinite.is_empty() {
                String::new()
            } else {
                format!("not drawn: {}", infinite.join("; "))
            },
            ser,
        ));
    }
    let cols = panels.len().clamp(1, 3);
    let rows = panels.len().div_ceil(cols);
    let (head, cap) = (58.0, 36.0);
    let (tw, th) = (W * cols as f64, head + rows as f64 * (H + cap));
    let mut out = String::new();
    let _ = writeln!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {tw} {th}\" width=\"{tw}\" height=\"{th}\" font-family=\"system-ui, -apple-system, 'Segoe UI', Roboto, 'DejaVu Sans', sans-serif\">\n{STANDALONE_STYLE}<rect x=\"0\" y=\"0\" width=\"{tw}\" height=\"{th}\" fill=\"#fff\"/>\n<text class=\"label\" x=\"12\" y=\"22\">{}</text>",
        esc(&format!(
            "{title} — sensitivity to belief width (widths {}; 1 = the beliefs as stated)",
            ws(&xs)
        ))
    );
    // One legend for the figure, above the panels (never over the data).
    let mut lx = 12.0;
    let legend: Vec<(&str, Option<&str>, String)> = vec![
        (BLUE, None, "believed (median)".into()),
        (VERMILLION, None, "implied (median)".into()),
        (GREY, Some("2 3"), "5 % and 95 %".into()),
        (
            GREY,
            Some("6 4"),
            if not_met.is_empty() {
                "no width is not met".into()
            } else {
                format!("not met at width {}", ws(&not_met))
            },
        ),
    ];
    for (c, dash, label) in &legend {
        let _ = writeln!(
            out,
            "<line x1=\"{lx:.1}\" y1=\"42\" x2=\"{:.1}\" y2=\"42\" stroke=\"{c}\" stroke-width=\"2.5\"{}/><text class=\"legend\" x=\"{:.1}\" y=\"46\">{}</text>",
            lx + 22.0,
            dash.map(|d| format!(" stroke-dasharray=\"{d}\"")).unwrap_or_default(),
            lx + 27.0,
            esc(label)
        );
        lx += 40.0 + 6.4 * label.chars().count() as f64;
    }
    for (k, (caption, note, ser)) in panels.iter().enumerate() {
        let (x0, y0) = (W * (k % cols) as f64, head + (H + cap) * (k / cols) as f64);
        let yr = padded_range(ser.iter().flat_map(|s| s.3.iter().copied())).unwrap_or((0.0, 1.0));
        let mut p = Plot::new(&format!("sweep-{k}"), caption, (xlo, xhi, true), yr, 0.0);
        p.set_x_ticks(&xs);
        p.axes("width factor (log scale)", "");
        for &w in &not_met {
            p.line(
                &[(w, yr.0), (w, yr.1)],
                GREY,
                1.0,
                Some("6 4"),
                "not met at this width",
            );
        }
        for (label, col, dash, vals, marks) in ser {
            let pts: Vec<(f64, f64, bool)> = xs
                .iter()
                .zip(vals)
                .zip(marks)
                .filter(|((_, v), _)| v.is_finite())
                .map(|((x, v), m)| (*x, *v, *m))
                .collect();
            let line: Vec<(f64, f64)> = pts.iter().map(|(x, y, _)| (*x, *y)).collect();
            p.line(
                &line,
                col,
                if dash.is_some() { 1.5 } else { 2.2 },
                *dash,
                label,
            );
            for (x, y, m) in &pts {
                let (c, r) = if *m { (ORANGE, 5.0) } else { (*col, 3.0) };
                p.point(
                    *x,
                    *y,
                    c,
                    r,
                    &format!("{label} at width {}: {}", sig(*x, 3), sig(*y, 4)),
                );
            }
        }
        let _ = writeln!(
            out,
            "<text class=\"label\" x=\"{:.1}\" y=\"{:.1}\">{}</text>",
            x0 + 12.0,
            y0 + 16.0,
            esc(caption)
        );
        if !note.is_empty() {
            let _ = writeln!(
                out,
                "<text class=\"note\" x=\"{:.1}\" y=\"{:.1}\">{}</text>",
                x0 + 12.0,
                y0 + 30.0,
                esc(note)
            );
        }
        let panel = p.finish(false).replacen(
            "<svg ",
            &format!("<svg x=\"{x0}\" y=\"{:.1}\" ", y0 + cap),
            1,
        );
        out.push_str(&panel);
    }
    out.push_str("</svg>\n");
    Ok(out)
}

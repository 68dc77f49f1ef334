//! The report's plots: believed against implied CDF and density per belief, the
//! fitted hyperparameters within their bounds, and numeric diagnostics.

use super::svg::{
    self, esc, Plot, BLUE, GREY, ORANGE, SKY, VERMILLION, VERMILLION_DARK, VERMILLION_FILL,
};
use super::view::*;
use crate::fit::FitResult;
use crate::numerics::format::html as fnum;
use std::fmt::Write;

/// The x range shown for a belief: 1–99 % of the finite parts of both
/// distributions, plus the finite atoms, padded by 4 %.
pub(super) fn x_range(b: &BeliefView) -> (f64, f64) {
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
        for q in b.r.believed_quantiles.iter().filter(|q| q.is_finite()) {
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

pub(super) fn axis_label(b: &BeliefView) -> String {
    crate::output::labels::with_unit(&b.r)
}

pub(super) const INF_COL: f64 = 104.0;

/// Believed and implied CDFs overlaid.
pub fn cdf_plot(id: &str, b: &BeliefView) -> String {
    let (lo, hi) = x_range(b);
    let bel_inf = b.curve.as_ref().map_or(0.0, Curve::inf_mass);
    let has_inf = bel_inf > 0.0 || b.r.implied_mass_at_inf > 0.0;
    let mut p = Plot::new(
        id,
        &format!(
            "{}: believed and implied cumulative distribution",
            crate::output::labels::belief(&b.r)
        ),
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
    let atom_locs = finite_atoms(b);
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
    let bel = b
        .curve
        .as_ref()
        .map(|c| curve_points(c, lo, hi))
        .unwrap_or_default();
    p.line(
        &imp,
        VERMILLION,
        2.2,
        Some("6 3"),
        "implied by the fitted prior (empirical CDF of the draws)",
    );
    // Each expert of a pool, thinner, labelled by name and weight in the pool
    // at a different height each, so labels of close curves do not collide.
    let n_ex = b.experts.len();
    for (e, ex) in b.experts.iter().enumerate() {
        let dash = EXPERT_DASHES[e % EXPERT_DASHES.len()];
        let label = format!(
            "{} (weight {})",
            ex.name,
            crate::numerics::format::sig(ex.share, 3)
        );
        p.line(
            &curve_points(&ex.curve, lo, hi),
            SKY,
            1.3,
            Some(dash),
            &label,
        );
        let level = 0.15 + 0.7 * (e + 1) as f64 / (n_ex + 1) as f64;
        if let Some(x) = ex.curve.quantile(level) {
            if x >= lo && x <= hi {
                let (px, py) = (p.x.px(x), p.y.px(level));
                p.text(px + 5.0, py + 4.0, "start", "note", &label);
            }
        }
    }
    if b.curve.is_some() {
        p.line(
            &bel,
            BLUE,
            2.2,
            None,
            if n_ex > 0 {
                "believed (pool of the experts)"
            } else {
                "believed"
            },
        );
    } else {
        for (q, pr) in b.r.believed_quantiles.iter().zip(&b.r.probs) {
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
        series.push((
            ecdf(s, hi),
            1.0 - b.r.implied_mass_at_inf,
            VERMILLION,
            Some("6 3"),
        ));
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
            &format!("implied {}", pct(b.r.implied_mass_at_inf)),
        );
    }
    if n_ex > 0 {
        p.legend(&[
            (BLUE, None, "believed (pool)"),
            (SKY, Some(EXPERT_DASHES[0]), "each expert"),
            (VERMILLION, Some("6 3"), "implied by the fitted prior"),
        ]);
    } else {
        p.legend(&[
            (BLUE, None, "believed"),
            (VERMILLION, Some("6 3"), "implied by the fitted prior"),
        ]);
    }
    p.finish(false)
}

/// Dash patterns of the experts' curves (one per expert, cycling).
const EXPERT_DASHES: [&str; 4] = ["4 2", "1 2", "8 3 2 3", "2 4"];

/// A tabulated believed CDF as plot points over [lo, hi]: atoms as vertical
/// jumps, flat to the edges of the range.
fn curve_points(c: &Curve, lo: f64, hi: f64) -> Vec<(f64, f64)> {
    let mut bel = Vec::new();
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
    bel
}

/// Believed density over a histogram of the implied draws.
/// Locations of the finite atoms of a belief.
fn finite_atoms(b: &BeliefView) -> Vec<f64> {
    b.r.atoms
        .iter()
        .map(|a| a.at)
        .filter(|a| a.is_finite())
        .collect()
}

pub fn density_plot(id: &str, b: &BeliefView) -> String {
    let (lo, hi) = x_range(b);
    let n = b.draws.len() as f64;
    let atom_locs = finite_atoms(b);
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
            crate::output::labels::belief(&b.r)
        ),
        (lo, hi, false),
        (0.0, ymax * 1.1),
        0.0,
    );
    let ylab = match &b.r.unit {
        Some(u) => format!("density ({})", crate::output::labels::per_unit(u)),
        None => "density".into(),
    };
    p.axes(&axis_label(b), &ylab);
    p.bars(
        &bars,
        VERMILLION_FILL,
        VERMILLION_DARK,
        "histogram of the implied draws",
    );
    if !bel.is_empty() {
        p.line(&bel, BLUE, 2.4, None, "believed density");
    }
    let mut note_y = p.y.p1 + 14.0;
    let right = p.x.p1 - 4.0;
    for a in &b.r.atoms {
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
    if b.r.implied_mass_at_inf > 0.0 && !b.r.atoms.iter().any(|a| a.at.is_infinite()) {
        p.text(
            right,
            note_y,
            "end",
            "note",
            &format!(
                "implied never reached (∞): {}",
                pct(b.r.implied_mass_at_inf)
            ),
        );
    }
    p.legend(&[
        (BLUE, None, "believed"),
        (VERMILLION_DARK, None, "implied (histogram)"),
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
        // One rule for "at a bound" everywhere: the record's set_by (as in
        // summary.txt, the hyperparameter table and fit.json).
        let near = fit.set_by.get(name.as_str()) == Some(&crate::fit::SetBy::Bound);
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

/// The prior-predictive survival curve of one profile: pointwise 95 / 80 / 50 %
/// bands (vermillion, darker inward), the pointwise median (dashed), a few sample
/// curves (grey), and the beliefs on it in blue: a survival belief as its 10–90 %
/// interval at its horizon, a median belief as its 10–90 % interval at S = ½,
/// each with its median as a dot and its number.
pub fn survival_plot(id: &str, b: &super::predictive::SurvivalBands) -> String {
    let t_max = b.times.last().copied().unwrap_or(1.0);
    let who = if b.profile.is_empty() {
        String::new()
    } else {
        format!(", profile {}", b.profile)
    };
    let mut p = Plot::new(
        id,
        &format!("Prior-predictive survival curve{who}"),
        (0.0, t_max, false),
        (0.0, 1.0),
        0.0,
    );
    p.axes(
        &format!("time ({})", b.time_unit),
        "probability event-free, S(t)",
    );
    let bd = &b.bands;
    p.band(
        &b.times,
        &bd[0],
        &bd[6],
        VERMILLION_FILL,
        0.45,
        "95 % pointwise band",
    );
    p.band(
        &b.times,
        &bd[1],
        &bd[5],
        VERMILLION_FILL,
        0.7,
        "80 % pointwise band",
    );
    p.band(
        &b.times,
        &bd[2],
        &bd[4],
        VERMILLION_DARK,
        0.45,
        "50 % pointwise band",
    );
    for (k, c) in b.samples.iter().enumerate() {
        let pts: Vec<(f64, f64)> = b.times.iter().copied().zip(c.iter().copied()).collect();
        p.line(&pts, GREY, 0.8, None, &format!("sample curve {}", k + 1));
    }
    let med: Vec<(f64, f64)> = b.times.iter().copied().zip(bd[3].iter().copied()).collect();
    p.line(&med, VERMILLION, 2.0, Some("6 4"), "pointwise median");
    for m in &b.markers {
        let name = format!("belief {}", m.belief);
        match m.kind {
            super::predictive::MarkerKind::SurvivalAt(t) => {
                let (lo, mid, hi) = (m.q[0], m.q[1], m.q[2]);
                if lo.is_finite() && hi.is_finite() {
                    p.line(
                        &[(t, lo), (t, hi)],
                        BLUE,
                        3.0,
                        None,
                        &format!("{name}: believed 10–90 %"),
                    );
                }
                if mid.is_finite() {
                    p.point(
                        t,
                        mid,
                        BLUE,
                        4.5,
                        &format!("{name}: believed median {}", fnum(mid)),
                    );
                    let (px, py) = (p.x.px(t), p.y.px(mid));
                    p.text(px + 7.0, py - 6.0, "start", "note", &name);
                }
            }
            super::predictive::MarkerKind::Median => {
                let (lo, mid, hi) = (m.q[0], m.q[1], m.q[2]);
                let hi_c = if hi.is_finite() { hi.min(t_max) } else { t_max };
                if lo.is_finite() {
                    p.line(
                        &[(lo, 0.5), (hi_c, 0.5)],
                        BLUE,
                        3.0,
                        None,
                        &format!("{name}: believed 10–90 % of the median"),
                    );
                }
                if mid.is_finite() {
                    p.point(
                        mid,
                        0.5,
                        BLUE,
                        4.5,
                        &format!("{name}: believed median of the median {}", fnum(mid)),
                    );
                    let (px, py) = (p.x.px(mid), p.y.px(0.5));
                    p.text(px, py - 9.0, "middle", "note", &name);
                }
            }
        }
    }
    p.legend(&[
        (VERMILLION, Some("6 4"), "implied (50/80/95 %)"),
        (GREY, None, "samples"),
        (BLUE, None, "believed (10–90 %)"),
    ]);
    p.finish(false)
}

/// Fresh draws of two implied quantities against each other (at most 1,500
/// points, finite pairs only), titled with their Spearman correlation.
pub fn pair_plot(id: &str, xl: &str, yl: &str, x: &[f64], y: &[f64], rho: f64) -> String {
    let pairs: Vec<(f64, f64)> = x
        .iter()
        .zip(y)
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .map(|(a, b)| (*a, *b))
        .collect();
    let range = |v: Vec<f64>| -> (f64, f64) {
        let mut v = v;
        v.sort_by(f64::total_cmp);
        if v.is_empty() {
            return (0.0, 1.0);
        }
        let (lo, hi) = (emp_q(&v, 0.005), emp_q(&v, 0.995));
        let pad = if hi > lo { 0.04 * (hi - lo) } else { 0.5 };
        (lo - pad, hi + pad)
    };
    let xr = range(pairs.iter().map(|p| p.0).collect());
    let yr = range(pairs.iter().map(|p| p.1).collect());
    let mut p = Plot::new(
        id,
        &format!(
            "{yl} against {xl} (Spearman ρ = {})",
            crate::numerics::format::sig(rho, 2)
        ),
        (xr.0, xr.1, false),
        yr,
        0.0,
    );
    p.axes(xl, yl);
    let step = (pairs.len() / 1500).max(1);
    let mut dots = String::new();
    for (a, b) in pairs.iter().step_by(step) {
        if *a < xr.0 || *a > xr.1 || *b < yr.0 || *b > yr.1 {
            continue;
        }
        let _ = write!(dots, "M{:.1} {:.1}h0.01", p.x.px(*a), p.y.px(*b));
    }
    p.raw_path(
        &dots,
        VERMILLION,
        &format!("{} fresh prior draws", pairs.len().div_ceil(step)),
    );
    let omitted = x.len() - pairs.len();
    let note = if omitted > 0 {
        format!(" · {omitted} draws with an infinite value not shown")
    } else {
        String::new()
    };
    let (px, py) = (p.x.p0, 18.0);
    p.text(
        px,
        py,
        "start",
        "legend",
        &format!(
            "Spearman ρ = {}{note}",
            crate::numerics::format::sig(rho, 2)
        ),
    );
    p.finish(false)
}

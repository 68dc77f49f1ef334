//! SVG plots written beside the JSON, drawn with [`super::svg`] like every other
//! figure. Colours: Okabe–Ito (Okabe & Ito 2008, "Color Universal Design").

use super::svg::{Plot, BLUE, GREY, ORANGE};
use crate::error::{Error, Result};
use crate::fit::pareto::{front_order, Front};

fn perr<E: std::fmt::Display>(e: E) -> Error {
    Error::Internal(format!("writing the front failed: {e}"))
}

/// The data range of finite points, padded by 8 % on each side.
pub fn padded_range(vals: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    let (lo, hi) = vals
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(v), b.max(v))
        });
    if !lo.is_finite() {
        return None;
    }
    let w = (hi - lo).abs().max(1e-9);
    Some((lo - 0.08 * w, hi + 0.08 * w))
}

/// The Pareto front: discrepancy (in noise floors) against spread (mean ln sd).
pub fn pareto_svg(f: &Front) -> Result<String> {
    pareto_plot(f, true)
}

/// The front for pareto.svg (`standalone`) or inline in the report: the points
/// (κ in each tooltip), the non-dominated front, the chosen prior, and the
/// band within one noise floor of the best discrepancy (the priors the beliefs
/// cannot tell from the best).
pub fn pareto_plot(f: &Front, standalone: bool) -> Result<String> {
    let pts: Vec<(f64, f64)> = f
        .points
        .iter()
        .map(|p| (p.discrepancy / f.noise_floor, -p.secondary))
        .collect();
    let (Some(xr), Some(yr)) = (
        padded_range(pts.iter().map(|p| p.0)),
        padded_range(pts.iter().map(|p| p.1)),
    ) else {
        return Err(Error::Numeric(
            "no finite points on the Pareto front".into(),
        ));
    };
    let mut plot = Plot::new(
        "pareto",
        "Faithfulness against spread (Pareto front)",
        (xr.0, xr.1, false),
        yr,
        0.0,
    );
    plot.axes(
        "discrepancy (multiples of the noise floor)",
        "−secondary objective (wider prior is higher)",
    );
    let nd: Vec<(f64, f64)> = front_order(&f.points).iter().map(|&i| pts[i]).collect();
    plot.line(&nd, BLUE, 2.0, None, "non-dominated front");
    for (p, &(x, y)) in f.points.iter().zip(&pts) {
        let c = if p.dominated { GREY } else { BLUE };
        plot.point(x, y, c, 4.0, &format!("κ = {}", p.kappa));
    }
    let best = pts.iter().map(|p| p.0).fold(f64::INFINITY, f64::min);
    let edge = best + 1.0;
    if edge < xr.1 {
        plot.line(
            &[(edge, yr.0), (edge, yr.1)],
            GREY,
            1.5,
            Some("5 4"),
            "one noise floor above the best discrepancy",
        );
    }
    let (cx, cy) = pts[f.chosen];
    let chosen = format!("chosen ({} rule)", f.rule);
    plot.point(cx, cy, ORANGE, 7.0, &chosen);
    plot.legend(&[
        (BLUE, None, "front"),
        (ORANGE, None, &chosen),
        (GREY, Some("5 4"), "best + 1 noise floor"),
    ]);
    Ok(plot.finish(standalone))
}

/// The front as CSV: one row per κ.
pub fn pareto_csv(f: &Front) -> Result<Vec<u8>> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let mut header: Vec<String> = ["kappa", "discrepancy", "secondary", "dominated", "chosen"]
        .iter()
        .map(|s| s.to_string())
        .collect();
    header.extend(f.names.iter().cloned());
    w.write_record(&header).map_err(perr)?;
    for (i, p) in f.points.iter().enumerate() {
        let mut row = vec![
            p.kappa.to_string(),
            p.discrepancy.to_string(),
            p.secondary.to_string(),
            p.dominated.to_string(),
            (i == f.chosen).to_string(),
        ];
        row.extend(p.hyperparameters.iter().map(|v| v.to_string()));
        w.write_record(&row).map_err(perr)?;
    }
    w.into_inner().map_err(perr)
}

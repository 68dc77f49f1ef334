//! SVG plots written beside the JSON (plotters, SVG backend only; text is emitted
//! as SVG `<text>` and needs no fonts on the machine). Colours: Okabe–Ito
//! (Okabe & Ito 2008, "Color Universal Design"), safe for colour-blind readers.

use crate::error::{Error, Result};
use crate::fit::pareto::{front_order, Front};
use plotters::prelude::*;

pub const BLUE: RGBColor = RGBColor(0, 114, 178);
pub const ORANGE: RGBColor = RGBColor(230, 159, 0);
pub const GREY: RGBColor = RGBColor(153, 153, 153);

fn perr<E: std::fmt::Display>(e: E) -> Error {
    Error::Internal(format!("plotting failed: {e}"))
}

/// The Pareto front: discrepancy (in noise floors) against spread (mean ln sd).
pub fn pareto_svg(f: &Front) -> Result<String> {
    let pts: Vec<(f64, f64)> = f
        .points
        .iter()
        .map(|p| (p.discrepancy / f.noise_floor, -p.secondary))
        .collect();
    let (mut x0, mut x1, mut y0, mut y1) = (
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    );
    for (x, y) in &pts {
        if x.is_finite() && y.is_finite() {
            x0 = x0.min(*x);
            x1 = x1.max(*x);
            y0 = y0.min(*y);
            y1 = y1.max(*y);
        }
    }
    if !x0.is_finite() {
        return Err(Error::Numeric(
            "no finite points on the Pareto front".into(),
        ));
    }
    let pad = |a: f64, b: f64| {
        let w = (b - a).abs().max(1e-9);
        (a - 0.08 * w, b + 0.08 * w)
    };
    let (x0, x1) = pad(x0, x1);
    let (y0, y1) = pad(y0, y1);
    let mut buf = String::new();
    {
        let root = SVGBackend::with_string(&mut buf, (640, 420)).into_drawing_area();
        root.fill(&WHITE).map_err(perr)?;
        let mut chart = ChartBuilder::on(&root)
            .caption(
                "Faithfulness against spread (Pareto front)",
                ("sans-serif", 18),
            )
            .margin(12)
            .x_label_area_size(44)
            .y_label_area_size(64)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(perr)?;
        chart
            .configure_mesh()
            .x_desc("discrepancy (multiples of the noise floor)")
            .y_desc("−secondary objective (wider prior is higher)")
            .light_line_style(WHITE)
            .draw()
            .map_err(perr)?;
        let nd = front_order(&f.points);
        chart
            .draw_series(LineSeries::new(
                nd.iter().map(|&i| pts[i]),
                BLUE.stroke_width(2),
            ))
            .map_err(perr)?;
        chart
            .draw_series(f.points.iter().zip(&pts).map(|(p, xy)| {
                let c = if p.dominated { GREY } else { BLUE };
                Circle::new(*xy, 4, c.filled())
            }))
            .map_err(perr)?;
        chart
            .draw_series(std::iter::once(Circle::new(
                pts[f.chosen],
                8,
                ORANGE.stroke_width(3),
            )))
            .map_err(perr)?
            .label(format!("chosen ({} rule)", f.rule))
            .legend(|(x, y)| Circle::new((x, y), 5, ORANGE.stroke_width(3)));
        chart
            .configure_series_labels()
            .border_style(GREY)
            .background_style(WHITE)
            .draw()
            .map_err(perr)?;
        root.present().map_err(perr)?;
    }
    Ok(buf)
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

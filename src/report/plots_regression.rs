//! The regression picture's plots: prior-predictive intervals per category
//! (the response at each profile, the R²-type quantities) and the response
//! across design rows as bands, each with the beliefs about it beside it.

use super::svg::{Plot, BLUE, VERMILLION, VERMILLION_DARK, VERMILLION_FILL};
use crate::numerics::format::html as fnum;

/// A column of prior-predictive intervals (the regression picture): per
/// category, the implied 95 / 80 / 50 % intervals as vermillion bars of
/// growing width and the implied median (white-ringed dot); a belief about
/// the same quantity beside it in blue (believed 10–90 % interval and median,
/// labelled with its number). `unit`: the y axis is [0, 1]; otherwise it covers
/// every interval and belief, on a log scale when positive and spanning ≥ 100×.
pub fn interval_plot(
    id: &str,
    title: &str,
    ylabel: &str,
    cats: &[(String, &super::regression::Interval)],
    unit: bool,
) -> String {
    let n = cats.len().max(1);
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for (_, iv) in cats {
        let vals = iv.q.iter().chain(iv.belief.iter().flat_map(|b| b.1.iter()));
        for v in vals.filter(|v| v.is_finite()) {
            lo = lo.min(*v);
            hi = hi.max(*v);
        }
    }
    let log = !unit && lo > 0.0 && hi / lo >= 100.0;
    let (y0, y1) = if unit || !lo.is_finite() || !hi.is_finite() {
        (0.0, 1.0)
    } else if log {
        (lo / 1.3, hi * 1.3)
    } else if hi > lo {
        let pad = 0.06 * (hi - lo);
        let a = if lo >= 0.0 && lo < 0.3 * (hi - lo) {
            0.0
        } else {
            lo - pad
        };
        (a, hi + pad)
    } else {
        (lo - 0.5, hi + 0.5)
    };
    let mut p = Plot::new(id, title, (0.5, n as f64 + 0.5, false), (y0, y1), 0.0);
    p.y.log = log;
    p.set_x_ticks(&[]);
    p.axes("", ylabel);
    let with_belief = cats.iter().any(|c| c.1.belief.is_some());
    for (k, (name, iv)) in cats.iter().enumerate() {
        let xc = p.x.px(k as f64 + 1.0);
        let x = if with_belief { xc - 8.0 } else { xc };
        let q = &iv.q;
        let ok = |v: f64| v.is_finite() && (!log || v > 0.0);
        for (a, b, w, col) in [
            (0usize, 6usize, 4.0, VERMILLION_FILL),
            (1, 5, 9.0, VERMILLION_FILL),
            (2, 4, 9.0, VERMILLION_DARK),
        ] {
            if q.len() == 7 && ok(q[a]) && ok(q[b]) {
                let (ya, yb) = (p.y.px(q[a]), p.y.px(q[b]));
                p.raw_line(x, ya, x, yb, col, w, None);
            }
        }
        if q.len() == 7 && ok(q[3]) {
            let label = format!(
                "{name}: implied median {}, 95 % interval {} to {}",
                fnum(q[3]),
                fnum(q[0]),
                fnum(q[6])
            );
            p.point(
                k as f64 + 1.0
                    - if with_belief {
                        8.0 / px_per_unit(&p)
                    } else {
                        0.0
                    },
                q[3],
                VERMILLION,
                4.5,
                &label,
            );
        }
        if let Some((num, bq)) = iv.belief {
            let xb = xc + 8.0;
            if ok(bq[0]) && ok(bq[2]) {
                p.raw_line(xb, p.y.px(bq[0]), xb, p.y.px(bq[2]), BLUE, 3.0, None);
            }
            if ok(bq[1]) {
                p.point(
                    k as f64 + 1.0 + 8.0 / px_per_unit(&p),
                    bq[1],
                    BLUE,
                    4.5,
                    &format!("belief {num}: believed median {}", fnum(bq[1])),
                );
                let py = p.y.px(bq[1]);
                p.text(
                    xb + 7.0,
                    py + 4.0,
                    "start",
                    "note",
                    &format!("belief {num}"),
                );
            }
        }
        p.text(xc, p.y.p0 + 18.0, "middle", "", name);
    }
    let mut legend = vec![
        (VERMILLION_DARK, None, "implied 50 %"),
        (VERMILLION_FILL, None, "80 / 95 %"),
    ];
    if with_belief {
        legend.push((BLUE, None, "believed (10–90 %)"));
    }
    p.legend(&legend);
    p.finish(false)
}

/// Pixels per data unit of the x axis.
fn px_per_unit(p: &Plot) -> f64 {
    (p.x.p1 - p.x.p0) / (p.x.hi - p.x.lo)
}

/// The response across design rows, sorted by implied median: pointwise 95 /
/// 80 / 50 % bands over the rows' ranks and the median (dashed), in the style of
/// the survival bands. `unit`: the y axis is [0, 1].
pub fn rows_plot(
    id: &str,
    title: &str,
    ylabel: &str,
    rows: &[super::regression::Interval],
    unit: bool,
) -> String {
    let x: Vec<f64> = (1..=rows.len()).map(|k| k as f64).collect();
    let col = |j: usize| -> Vec<f64> { rows.iter().map(|r| r.q[j]).collect() };
    let fin: Vec<f64> = rows
        .iter()
        .flat_map(|r| [r.q[0], r.q[6]])
        .filter(|v| v.is_finite())
        .collect();
    let (lo, hi) = fin
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(*v), b.max(*v))
        });
    let log = !unit && lo > 0.0 && hi / lo >= 100.0;
    let y = if unit || !lo.is_finite() || hi <= lo {
        (0.0, 1.0)
    } else if log {
        (lo / 1.3, hi * 1.3)
    } else {
        let pad = 0.06 * (hi - lo);
        (
            if lo >= 0.0 && lo < 0.3 * (hi - lo) {
                0.0
            } else {
                lo - pad
            },
            hi + pad,
        )
    };
    let mut p = Plot::new(
        id,
        title,
        (0.5, rows.len().max(1) as f64 + 0.5, false),
        y,
        0.0,
    );
    p.y.log = log;
    p.axes("design rows, sorted by implied median", ylabel);
    p.band(&x, &col(0), &col(6), VERMILLION_FILL, 0.45, "95 % band");
    p.band(&x, &col(1), &col(5), VERMILLION_FILL, 0.7, "80 % band");
    p.band(&x, &col(2), &col(4), VERMILLION_DARK, 0.45, "50 % band");
    let med: Vec<(f64, f64)> = x.iter().copied().zip(col(3)).collect();
    p.line(&med, VERMILLION, 2.0, Some("6 4"), "median per row");
    p.legend(&[(
        VERMILLION,
        Some("6 4"),
        "implied median, 50/80/95 % per row",
    )]);
    p.finish(false)
}

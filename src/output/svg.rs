//! Hand-written SVG plots for every figure priorsmith writes (the report's, the
//! Pareto front, the sweep): axes with "nice" ticks (steps of 1, 2
//! or 5 × 10^k, common practice), lines, steps, bars, points and labels.
//!
//! Why not plotters: the report needs atoms drawn as jumps, a separate "+∞"
//! column for never-reached mass, a broken axis in front of it, and markup a
//! browser and a printer handle well (CSS classes, `<title>` tooltips, text
//! that stays text). Each is a few lines here and awkward through a general
//! plotting backend; the whole module is small and has no dependencies.
//!
//! Colours: the Okabe–Ito palette (Okabe & Ito 2008, "Color Universal Design"),
//! safe for the common colour-vision deficiencies; series differ also by line
//! style, so the plots survive greyscale printing.

use std::fmt::Write;

/// Okabe–Ito colours.
pub const BLUE: &str = "#0072B2";
pub const VERMILLION: &str = "#D55E00";
pub const ORANGE: &str = "#E69F00";
pub const SKY: &str = "#56B4E9";
pub const GREEN: &str = "#009E73";
pub const GREY: &str = "#5f5f5f";
/// Histogram fill and outline: light and dark shades of vermillion.
pub const VERMILLION_FILL: &str = "#f3c9ad";
pub const VERMILLION_DARK: &str = "#c0693a";

/// Escape text for XML/HTML.
pub fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Tick positions covering [lo, hi] with about `n` steps of 1, 2 or 5 × 10^k.
pub fn ticks(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    if hi.is_nan() || hi <= lo || !lo.is_finite() || !hi.is_finite() {
        return vec![lo];
    }
    let raw = (hi - lo) / n.max(1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last).map(|k| k as f64 * step).collect()
}

/// Ticks for a log axis: powers of ten, with 2 and 5 between when the range is short.
pub fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let (a, b) = (lo.log10().floor() as i32, hi.log10().ceil() as i32);
    let mut out = Vec::new();
    for e in a..=b {
        let mults: &[f64] = if b - a <= 3 { &[1.0, 2.0, 5.0] } else { &[1.0] };
        for m in mults {
            let v = m * 10f64.powi(e);
            if v >= lo * (1.0 - 1e-9) && v <= hi * (1.0 + 1e-9) {
                out.push(v);
            }
        }
    }
    out
}

/// A tick label: short, no trailing zeros.
pub fn tick_label(v: f64) -> String {
    if v == 0.0 {
        return "0".into();
    }
    let a = v.abs();
    if !(1e-3..1e6).contains(&a) {
        return format!("{v:.0e}");
    }
    let s = format!("{v:.4}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_string()
}

/// One axis: data range → pixel range, linear or logarithmic.
#[derive(Debug, Clone, Copy)]
pub struct Axis {
    pub lo: f64,
    pub hi: f64,
    pub p0: f64,
    pub p1: f64,
    pub log: bool,
}

impl Axis {
    pub fn px(&self, v: f64) -> f64 {
        let t = if self.log {
            (v.max(1e-300).ln() - self.lo.ln()) / (self.hi.ln() - self.lo.ln())
        } else {
            (v - self.lo) / (self.hi - self.lo)
        };
        self.p0 + t * (self.p1 - self.p0)
    }
    pub fn ticks(&self) -> Vec<f64> {
        if self.log {
            log_ticks(self.lo, self.hi)
        } else {
            ticks(self.lo, self.hi, 6)
        }
    }
}

/// A plot under construction.
pub struct Plot {
    pub id: String,
    pub w: f64,
    pub h: f64,
    pub x: Axis,
    pub y: Axis,
    body: String,
    title: String,
    /// Tick positions of the x axis, when given (else chosen from the range).
    x_ticks: Option<Vec<f64>>,
}

pub const W: f64 = 560.0;
pub const H: f64 = 330.0;
const LEFT: f64 = 64.0;
const RIGHT: f64 = 20.0;
const TOP: f64 = 34.0;
const BOTTOM: f64 = 52.0;

impl Plot {
    /// `extra_right` reserves pixels right of the x axis (the "+∞" column).
    pub fn new(
        id: &str,
        title: &str,
        x: (f64, f64, bool),
        y: (f64, f64),
        extra_right: f64,
    ) -> Self {
        let xa = Axis {
            lo: x.0,
            hi: x.1,
            p0: LEFT,
            p1: W - RIGHT - extra_right,
            log: x.2,
        };
        let ya = Axis {
            lo: y.0,
            hi: y.1,
            p0: H - BOTTOM,
            p1: TOP,
            log: false,
        };
        Self {
            id: id.to_string(),
            w: W,
            h: H,
            x: xa,
            y: ya,
            body: String::new(),
            title: title.to_string(),
            x_ticks: None,
        }
    }

    /// Label the x axis at exactly these values (call before [`Plot::axes`]).
    pub fn set_x_ticks(&mut self, t: &[f64]) {
        self.x_ticks = Some(t.to_vec());
    }

    /// Grid, ticks and axis labels.
    pub fn axes(&mut self, xlabel: &str, ylabel: &str) {
        let (x, y) = (self.x, self.y);
        let b = &mut self.body;
        let _ = writeln!(b, "<g class=\"grid\">");
        for t in y.ticks() {
            let py = y.px(t);
            let _ = writeln!(
                b,
                "<line x1=\"{:.1}\" x2=\"{:.1}\" y1=\"{py:.1}\" y2=\"{py:.1}\"/>",
                x.p0, x.p1
            );
        }
        let _ = writeln!(b, "</g><g class=\"axis\">");
        let _ = writeln!(
            b,
            "<line x1=\"{:.1}\" x2=\"{:.1}\" y1=\"{:.1}\" y2=\"{:.1}\"/>",
            x.p0, x.p1, y.p0, y.p0
        );
        for t in self.x_ticks.clone().unwrap_or_else(|| x.ticks()) {
            let px = x.px(t);
            let _ = writeln!(
                b,
                "<line x1=\"{px:.1}\" x2=\"{px:.1}\" y1=\"{:.1}\" y2=\"{:.1}\"/><text x=\"{px:.1}\" y=\"{:.1}\" text-anchor=\"middle\">{}</text>",
                y.p0,
                y.p0 + 5.0,
                y.p0 + 18.0,
                tick_label(t)
            );
        }
        for t in y.ticks() {
            let py = y.px(t);
            let _ = writeln!(
                b,
                "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\">{}</text>",
                x.p0 - 6.0,
                py + 4.0,
                tick_label(t)
            );
        }
        let _ = writeln!(
            b,
            "<text class=\"label\" x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\">{}</text>",
            0.5 * (x.p0 + x.p1),
            self.h - 12.0,
            esc(xlabel)
        );
        let _ = writeln!(
            b,
            "<text class=\"label\" transform=\"translate(16 {:.1}) rotate(-90)\" text-anchor=\"middle\">{}</text>",
            0.5 * (y.p0 + y.p1),
            esc(ylabel)
        );
        let _ = writeln!(b, "</g>");
    }

    /// A polyline through data points (NaN or infinite points are skipped).
    pub fn line(
        &mut self,
        pts: &[(f64, f64)],
        color: &str,
        width: f64,
        dash: Option<&str>,
        name: &str,
    ) {
        let d = self.path(pts);
        if d.is_empty() {
            return;
        }
        let _ = writeln!(
            self.body,
            "<path class=\"series\" d=\"{d}\" fill=\"none\" stroke=\"{color}\" stroke-width=\"{width}\"{} clip-path=\"url(#{}-clip)\"><title>{}</title></path>",
            dash.map(|s| format!(" stroke-dasharray=\"{s}\"")).unwrap_or_default(),
            self.id,
            esc(name)
        );
    }

    fn path(&self, pts: &[(f64, f64)]) -> String {
        let mut d = String::new();
        let mut pen = false;
        for (x, y) in pts {
            if !x.is_finite() || !y.is_finite() {
                pen = false;
                continue;
            }
            let _ = write!(
                d,
                "{}{:.2} {:.2} ",
                if pen { "L" } else { "M" },
                self.x.px(*x),
                self.y.px(*y)
            );
            pen = true;
        }
        d.trim_end().to_string()
    }

    /// A filled band between two curves over the same x (data units; points with
    /// a non-finite value are skipped).
    pub fn band(
        &mut self,
        x: &[f64],
        lo: &[f64],
        hi: &[f64],
        fill: &str,
        opacity: f64,
        name: &str,
    ) {
        let pts: Vec<(f64, f64, f64)> = x
            .iter()
            .zip(lo.iter().zip(hi))
            .filter(|(x, (l, h))| x.is_finite() && l.is_finite() && h.is_finite())
            .map(|(x, (l, h))| (*x, *l, *h))
            .collect();
        if pts.len() < 2 {
            return;
        }
        let mut d = String::new();
        for (i, (x, _, h)) in pts.iter().enumerate() {
            let _ = write!(
                d,
                "{}{:.2} {:.2} ",
                if i == 0 { "M" } else { "L" },
                self.x.px(*x),
                self.y.px(*h)
            );
        }
        for (x, l, _) in pts.iter().rev() {
            let _ = write!(d, "L{:.2} {:.2} ", self.x.px(*x), self.y.px(*l));
        }
        let _ = writeln!(
            self.body,
            "<path class=\"band\" d=\"{}Z\" fill=\"{fill}\" fill-opacity=\"{opacity}\" stroke=\"none\" clip-path=\"url(#{}-clip)\"><title>{}</title></path>",
            d,
            self.id,
            esc(name)
        );
    }

    /// Dots as a path of zero-length segments in pixel coordinates (round caps).
    pub fn raw_path(&mut self, d: &str, color: &str, name: &str) {
        let _ = writeln!(
            self.body,
            "<path class=\"dots\" d=\"{d}\" fill=\"none\" stroke=\"{color}\" stroke-opacity=\"0.45\" stroke-width=\"3.2\" stroke-linecap=\"round\" clip-path=\"url(#{}-clip)\"><title>{}</title></path>",
            self.id,
            esc(name)
        );
    }

    /// Bars [x0, x1] × [0, y] in data units.
    pub fn bars(&mut self, bars: &[(f64, f64, f64)], fill: &str, stroke: &str, name: &str) {
        let _ = writeln!(
            self.body,
            "<g class=\"bars\" fill=\"{fill}\" stroke=\"{stroke}\" stroke-width=\"0.6\" clip-path=\"url(#{}-clip)\"><title>{}</title>",
            self.id,
            esc(name)
        );
        for (x0, x1, y) in bars {
            let (a, b) = (self.x.px(*x0), self.x.px(*x1));
            let (top, base) = (self.y.px(*y), self.y.px(self.y.lo));
            let _ = writeln!(
                self.body,
                "<rect x=\"{a:.2}\" y=\"{top:.2}\" width=\"{:.2}\" height=\"{:.2}\"/>",
                (b - a).max(0.0),
                (base - top).max(0.0)
            );
        }
        let _ = writeln!(self.body, "</g>");
    }

    /// A line in pixel coordinates (for annotations outside the data range).
    #[allow(clippy::too_many_arguments)]
    pub fn raw_line(
        &mut self,
        x1: f64,
        y1: f64,
        x2: f64,
        y2: f64,
        color: &str,
        width: f64,
        dash: Option<&str>,
    ) {
        let _ = writeln!(
            self.body,
            "<line x1=\"{x1:.2}\" y1=\"{y1:.2}\" x2=\"{x2:.2}\" y2=\"{y2:.2}\" stroke=\"{color}\" stroke-width=\"{width}\"{}/>",
            dash.map(|s| format!(" stroke-dasharray=\"{s}\"")).unwrap_or_default()
        );
    }

    /// Text in pixel coordinates.
    pub fn text(&mut self, x: f64, y: f64, anchor: &str, class: &str, s: &str) {
        let _ = writeln!(
            self.body,
            "<text class=\"{class}\" x=\"{x:.1}\" y=\"{y:.1}\" text-anchor=\"{anchor}\">{}</text>",
            esc(s)
        );
    }

    /// A point marker in data coordinates.
    pub fn point(&mut self, x: f64, y: f64, color: &str, r: f64, name: &str) {
        let _ = writeln!(
            self.body,
            "<circle cx=\"{:.2}\" cy=\"{:.2}\" r=\"{r}\" fill=\"{color}\" stroke=\"#fff\" stroke-width=\"1\"><title>{}</title></circle>",
            self.x.px(x),
            self.y.px(y),
            esc(name)
        );
    }

    /// A legend row at the top: (colour, dash, label).
    pub fn legend(&mut self, items: &[(&str, Option<&str>, &str)]) {
        let mut x = self.x.p0;
        for (color, dash, label) in items {
            let y = 16.0;
            self.raw_line(x, y, x + 22.0, y, color, 2.5, *dash);
            self.text(x + 27.0, y + 4.0, "start", "legend", label);
            x += 40.0 + 6.2 * label.chars().count() as f64;
        }
    }

    /// The finished SVG element (standalone when `standalone`).
    pub fn finish(&self, standalone: bool) -> String {
        let ns = if standalone {
            " xmlns=\"http://www.w3.org/2000/svg\""
        } else {
            ""
        };
        let style = if standalone { STANDALONE_STYLE } else { "" };
        format!(
            "<svg{ns} class=\"plot\" id=\"{id}\" viewBox=\"0 0 {w} {h}\" width=\"{w}\" height=\"{h}\" role=\"img\" aria-labelledby=\"{id}-title\" font-family=\"system-ui, -apple-system, 'Segoe UI', Roboto, 'DejaVu Sans', sans-serif\">\n<title id=\"{id}-title\">{title}</title>\n{style}<defs><clipPath id=\"{id}-clip\"><rect x=\"{cx:.1}\" y=\"{cy:.1}\" width=\"{cw:.1}\" height=\"{ch:.1}\"/></clipPath></defs>\n<rect class=\"bg\" x=\"0\" y=\"0\" width=\"{w}\" height=\"{h}\" fill=\"#fff\"/>\n{body}</svg>\n",
            id = self.id,
            w = self.w,
            h = self.h,
            title = esc(&self.title),
            cx = self.x.p0,
            cy = self.y.p1 - 2.0,
            cw = self.x.p1 - self.x.p0,
            ch = self.y.p0 - self.y.p1 + 4.0,
            body = self.body
        )
    }
}

/// Styles for a standalone SVG file (the report's stylesheet covers inline plots).
pub const STANDALONE_STYLE: &str = "<style>text{font-size:12px;fill:#222}.label{font-size:13px}.legend{font-size:12px}.note{font-size:11px;fill:#444}.grid line{stroke:#e6e6e6;stroke-width:1}.axis line{stroke:#444;stroke-width:1}</style>\n";

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_nice_and_cover() {
        assert_eq!(
            ticks(0.0, 1.0, 5),
            vec![0.0, 0.2, 0.4, 0.6000000000000001, 0.8, 1.0]
        );
        let t = ticks(3.2, 57.0, 6);
        assert_eq!(t.first(), Some(&10.0));
        assert_eq!(t.last(), Some(&50.0));
        assert_eq!(
            log_ticks(1.0, 1000.0),
            vec![1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0]
        );
        assert_eq!(tick_label(0.6000000000000001), "0.6");
        assert_eq!(tick_label(25.0), "25");
    }

    #[test]
    fn escapes_markup() {
        assert_eq!(esc("a<b & \"c\""), "a&lt;b &amp; &quot;c&quot;");
    }
}

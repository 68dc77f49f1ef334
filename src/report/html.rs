//! The report page: report.html and its standalone plots.

use super::assets::{CSS, JS};
use super::plots::*;
use super::svg::{self, esc};
use super::view::*;
use crate::error::Result;
use crate::export::record;
use crate::numerics::format::html as fnum;
use crate::output::summary::CAUTION;
use serde_json::Value;
use std::fmt::Write;
use std::path::{Path, PathBuf};

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
    let overall = fit.verdict.code();
    let _ = writeln!(html, "<p class=\"verdict {overall}\"><span class=\"mark\">{}</span> Overall: beliefs {}</p>\n<aside class=\"caution\" role=\"note\"><b>Caution.</b> {}</aside>\n</header>",
        mark(overall),
        esc(&h.verdict),
        esc(CAUTION.trim_start_matches("Caution: "))
    );
    // Summary table.
    html.push_str("<section>\n<h2>How well the fitted prior meets each belief</h2>\n<table class=\"summary\"><thead><tr><th>belief</th><th>stated as</th><th>weight</th><th title=\"discrepancy on fresh draws\">discrepancy</th><th title=\"Monte Carlo noise floor\">noise floor</th><th>ratio</th><th title=\"root-mean-square CDF gap beyond noise\">CDF gap</th><th>verdict</th><th title=\"prior effective sample size, moment-matched Beta a + b: believed / implied\">ESS</th></tr></thead><tbody>\n");
    for (k, b) in bs.iter().enumerate() {
        let ess = match (b.r.believed_ess, b.r.ess) {
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
            esc(&b.r.label), esc(&b.r.stated_as), b.r.weight, b.r.fresh, b.r.noise_floor, b.r.ratio, b.r.rms_cdf_gap, b.r.verdict.code(), mark(b.r.verdict.code()), esc(&b.r.verdict.code().replace('_', " ")), esc(&ess)
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
            esc(&b.r.label),
            esc(&b.r.quantity),
            b.r.unit.as_ref().map(|u| format!(" in {}", esc(u))).unwrap_or_default(),
            esc(&b.r.stated_as),
            b.r.verdict.code(),
            mark(b.r.verdict.code()),
            esc(&b.r.verdict.code().replace('_', " "))
        );
        if !b.r.how.is_empty() {
            html.push_str("<ul class=\"how\">");
            for x in &b.r.how {
                let _ = write!(html, "<li>{}</li>", esc(x));
            }
            html.push_str("</ul>\n");
        }
        let _ = writeln!(html, "<div class=\"figs\">\n<figure>{cdf}<figcaption>Cumulative distribution: believed (solid blue) and implied by the fitted prior (dashed vermillion, {} draws). Point masses appear as vertical jumps{}.</figcaption></figure>\n<figure>{den}<figcaption>Density of the continuous part: believed (blue line) over a histogram of the implied draws; bar areas are fractions of all draws. The x range covers 1–99 % of both distributions.</figcaption></figure>\n</div>",
            b.draws.len(),
            if b.r.implied_mass_at_inf > 0.0 || b.curve.as_ref().is_some_and(|c| c.inf_mass() > 0.0) {
                "; the column at ∞ holds the mass that is never reached"
            } else {
                ""
            }
        );
        html.push_str("<table class=\"quant\"><thead><tr><th>probability</th>");
        for p in &b.r.probs {
            let _ = write!(html, "<th>{}</th>", esc(&format!("{} %", p * 100.0)));
        }
        html.push_str("</tr></thead><tbody><tr><th>believed</th>");
        for q in &b.r.believed_quantiles {
            let _ = write!(html, "<td>{}</td>", fnum(*q));
        }
        html.push_str("</tr><tr><th>implied</th>");
        for q in &b.r.implied_quantiles {
            let _ = write!(html, "<td>{}</td>", fnum(*q));
        }
        html.push_str("</tr></tbody></table>\n");
        if !b.r.atoms.is_empty() {
            html.push_str("<table class=\"atoms\"><thead><tr><th>point mass at</th><th>believed</th><th>implied</th></tr></thead><tbody>");
            for a in &b.r.atoms {
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

pub(super) fn mark(verdict: &str) -> &'static str {
    match verdict {
        "met_within_noise" => "✓",
        "met_approximately" => "≈",
        "not_met" => "✗",
        _ => "?",
    }
}

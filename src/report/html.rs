//! The report page: report.html and its standalone plots.

use super::assets::{CSS, JS};
use super::plots::*;
use super::plots_regression::{interval_plot, rows_plot};
use super::svg::{self, esc};
use super::view::*;
use crate::error::Result;
use crate::export::record;
use crate::fit::profile::Call;
use crate::fit::{SetBy, Verdict};
use crate::numerics::format::html as fnum;
use crate::numerics::format::sig;
use crate::output::summary::CAUTION;
use crate::output::{explain, labels};
use serde_json::Value;
use std::fmt::Write;
use std::path::{Path, PathBuf};

/// Everything the report writes: (relative path, bytes).
pub fn render(dir: &Path) -> Result<Vec<(PathBuf, Vec<u8>)>> {
    let rec = record::read(&dir.join("fit.json"))?;
    let fit = &rec.fit;
    let draws = dir.join("draws.csv");
    if !draws.is_file() {
        // Name the likely cause: a lean batch model folder holds no draws.
        return Err(crate::error::Error::io(
            draws,
            std::io::Error::new(
                std::io::ErrorKind::NotFound,
                format!(
                    "not found; the report needs the prior draws `fit` writes (a batch model folder written with --model-files lean has none: run the batch with --model-files full, or `priorsmith fit {}` to refit it)",
                    dir.join("spec.toml").display()
                ),
            ),
        ));
    }
    let mut bs = beliefs(&rec.file, fit, &draws)?;
    // Each expert of a pooled belief, from spec.toml; like the survival curves
    // an addition: a spec.toml that no longer validates costs these curves only.
    let experts_error = super::experts::attach(dir, &mut bs).err();
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
    let undetermined = explain::undetermined(fit);
    // The headline names what most needs attention: a miss, then directions
    // the beliefs leave to the tie-break.
    let headline = match (fit.verdict, undetermined.is_empty()) {
        (Verdict::NotMet, _) => format!(
            "Overall: beliefs {} — the fitted prior does not say what the beliefs say",
            explain::overall_words(fit)
        ),
        (_, false) => format!(
            "Overall: beliefs {}, but {} undetermined by them (chosen by the tie-break)",
            explain::overall_words(fit),
            if undetermined.len() == 1 {
                format!("{} is", undetermined[0])
            } else {
                format!("{} are", undetermined.join(", "))
            }
        ),
        _ => format!("Overall: beliefs {}", explain::overall_words(fit)),
    };
    let mut caution = String::new();
    if fit.verdict == Verdict::NotMet {
        let _ = write!(
            caution,
            "<p><b>Not met.</b> {}.</p>",
            esc(explain::NEXT_STEP_NOT_MET.trim_start_matches("next: "))
        );
    }
    if !undetermined.is_empty() {
        let _ = write!(
            caution,
            "<p><b>Undetermined.</b> {}: {}.</p>",
            esc(&undetermined.join(", ")),
            esc(explain::NEXT_STEP_UNDETERMINED.trim_start_matches("next: "))
        );
    }
    let _ = writeln!(html, "<p class=\"verdict {overall}\"><span class=\"mark\">{}</span> {}</p>\n<aside class=\"caution\" role=\"note\">{caution}<p><b>Caution.</b> {}</p></aside>\n</header>",
        mark(overall),
        esc(&headline),
        esc(CAUTION.trim_start_matches("Caution: "))
    );
    // Summary table.
    html.push_str("<section>\n<h2>How well the fitted prior meets each belief</h2>\n<table class=\"summary\"><thead><tr><th>belief</th><th>stated as</th><th>weight</th><th title=\"discrepancy on fresh draws\">discrepancy</th><th title=\"Monte Carlo noise floor\">noise floor</th><th>ratio</th><th title=\"root-mean-square CDF gap beyond noise\">CDF gap</th><th>verdict</th><th title=\"prior effective sample size of the stated belief: moment-matched Beta a + b\">ESS believed</th><th title=\"prior effective sample size implied by the fitted prior: moment-matched Beta a + b\">ESS implied</th></tr></thead><tbody>\n");
    let ess = |x: Option<f64>| x.map_or("—".to_string(), |v| sig(v, 3));
    for (k, b) in bs.iter().enumerate() {
        let _ = writeln!(
            html,
            "<tr><td><a href=\"#belief-{n}\">{n}. {}</a></td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"v {}\"><span class=\"mark\">{}</span> {}</td><td>{}</td><td>{}</td></tr>",
            esc(&labels::belief(&b.r)), esc(&b.r.stated_as), sig(b.r.weight, 3), sig(b.r.fresh, 3), sig(b.r.noise_floor, 3), sig(b.r.ratio, 3), sig(b.r.rms_cdf_gap, 3), b.r.verdict.code(), mark(b.r.verdict.code()), esc(&explain::verdict_words(&b.r, fit.tolerance)), ess(b.r.believed_ess), ess(b.r.ess),
            n = k + 1
        );
    }
    html.push_str(&format!("</tbody></table>\n<p class=\"help\">The discrepancy is computed on fresh prior draws, independent of those the fit used. A ratio near 1 means the believed and implied distributions cannot be told apart with this many draws (<i>met within noise</i>); <i>met approximately</i> means the root-mean-square gap between the CDFs, beyond noise, is within the tolerance ({tol}); <i>borderline</i> marks a gap within ±20 % of it. The effective sample sizes (ESS) apply to probability-type quantities: the a + b of the Beta distribution with the same mean and variance, for the stated belief and for what the fitted prior implies.</p>\n</section>\n", tol = sig(fit.tolerance, 3)));
    // One section per belief.
    for (k, b) in bs.iter().enumerate() {
        // Beliefs are numbered from 1 everywhere (errors, columns, files).
        let n = k + 1;
        let cdf = cdf_plot(&format!("belief-{n}-cdf"), b);
        let den = density_plot(&format!("belief-{n}-density"), b);
        svgs(&format!("belief-{n}-cdf"), &cdf);
        svgs(&format!("belief-{n}-density"), &den);
        let _ = writeln!(html, "<section class=\"belief\" id=\"belief-{}\">\n<h2>Belief {}: {}</h2>\n<p class=\"sub\">quantity <code>{}</code>{} · stated as {} · <span class=\"v {}\"><span class=\"mark\">{}</span> {}</span></p>",
            k + 1,
            k + 1,
            esc(&labels::belief(&b.r)),
            esc(&b.r.quantity),
            b.r.unit.as_ref().map(|u| format!(" in {}", esc(u))).unwrap_or_default(),
            esc(&b.r.stated_as),
            b.r.verdict.code(),
            mark(b.r.verdict.code()),
            esc(&explain::verdict_words(&b.r, fit.tolerance))
        );
        let largest = explain::largest_difference_line(&b.r);
        if !b.r.how.is_empty() || largest.is_some() {
            html.push_str("<ul class=\"how\">");
            for x in &b.r.how {
                if largest.is_some() && x.starts_with("shape differs") {
                    continue;
                }
                let _ = write!(html, "<li>{}</li>", esc(x));
            }
            if let Some(l) = &largest {
                let _ = write!(html, "<li>{}</li>", esc(l));
            }
            html.push_str("</ul>\n");
        }
        let pooled = b.r.stated_as.starts_with("linear pool");
        if !b.experts.is_empty() {
            let list: Vec<String> = b
                .experts
                .iter()
                .map(|e| {
                    if super::experts::normalised(&b.experts) {
                        format!(
                            "{} (weight {} → {})",
                            e.name,
                            sig(e.weight, 3),
                            sig(e.share, 3)
                        )
                    } else {
                        format!("{} (weight {})", e.name, sig(e.share, 3))
                    }
                })
                .collect();
            let _ = writeln!(
                html,
                "<p class=\"experts\">Linear pool of {} experts: {}{}. Each expert's own distribution is drawn in the cumulative plot as a thin light-blue line.</p>",
                b.experts.len(),
                esc(&list.join(", ")),
                if super::experts::normalised(&b.experts) {
                    "; weights normalised to sum to 1"
                } else {
                    ""
                }
            );
        } else if pooled {
            let why = match &experts_error {
                Some(e) => format!("this folder's spec.toml could not be read again ({e})"),
                None => "this folder has no spec.toml to read them from".into(),
            };
            let _ = writeln!(
                html,
                "<p class=\"help\">The experts' own curves are not drawn: {}.</p>",
                esc(&why)
            );
        }
        let _ = writeln!(html, "<div class=\"figs\">\n<figure>{cdf}<figcaption>Cumulative distribution: believed (solid blue{}) and implied by the fitted prior (dashed vermillion, {} draws). Point masses appear as vertical jumps{}.</figcaption></figure>\n<figure>{den}<figcaption>Density of the continuous part: believed (blue line) over a histogram of the implied draws; bar areas are fractions of all draws. The x range covers 1–99 % of both distributions.</figcaption></figure>\n</div>",
            if b.experts.is_empty() { "" } else { "; each expert thin and light blue" },
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
    // The prior in the model's own terms: survival bands, pairwise draws.
    html.push_str(&predictive_section(dir, &rec, &bs, &mut svgs)?);
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
    html.push_str("<h3>Hyperparameters</h3>\n<table class=\"hyper\"><thead><tr><th>hyperparameter</th><th>value</th><th title=\"Monte Carlo standard error of the fitted value\">MC error</th><th>set by</th><th>range</th></tr></thead><tbody>\n");
    for name in &fit.order {
        let v = fit.hyperparameters.get(name).copied().unwrap_or(f64::NAN);
        // One rule for "at a bound" and "tie-break": the record's set_by.
        let set_by = match fit.set_by.get(name) {
            Some(SetBy::Beliefs) => "the beliefs".to_string(),
            Some(SetBy::TieBreak) => "the tie-break (the beliefs leave it undetermined)".into(),
            Some(SetBy::Bound) => {
                "a bound (the beliefs push it there, or the tie-break ran to it)".into()
            }
            Some(SetBy::Undetermined) => {
                "nothing: undetermined and no tie-break (arbitrary)".into()
            }
            Some(SetBy::Fixed) | None => "fixed in the belief file".into(),
        };
        let range = fit.bounds.get(name).map_or(String::new(), |&(lo, hi)| {
            format!("[{}, {}]", sig(lo, 4), sig(hi, 4))
        });
        let mc = match fit.mc_error.get(name) {
            Some(Some(e)) => sig(*e, 2),
            Some(None) => "—".into(),
            None => String::new(),
        };
        let class = match fit.set_by.get(name) {
            Some(SetBy::TieBreak | SetBy::Undetermined) => " class=\"tiebreak\"",
            Some(SetBy::Bound) => " class=\"bound\"",
            _ => "",
        };
        let _ = writeln!(
            html,
            "<tr{class}><td><code>{}</code></td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
            esc(name),
            sig(v, 4),
            mc,
            esc(&set_by),
            range
        );
    }
    html.push_str("</tbody></table>\n");
    if let Some(hp) = hyper_plot("hyperparameters", fit) {
        svgs("hyperparameters", &hp);
        let _ = writeln!(html, "<figure class=\"wide\">{hp}<figcaption>Each free hyperparameter's fitted value (dot) within the bounds it was fitted in; orange marks a value at a bound, where the bounds rather than the beliefs decided.</figcaption></figure>");
    }
    html.push_str("</section>\n");
    // Diagnostics in words: the directions table, the front or why there is none,
    // and the record's entries as JSON for the curious.
    html.push_str("<section id=\"diagnostics\">\n<h2>What the beliefs determine</h2>\n");
    html.push_str(&directions_table(fit));
    html.push_str("<h3>Tie-break and Pareto front</h3>\n");
    let _ = writeln!(html, "<p>{}</p>", esc(&tie_break_words(fit)));
    match &fit.pareto {
        Some(front) => {
            if let Ok(p) = crate::output::plots::pareto_plot(front, false) {
                svgs("pareto", &p);
                let _ = writeln!(html, "<figure>{p}<figcaption>Each point is the best prior for one weight κ on the spread: its discrepancy (in noise floors) against its spread (higher is a wider prior). The orange point is the prior chosen; priors left of the dashed line are within one noise floor of the best and cannot be told apart from it by the beliefs.</figcaption></figure>");
            }
        }
        None => {
            let _ = writeln!(
                html,
                "<p class=\"help\">No Pareto front was traced: {}.</p>",
                if fit.tie_break == crate::fit::TieBreakUsed::Widest {
                    "the tie-break solved for the widest prior directly, which needs no front (set <code>[fit] trace_front = true</code> to trace one for this report)"
                } else {
                    "no direction was flat enough for a tie-break, or the tie-break was set off or to a fixed κ (set <code>[fit] trace_front = true</code> to trace one)"
                }
            );
        }
    }
    let mut diag: Vec<(&str, Value)> = vec![("identifiability", as_value(&fit.identifiability))];
    if let Some(front) = &fit.pareto {
        diag.push(("pareto", as_value(front)));
    }
    for (key, v) in diag {
        let pretty = serde_json::to_string_pretty(&v).unwrap_or_default();
        let _ = writeln!(
            html,
            "<details><summary>{key} (as recorded in fit.json)</summary><pre>{}</pre></details>",
            esc(&pretty)
        );
    }
    html.push_str("</section>\n");
    let _ = writeln!(html, "<footer><p>{}</p><p>Written by <code>priorsmith report</code> from fit.json and draws.csv in this folder (the survival curves from spec.toml); the plots are also in <code>plots/</code> as SVG files.</p></footer>\n</main>\n<script>{JS}</script>\n</body>\n</html>",
        esc(CAUTION)
    );
    files.push((PathBuf::from("report.html"), html.into_bytes()));
    Ok(files)
}

/// Beliefs paired in the pairwise plots (the first ones, in file order).
const PAIR_BELIEFS: usize = 5;

/// The section "What the prior implies": the survival bands per profile
/// (survival templates) and the pairwise plots of the implied quantities.
fn predictive_section(
    dir: &Path,
    rec: &record::FitRecord,
    bs: &[BeliefView],
    svgs: &mut dyn FnMut(&str, &str),
) -> Result<String> {
    let mut html =
        String::from("<section id=\"predictive\">\n<h2>What the fitted prior implies</h2>\n");
    // The picture is an addition: a spec.toml that no longer validates (a
    // moved design file, say) costs the curves, not the report.
    match super::predictive::survival_bands(dir, rec) {
        Err(e) => {
            let _ = writeln!(html, "<p class=\"help\">No survival curves: this folder's <code>spec.toml</code> could not be re-simulated ({}).</p>", esc(&e.to_string()));
        }
        Ok(Some(bands)) => {
            let _ = writeln!(html, "<p class=\"help\">Survival curves implied by the fitted prior, re-simulated from this folder's <code>spec.toml</code> at the fitted hyperparameters ({} prior draws, seed {}): pointwise 50, 80 and 95 % bands with their median and {} sample curves; the survival and median beliefs are drawn on them in blue (believed 10–90 % interval and median).</p>",
                super::predictive::CURVE_DRAWS, rec.header.seed, super::predictive::SAMPLE_CURVES);
            html.push_str("<div class=\"figs\">\n");
            for (k, b) in bands.iter().enumerate() {
                let id = if b.profile.is_empty() {
                    "survival".to_string()
                } else {
                    format!("survival-{}", k + 1)
                };
                let plot = survival_plot(&id, b);
                svgs(&id, &plot);
                // The template's own survival function (each template's module doc).
                let formula = match rec.header.template.as_str() {
                    "mixture-cure" => "S(t) = π + (1 − π)·S<sub>u</sub>(t)",
                    "promotion-time-cure" => "S(t) = exp(−θ·F(t))",
                    _ => "S(t) of the latency distribution",
                };
                let _ = writeln!(html, "<figure>{plot}<figcaption>Prior-predictive survival{}: {formula} over prior draws.</figcaption></figure>",
                    if b.profile.is_empty() { String::new() } else { format!(" for profile <code>{}</code>", esc(&b.profile)) });
            }
            html.push_str("</div>\n");
        }
        Ok(None)
            if crate::templates::find(&rec.header.template)
                .is_some_and(|t| t.quantities.iter().any(|q| q.name == "survival_prob")) =>
        {
            html.push_str("<p class=\"help\">No survival curves: this folder has no <code>spec.toml</code> to re-simulate them from (fit it again to write one).</p>\n");
        }
        Ok(None) => {}
    }
    html.push_str(&regression_section(dir, rec, svgs));
    let n = bs.len().min(PAIR_BELIEFS);
    if n >= 2 {
        let cols = read_draws(&dir.join("draws.csv"), &rec.fit)?;
        let _ = writeln!(html, "<h3>Implied quantities jointly</h3>\n<p class=\"help\">Each plot shows the same prior draws of two implied quantities (from <code>draws.csv</code>). The fit matches each quantity's distribution on its own, not their joint behaviour: check that what these plots imply together is plausible.{}</p>",
            if bs.len() > n { format!(" The first {n} beliefs are paired.") } else { String::new() });
        html.push_str("<div class=\"figs\">\n");
        for i in 0..n {
            for j in i + 1..n {
                let rho = super::predictive::spearman(&cols[i], &cols[j]);
                let id = format!("pair-{}-{}", i + 1, j + 1);
                let xl = format!("{}. {}", i + 1, labels::belief(&bs[i].r));
                let yl = format!("{}. {}", j + 1, labels::belief(&bs[j].r));
                let plot = pair_plot(&id, &xl, &yl, &cols[i], &cols[j], rho);
                svgs(&id, &plot);
                let _ = writeln!(html, "<figure>{plot}<figcaption>Beliefs {} and {}: fresh prior draws; Spearman rank correlation {}.</figcaption></figure>", i + 1, j + 1, sig(rho, 2));
            }
        }
        html.push_str("</div>\n");
    }
    html.push_str("</section>\n");
    Ok(html)
}

/// The regression picture (see [`super::regression`]): the response at each
/// profile and the R²-type quantities, with their beliefs. Like the survival
/// curves it is an addition: a spec.toml that no longer validates costs the
/// picture, with a sentence saying why.
fn regression_section(
    dir: &Path,
    rec: &record::FitRecord,
    svgs: &mut dyn FnMut(&str, &str),
) -> String {
    let mut html = String::new();
    let pic = match super::regression::regression_picture(dir, rec) {
        Err(e) => {
            let _ = writeln!(html, "<p class=\"help\">No prior-predictive picture of the model: this folder's <code>spec.toml</code> could not be re-simulated ({}).</p>", esc(&e.to_string()));
            return html;
        }
        Ok(None) => {
            if crate::templates::find(&rec.header.template)
                .is_some_and(|t| t.quantities.iter().any(|q| q.name == "mean_response"))
            {
                html.push_str("<p class=\"help\">No prior-predictive picture of the model: this folder has no <code>spec.toml</code> to re-simulate it from (fit it again to write one).</p>\n");
            }
            return html;
        }
        Ok(Some(p)) => p,
    };
    let what = labels::quantity(&pic.response);
    let _ = writeln!(html, "<p class=\"help\">What the fitted prior implies in the model's own terms, re-simulated from this folder's <code>spec.toml</code> at the fitted hyperparameters ({} prior draws, seed {}): for each quantity, the 50 % (dark), 80 % and 95 % (light) prior-predictive intervals and the median (dot); a belief about the same quantity is drawn beside it in blue (believed 10–90 % interval and median).</p>",
        super::predictive::CURVE_DRAWS, rec.header.seed);
    html.push_str("<div class=\"figs\">\n");
    let cats: Vec<(String, &super::regression::Interval)> = pic
        .profiles
        .iter()
        .map(|iv| {
            let name = if iv.profile == "reference" {
                "reference (design mean)".to_string()
            } else {
                iv.profile.clone()
            };
            (name, iv)
        })
        .collect();
    let unit = pic.response == "event_prob";
    let ylabel = if pic.response == "rate" {
        format!("{what} (per unit exposure)")
    } else {
        what.clone()
    };
    let plot = interval_plot(
        "response",
        &format!("Prior-predictive {what} at each profile"),
        &ylabel,
        &cats,
        unit,
    );
    svgs("response", &plot);
    let _ = writeln!(html, "<figure>{plot}<figcaption>Prior-predictive {} at the reference profile (every covariate at its design mean) and at each profile of the belief file{}.</figcaption></figure>",
        esc(&what),
        if pic.response == "rate" { ", per unit exposure" } else { "" });
    if pic.rows.len() >= 2 {
        let plot = rows_plot(
            "design-rows",
            &format!("Prior-predictive {what} across design rows"),
            &ylabel,
            &pic.rows,
            unit,
        );
        svgs("design-rows", &plot);
        let _ = writeln!(html, "<figure>{plot}<figcaption>Prior-predictive {} at {} of the design's {} rows ({}), sorted by their implied median: pointwise 50, 80 and 95 % bands and the median{}.</figcaption></figure>",
            esc(&what),
            pic.rows.len(),
            pic.design_rows,
            if pic.rows.len() == pic.design_rows { "all of them".to_string() } else { "evenly spaced".to_string() },
            if rec.header.template.ends_with("-multilevel") { ", in a typical cluster (random intercept 0)" } else { "" });
    }
    if !pic.shares.is_empty() {
        let cats: Vec<(String, &super::regression::Interval)> = pic
            .shares
            .iter()
            .map(|iv| (labels::quantity(&iv.quantity), iv))
            .collect();
        let plot = interval_plot(
            "variance-explained",
            "Prior-predictive R² and variance shares",
            "share of variance",
            &cats,
            true,
        );
        svgs("variance-explained", &plot);
        let _ = writeln!(html, "<figure>{plot}<figcaption>How much of the outcome's variance the fitted prior lets the model explain: {}.</figcaption></figure>",
            esc(&cats.iter().map(|c| c.0.clone()).collect::<Vec<_>>().join(", ")));
    }
    html.push_str("</div>\n");
    html
}

/// The tie-break in a sentence.
fn tie_break_words(fit: &crate::fit::FitResult) -> String {
    use crate::fit::TieBreakUsed;
    let und = explain::undetermined(fit);
    let which = if und.is_empty() {
        String::new()
    } else {
        format!(" It set {}.", und.join(", "))
    };
    match fit.tie_break {
        TieBreakUsed::Off => "Tie-break: none (no direction was flat, or it was set off).".into(),
        TieBreakUsed::Widest => format!("Tie-break: the widest prior whose discrepancy is within one reference floor of the best, along the undetermined and borderline directions.{which}"),
        TieBreakUsed::Knee => match &fit.pareto {
            Some(f) => format!("Tie-break: the knee of the Pareto front (rule `{}`) chose κ = {}.{which}", f.rule, sig(f.points[f.chosen].kappa, 3)),
            None => format!("Tie-break: the knee of the Pareto front.{which}"),
        },
        TieBreakUsed::Kappa(k) => format!("Tie-break: a fixed weight κ = {} on the spread.{which}", sig(k, 3)),
    }
}

/// The directions of the identifiability analysis as a table in words.
fn directions_table(fit: &crate::fit::FitResult) -> String {
    let id = &fit.identifiability;
    let mut h = String::new();
    if id.directions.is_empty() && id.lines.is_empty() {
        h.push_str("<p>No free hyperparameters.</p>\n");
        return h;
    }
    let _ = writeln!(h, "<p class=\"help\">Along each direction of the free hyperparameters (on the optimiser's unbounded scale), the share of the allowed range over which the discrepancy stays within one reference floor ({}) of the best: 0.10 or less is <i>determined</i>, 0.15 or more <i>undetermined</i> (the tie-break chooses there), between them <i>borderline</i>. δ* is how far one can move before the discrepancy rises by one noise floor.</p>", sig(id.reference_floor, 3));
    h.push_str("<table class=\"directions\"><thead><tr><th>direction</th><th>call</th><th>flat share</th><th>δ*</th><th>in words</th></tr></thead><tbody>\n");
    for d in &id.directions {
        let share = d
            .width
            .map_or("below 0.10 (steep)".to_string(), |w| sig(w, 3));
        let words = match d.call {
            Call::Determined => "the beliefs fix this combination",
            Call::Borderline => "the beliefs barely fix this combination; the tie-break settles it",
            Call::Undetermined => "the beliefs do not fix this combination; the tie-break chose it",
            Call::PushedToBound => "the beliefs push this combination to a bound of its range",
        };
        let _ = writeln!(h, "<tr class=\"{}\"><td><code>{}</code></td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
            if d.call.is_flat() { "flat" } else { "" },
            esc(&d.description), esc(d.call.words()), share, sig(d.indistinguishable_halfwidth, 3), words);
    }
    for l in id.lines.iter().filter(|l| l.at_bound.is_some()) {
        let _ = writeln!(h, "<tr class=\"bound\"><td><code>{}</code></td><td>{}</td><td>{}</td><td>—</td><td>at a bound of its range{}</td></tr>",
            esc(&l.description), esc(l.call.words()), sig(l.width, 3),
            if l.call == Call::PushedToBound { ": the beliefs push it there" } else { "" });
    }
    h.push_str("</tbody></table>\n");
    h
}

pub(super) fn mark(verdict: &str) -> &'static str {
    match verdict {
        "met_within_noise" => "✓",
        "met_approximately" => "≈",
        "not_met" => "✗",
        _ => "?",
    }
}

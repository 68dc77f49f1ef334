//! `summary.txt`: a plain-text table of the fitted hyperparameters and of how
//! well each belief is met.

use super::{explain, labels};
use crate::fit::verdict::fmt_num;
use crate::fit::FitResult;
use std::fmt::Write;

pub const CAUTION: &str = "Caution: a fitted prior is a proposal, not a decision. The responsible \
statistician must review it, check it for prior–data conflict and sensitivity, and use it within \
the applicable regulatory guidance and local practice.";

/// How the draws were chosen, in words.
fn draws_note(r: &FitResult) -> String {
    let d = &r.draws_chosen;
    match d.target {
        Some(t) => format!(
            "precision mode: target {}% of each determined value{}",
            fmt_num(100.0 * t),
            if d.reached {
                ""
            } else {
                ", NOT reached within the cap"
            }
        ),
        None => "draws fixed".to_string(),
    }
}

pub fn render(r: &FitResult) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "priorsmith {} — {}", r.tool_version, r.title);
    let _ = writeln!(
        s,
        "template {}, {} draws ({}, {}), seed {}, discrepancy {}, spec sha256 {}",
        r.template,
        r.draws,
        r.draws_chosen.points.name(),
        draws_note(r),
        r.seed,
        r.discrepancy.name(),
        &r.spec_digest[..12.min(r.spec_digest.len())]
    );
    let _ = writeln!(s, "Verdict: {}", explain::overall_words(r));
    let und = explain::undetermined(r);
    if !und.is_empty() {
        let _ = writeln!(
            s,
            "Undetermined by the beliefs (value chosen by the tie-break, not by the beliefs): {}",
            und.join(", ")
        );
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "Hyperparameters (MC error: Monte Carlo standard error of the fitted value)"
    );
    let w = r.order.iter().map(String::len).max().unwrap_or(10).max(14);
    let _ = writeln!(
        s,
        "  {:<w$}  {:>12}  {:>10}  {:<12}  range",
        "hyperparameter", "value", "MC error", "set by"
    );
    for name in &r.order {
        let v = r.hyperparameters[name];
        let set_by = r.set_by.get(name).map_or("", |x| x.words());
        let mc = match r.mc_error.get(name) {
            Some(Some(e)) => fmt_num(*e),
            Some(None) => "—".to_string(),
            None => String::new(),
        };
        let range = match r.bounds.get(name) {
            Some((lo, hi)) => format!("[{}, {}]", fmt_num(*lo), fmt_num(*hi)),
            None => String::new(),
        };
        let _ = writeln!(
            s,
            "  {name:<w$}  {:>12}  {mc:>10}  {set_by:<12}  {range}",
            fmt_num(v)
        );
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "Beliefs (discrepancy on fresh draws vs the Monte Carlo noise floor)"
    );
    let lw = r
        .beliefs
        .iter()
        .map(|b| labels::belief(b).chars().count())
        .max()
        .unwrap_or(10)
        .max(10);
    let _ = writeln!(
        s,
        "  {:<lw$}  {:>11}  {:>11}  {:>7}  {:>8}  verdict",
        "belief", "fresh", "floor", "ratio", "CDF gap"
    );
    for b in &r.beliefs {
        let _ = writeln!(
            s,
            "  {:<lw$}  {:>11}  {:>11}  {:>7}  {:>8}  {}",
            labels::belief(b),
            fmt_num(b.fresh),
            fmt_num(b.noise_floor),
            fmt_num(b.ratio),
            fmt_num(b.rms_cdf_gap),
            explain::verdict_words(b, r.tolerance)
        );
        let largest = explain::largest_difference_line(b);
        for h in &b.how {
            // The generic "shape differs" line says less than the largest difference.
            if largest.is_some() && h.starts_with("shape differs") {
                continue;
            }
            let _ = writeln!(s, "  {:<lw$}    ↳ {h}", "");
        }
        if let Some(l) = largest {
            let _ = writeln!(s, "  {:<lw$}    ↳ {l}", "");
        }
    }
    let _ = writeln!(
        s,
        "  {:<lw$}  {:>11}  {:>11}  {:>7}  {:>8}  {}",
        "total (weighted)",
        fmt_num(r.total.fresh),
        fmt_num(r.total.noise_floor),
        fmt_num(r.total.fresh / r.total.noise_floor),
        "",
        explain::overall_words(r)
    );
    if r.verdict == crate::fit::Verdict::NotMet {
        let _ = writeln!(s, "  {}", explain::NEXT_STEP_NOT_MET);
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "Believed vs implied quantiles");
    let probs: Vec<String> = r
        .beliefs
        .first()
        .map(|b| {
            b.probs
                .iter()
                .map(|p| format!(" {:>9}", format!("{}%", p * 100.0)))
                .collect()
        })
        .unwrap_or_default();
    let _ = writeln!(s, "  {:<lw$}  {:>8} {}", "belief", "", probs.join(""));
    for b in &r.beliefs {
        let row = |v: &[f64]| {
            v.iter()
                .map(|x| format!(" {:>9}", fmt_num(*x)))
                .collect::<String>()
        };
        let _ = writeln!(
            s,
            "  {:<lw$}  {:>8} {}",
            labels::belief(b),
            "believed",
            row(&b.believed_quantiles)
        );
        let _ = writeln!(
            s,
            "  {:<lw$}  {:>8} {}",
            "",
            "implied",
            row(&b.implied_quantiles)
        );
        for a in &b.atoms {
            let _ = writeln!(
                s,
                "  {:<lw$}  atom at {}: believed {:.2} %, implied {:.2} %",
                "",
                fmt_num(a.at),
                100.0 * a.believed,
                100.0 * a.implied
            );
        }
    }
    if r.beliefs
        .iter()
        .any(|b| b.ess.is_some() || b.believed_ess.is_some())
    {
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "Prior effective sample size (probability-type quantities: moment-matched Beta a + b)"
        );
        let _ = writeln!(
            s,
            "  {:<lw$}  {:>10}  {:>10}",
            "belief", "believed", "implied"
        );
        let f = |x: Option<f64>| x.map_or("—".to_string(), |v| format!("{v:.1}"));
        for b in r
            .beliefs
            .iter()
            .filter(|b| b.ess.is_some() || b.believed_ess.is_some())
        {
            let _ = writeln!(
                s,
                "  {:<lw$}  {:>10}  {:>10}",
                labels::belief(b),
                f(b.believed_ess),
                f(b.ess)
            );
        }
    }
    let _ = writeln!(s);
    // Identifiability.
    let id = &r.identifiability;
    let _ = writeln!(
        s,
        "What the beliefs determine: along each direction, the share of the allowed range over which the"
    );
    let _ = writeln!(
        s,
        "discrepancy stays within one reference floor ({}) of the best; 0.15 or more is undetermined,",
        fmt_num(id.reference_floor)
    );
    let _ = writeln!(
        s,
        "0.10 or less determined, between them borderline (δ*: the local half-width on the optimiser's scale)"
    );
    if id.directions.is_empty() && id.lines.is_empty() {
        let _ = writeln!(s, "  no free hyperparameters");
    }
    for d in &id.directions {
        let width = d
            .width
            .map_or("< 0.10 (steep)".to_string(), |w| format!("{w:.3}"));
        let _ = writeln!(
            s,
            "  {:<12}  flat share {:>14}  δ* = {:>9}  {}",
            d.call.words(),
            width,
            fmt_num(d.indistinguishable_halfwidth),
            d.description
        );
    }
    for l in id.lines.iter().filter(|l| l.at_bound.is_some()) {
        let _ = writeln!(
            s,
            "  {:<12}  flat share {:>14}  {}{}",
            l.call.words(),
            fmt_num(l.width),
            l.description,
            if l.call == crate::fit::profile::Call::PushedToBound {
                " (the beliefs push it there)"
            } else {
                ""
            }
        );
    }
    match (&r.pareto, r.tie_break) {
        (Some(f), crate::fit::TieBreakUsed::Knee) => {
            let p = &f.points[f.chosen];
            let _ = writeln!(
                s,
                "  tie-break: rule `{}` chose κ = {} on the Pareto front ({} points; discrepancy {}, spread {})",
                f.rule,
                fmt_num(p.kappa),
                f.points.len(),
                fmt_num(p.discrepancy),
                fmt_num(-p.secondary)
            );
        }
        (_, crate::fit::TieBreakUsed::Widest) => {
            let _ = writeln!(
                s,
                "  tie-break: widest prior within one reference floor of the best along the undetermined and borderline directions"
            );
        }
        (_, t) => {
            let _ = writeln!(s, "  tie-break: {}", t.words());
        }
    }
    if let Some(rep) = &r.replicates {
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "Replicates: {} independent seeds (relative range flagged above {:.0} %)",
            rep.seeds.len(),
            100.0 * rep.threshold
        );
        for (name, sp) in &rep.per_hyperparameter {
            let _ = writeln!(
                s,
                "  {name:<w$}  mean {:>10}  sd {:>10}  rel. range {:>6.2} %{}",
                fmt_num(sp.mean),
                fmt_num(sp.sd),
                100.0 * sp.relative_range,
                if sp.flagged {
                    "  ← not identified by the beliefs"
                } else {
                    ""
                }
            );
        }
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "Optimiser: {} evaluations, {} starts, {} local searches, {:.2} s",
        r.optimiser.evaluations,
        r.optimiser.starts,
        r.optimiser.searches.len(),
        r.wall_time_s
    );
    let _ = writeln!(s);
    let _ = writeln!(s, "{CAUTION}");
    s
}

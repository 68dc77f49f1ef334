//! What a fit's verdicts mean, in words, for every output that shows them
//! (summary.txt, the report, the terminal's warnings): the borderline display,
//! the largest single difference between a belief and what the prior implies,
//! and the next step after a fit that is not met or leaves directions
//! undetermined.
//!
//! The verdict *rules* live in [`crate::fit::verdict`] and are not changed here.
//! This module only shows them: a belief whose root-mean-square CDF gap lies
//! within ±20 % of the tolerance (and that is not met within noise) is shown as
//! **borderline** with its gap, because on either side of the tolerance the two
//! curves look alike and the verdict could turn with another seed (the 20 % band
//! is a display choice: common practice for a "near the threshold" flag, not a
//! statistical test).
//!
//! The largest difference compares, on one scale — probability —, each of the
//! seven implied quantiles with the believed CDF there (|F_believed(q̂_p) − p|)
//! and each atom's implied mass with its believed mass (|m̂ − m|), and names the
//! largest: "75 % quantile: believed 5.29, implied 6.55 (the believed CDF is
//! 0.86 there: 11 points)".

use crate::fit::verdict::{BeliefReport, Verdict};
use crate::fit::FitResult;
use crate::numerics::format::sig;

/// Half-width of the borderline band, as a share of the tolerance.
pub const BORDERLINE_BAND: f64 = 0.2;

/// Whether a belief's verdict is near the tolerance: not met within noise and
/// |gap − tolerance| ≤ 20 % of the tolerance.
pub fn is_borderline(b: &BeliefReport, tolerance: f64) -> bool {
    b.verdict != Verdict::MetWithinNoise
        && tolerance > 0.0
        && (b.rms_cdf_gap - tolerance).abs() <= BORDERLINE_BAND * tolerance
}

/// A belief's verdict in words, with "borderline" and its gap when near the
/// tolerance: "not met (borderline: CDF gap 0.0202, tolerance 0.02)".
pub fn verdict_words(b: &BeliefReport, tolerance: f64) -> String {
    if is_borderline(b, tolerance) {
        format!(
            "{} (borderline: CDF gap {}, tolerance {})",
            b.verdict.words(),
            sig(b.rms_cdf_gap, 3),
            sig(tolerance, 3)
        )
    } else {
        b.verdict.words().to_string()
    }
}

/// The overall verdict in words: every not-met belief borderline makes the
/// headline "not met (borderline …)" with the largest gap.
pub fn overall_words(r: &FitResult) -> String {
    let worst: Vec<&BeliefReport> = r
        .beliefs
        .iter()
        .filter(|b| b.verdict == r.verdict)
        .collect();
    if r.verdict != Verdict::MetWithinNoise
        && !worst.is_empty()
        && worst.iter().all(|b| is_borderline(b, r.tolerance))
    {
        let gap = worst.iter().map(|b| b.rms_cdf_gap).fold(0.0, f64::max);
        format!(
            "{} (borderline: largest CDF gap {}, tolerance {})",
            r.verdict.words(),
            sig(gap, 3),
            sig(r.tolerance, 3)
        )
    } else {
        r.verdict.words().to_string()
    }
}

/// One belief's largest single difference on the probability scale.
#[derive(Debug, Clone, PartialEq)]
pub struct Difference {
    /// On the probability scale (0–1).
    pub gap: f64,
    pub words: String,
}

/// The believed CDF at `x`, interpolated linearly in the tabulated curve.
fn believed_cdf(b: &BeliefReport, x: f64) -> Option<f64> {
    let c = &b.believed_curve;
    if c.x.is_empty() || x.is_nan() {
        return None;
    }
    if x == f64::INFINITY {
        // Everything but an atom at +∞.
        let at_inf: f64 = c
            .atoms
            .iter()
            .filter(|a| a.at.is_infinite())
            .map(|a| a.mass)
            .sum();
        return Some(1.0 - at_inf);
    }
    let k = c.x.partition_point(|v| *v <= x);
    Some(if k == 0 {
        0.0_f64.max(
            c.cdf[0]
                - c.atoms
                    .iter()
                    .filter(|a| a.at == c.x[0])
                    .map(|a| a.mass)
                    .sum::<f64>(),
        )
    } else if k == c.x.len() {
        c.cdf[k - 1]
    } else {
        // Right-continuous steps at atoms; linear between tabulated points.
        let (x0, x1) = (c.x[k - 1], c.x[k]);
        let (f0, f1) = (c.cdf[k - 1], c.cdf[k]);
        let jump: f64 = c.atoms.iter().filter(|a| a.at == x1).map(|a| a.mass).sum();
        f0 + (f1 - jump - f0) * (x - x0) / (x1 - x0)
    })
}

/// Where the implied distribution differs most from the belief.
pub fn largest_difference(b: &BeliefReport) -> Option<Difference> {
    let mut best: Option<Difference> = None;
    let mut consider = |d: Difference| {
        if best.as_ref().is_none_or(|x| d.gap > x.gap) {
            best = Some(d);
        }
    };
    for ((p, bq), iq) in b
        .probs
        .iter()
        .zip(&b.believed_quantiles)
        .zip(&b.implied_quantiles)
    {
        let Some(f) = believed_cdf(b, *iq) else {
            continue;
        };
        consider(Difference {
            gap: (f - p).abs(),
            words: format!(
                "{} % quantile: believed {}, implied {} (the believed CDF is {} there: {} points)",
                sig(100.0 * p, 3),
                sig(*bq, 3),
                sig(*iq, 3),
                sig(f, 2),
                sig(100.0 * (f - p).abs(), 2)
            ),
        });
    }
    for a in &b.atoms {
        let place = if a.at.is_infinite() {
            "never-reached mass (at ∞)".to_string()
        } else {
            format!("mass at {}", sig(a.at, 3))
        };
        consider(Difference {
            gap: (a.implied - a.believed).abs(),
            words: format!(
                "{place}: believed {} %, implied {} % ({} points)",
                sig(100.0 * a.believed, 3),
                sig(100.0 * a.implied, 3),
                sig(100.0 * (a.implied - a.believed).abs(), 2)
            ),
        });
    }
    best
}

/// The largest difference as the "↳" line of a belief that is not met within
/// noise, e.g. "largest difference: 75 % quantile: believed 5.29, implied 6.55 …".
pub fn largest_difference_line(b: &BeliefReport) -> Option<String> {
    if b.verdict == Verdict::MetWithinNoise {
        return None;
    }
    largest_difference(b).map(|d| format!("largest difference: {}", d.words))
}

/// Names of the hyperparameters the beliefs leave undetermined.
pub fn undetermined(r: &FitResult) -> Vec<&str> {
    r.order
        .iter()
        .filter(|n| {
            matches!(
                r.set_by.get(*n),
                Some(crate::fit::SetBy::TieBreak) | Some(crate::fit::SetBy::Undetermined)
            )
        })
        .map(String::as_str)
        .collect()
}

/// "belief 2 (median survival)": beliefs are numbered from 1 everywhere.
pub fn belief_name(i: usize, b: &BeliefReport) -> String {
    format!("belief {} ({})", i + 1, super::labels::belief(b))
}

/// What to do after a fit that is not met, in one sentence.
pub const NEXT_STEP_NOT_MET: &str = "next: read the \"largest difference\" lines in summary.txt; \
check that the beliefs agree with each other, widen the ones that are sharper than your \
knowledge, or free (or widen the bounds of) the hyperparameters that move the missed quantity; \
`priorsmith sweep` shows how the fit changes with the beliefs' widths";

/// What to do after a fit that leaves directions undetermined.
pub const NEXT_STEP_UNDETERMINED: &str = "next: the beliefs do not determine these \
hyperparameters, so the tie-break chose their values (the widest prior that still meets the \
beliefs); add a belief about a quantity they move, or fix them in the belief file";

/// Warnings for the terminal (stderr) about a fit: one line per not-met
/// belief (with its largest difference), the next step, and the undetermined
/// hyperparameters. `what` names the fit ("fit", "models/row-3").
pub fn warnings(what: &str, r: &FitResult) -> Vec<String> {
    let mut out = Vec::new();
    if r.verdict == Verdict::NotMet {
        out.push(format!(
            "warning: {what}: the fitted prior does not meet its beliefs: {}",
            overall_words(r)
        ));
        for (i, b) in r.beliefs.iter().enumerate() {
            if b.verdict != Verdict::NotMet {
                continue;
            }
            let mut line = format!("  {}: {}", belief_name(i, b), verdict_words(b, r.tolerance));
            if !is_borderline(b, r.tolerance) {
                line.push_str(&format!(
                    " — CDF gap {} against a tolerance of {}",
                    sig(b.rms_cdf_gap, 3),
                    sig(r.tolerance, 3)
                ));
            }
            out.push(line);
            if let Some(l) = largest_difference_line(b) {
                out.push(format!("    ↳ {l}"));
            }
        }
        out.push(format!("  {NEXT_STEP_NOT_MET}"));
    }
    let und = undetermined(r);
    if !und.is_empty() {
        out.push(format!(
            "note: {what}: the beliefs leave {} undetermined; the tie-break set {}",
            und.join(", "),
            if und.len() == 1 { "it" } else { "them" }
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::verdict::{AtomCheck, BelievedCurve};

    /// A belief whose believed CDF is uniform on [0, 10] (tabulated), with
    /// the given implied quantiles and atoms.
    fn report(implied: Vec<f64>, atoms: Vec<AtomCheck>, gap: f64, v: Verdict) -> BeliefReport {
        let probs = crate::fit::verdict::PROBS.to_vec();
        let x: Vec<f64> = (0..=100).map(|k| k as f64 / 10.0).collect();
        BeliefReport {
            label: "median survival".into(),
            quantity: "median_survival".into(),
            stated_as: "test".into(),
            unit: None,
            weight: 1.0,
            in_sample: 0.0,
            fresh: 0.0,
            noise_floor: 1.0,
            ratio: 0.0,
            rms_cdf_gap: gap,
            verdict: v,
            how: vec![],
            believed_quantiles: probs.iter().map(|p| 10.0 * p).collect(),
            implied_quantiles: implied,
            probs,
            atoms,
            implied_mean: None,
            implied_sd: None,
            implied_mass_at_inf: 0.0,
            believed_curve: BelievedCurve {
                cdf: x.iter().map(|v| v / 10.0).collect(),
                pdf: vec![0.1; x.len()],
                x,
                atoms: vec![],
            },
            ess: None,
            believed_ess: None,
        }
    }

    /// The band is ±20 % of the tolerance around it, and never applies to a
    /// belief met within noise.
    #[test]
    fn borderline_band() {
        let q = crate::fit::verdict::PROBS
            .iter()
            .map(|p| 10.0 * p)
            .collect::<Vec<_>>();
        for (gap, v, want) in [
            (0.0202, Verdict::NotMet, true),
            (0.0239, Verdict::NotMet, true),
            (0.0241, Verdict::NotMet, false),
            (0.0161, Verdict::MetApproximately, true),
            (0.0159, Verdict::MetApproximately, false),
            (0.019, Verdict::MetWithinNoise, false),
        ] {
            let b = report(q.clone(), vec![], gap, v);
            assert_eq!(is_borderline(&b, 0.02), want, "gap {gap}");
        }
        let b = report(q, vec![], 0.0202, Verdict::NotMet);
        assert_eq!(
            verdict_words(&b, 0.02),
            "not met (borderline: CDF gap 0.0202, tolerance 0.02)"
        );
    }

    /// The largest difference is the quantile whose believed CDF is furthest
    /// from its level, or an atom whose mass differs more (uniform [0, 10]
    /// belief: F(x) = x / 10, computed by hand).
    #[test]
    fn names_the_largest_quantile_or_atom_difference() {
        // Implied 75 % quantile at 8.6: F = 0.86, 11 points; the others exact.
        let mut q: Vec<f64> = crate::fit::verdict::PROBS
            .iter()
            .map(|p| 10.0 * p)
            .collect();
        q[4] = 8.6;
        let b = report(q.clone(), vec![], 0.05, Verdict::NotMet);
        let d = largest_difference(&b).unwrap();
        assert!((d.gap - 0.11).abs() < 1e-9, "{d:?}");
        assert!(
            d.words
                .starts_with("75 % quantile: believed 7.5, implied 8.6"),
            "{}",
            d.words
        );
        // A never-reached mass 15 % believed vs 2.5 % implied (12.5 points) wins.
        let atoms = vec![AtomCheck {
            at: f64::INFINITY,
            believed: 0.15,
            implied: 0.025,
        }];
        let b = report(q, atoms, 0.05, Verdict::NotMet);
        let d = largest_difference(&b).unwrap();
        assert!((d.gap - 0.125).abs() < 1e-9, "{d:?}");
        assert!(
            d.words
                .starts_with("never-reached mass (at ∞): believed 15 %, implied 2.5 %"),
            "{}",
            d.words
        );
        // Met within noise: no line.
        let ok = report(vec![0.0; 7], vec![], 0.0, Verdict::MetWithinNoise);
        assert_eq!(largest_difference_line(&ok), None);
    }
}

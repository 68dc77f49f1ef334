//! Faithfulness verdicts: is each belief met by the fitted prior, and if not, how
//! is it missed?
//!
//! * **met within noise**: the fresh-draw discrepancy is below the upper 5 % point
//!   of its null distribution (the noise floor × 2.768 for CvM, × 2.49 for AD;
//!   Stephens 1974) — the implied and believed distributions cannot be told apart
//!   with this many draws.
//! * **met approximately**: the root-mean-square CDF gap beyond the noise,
//!   √max(d_CvM − floor, 0), is at most the tolerance (default 0.02: two
//!   percentage points of probability).
//! * **not met**: otherwise, with the direction of the miss from quantiles on the
//!   belief's natural scale (log for positive, logit for probabilities): a shift
//!   of the median, a ratio of the 10–90 % widths, and atom masses compared.

use crate::discrepancy::{discrepancy, Kind};
use crate::spec::Belief;
use crate::target::quantiles::Scale;
use serde::{Deserialize, Serialize};

pub const PROBS: [f64; 7] = [0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95];

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, PartialOrd, Ord)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    MetWithinNoise,
    MetApproximately,
    NotMet,
}

impl Verdict {
    /// As written in fit.json (and used as a CSS class by the report).
    pub fn code(&self) -> &'static str {
        match self {
            Verdict::MetWithinNoise => "met_within_noise",
            Verdict::MetApproximately => "met_approximately",
            Verdict::NotMet => "not_met",
        }
    }

    pub fn words(&self) -> &'static str {
        match self {
            Verdict::MetWithinNoise => "met within noise",
            Verdict::MetApproximately => "met approximately",
            Verdict::NotMet => "not met",
        }
    }
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct AtomCheck {
    #[serde(with = "crate::numerics::ext::num")]
    pub at: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub believed: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub implied: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct BeliefReport {
    pub label: String,
    pub quantity: String,
    pub stated_as: String,
    pub unit: Option<String>,
    #[serde(with = "crate::numerics::ext::num")]
    pub weight: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub in_sample: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub fresh: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub noise_floor: f64,
    /// fresh / noise_floor
    #[serde(with = "crate::numerics::ext::num")]
    pub ratio: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub rms_cdf_gap: f64,
    pub verdict: Verdict,
    /// Plain-words description of a miss (empty when met within noise).
    pub how: Vec<String>,
    #[serde(with = "crate::numerics::ext::nums")]
    pub probs: Vec<f64>,
    #[serde(with = "crate::numerics::ext::nums")]
    pub believed_quantiles: Vec<f64>,
    #[serde(with = "crate::numerics::ext::nums")]
    pub implied_quantiles: Vec<f64>,
    pub atoms: Vec<AtomCheck>,
    pub implied_mean: Option<f64>,
    pub implied_sd: Option<f64>,
    /// Mass of the implied distribution at +∞ (e.g. median never reached).
    #[serde(with = "crate::numerics::ext::num")]
    pub implied_mass_at_inf: f64,
    /// The believed distribution as a curve, for plots (reports read it back).
    pub believed_curve: BelievedCurve,
    /// Prior effective sample size of a probability-type quantity: the
    /// moment-matched Beta's a + b from the implied draws (see `target::ess`).
    pub ess: Option<f64>,
    /// The same for the stated belief, from its exact moments.
    pub believed_ess: Option<f64>,
}

/// The believed CDF F(x) and the density of its continuous part, tabulated on
/// `CURVE_POINTS` points (half quantile-spaced, half evenly spaced between the
/// 0.1 % and 99.9 % quantiles of the continuous part, plus every finite atom),
/// with the atoms listed separately. `cdf` is right-continuous: at an atom `a`
/// it includes the atom's mass; the left limit is `cdf − mass`. `pdf` is the
/// continuous part's density times its mass (so it integrates to 1 − Σ atoms).
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct BelievedCurve {
    #[serde(with = "crate::numerics::ext::nums")]
    pub x: Vec<f64>,
    #[serde(with = "crate::numerics::ext::nums")]
    pub cdf: Vec<f64>,
    #[serde(with = "crate::numerics::ext::nums")]
    pub pdf: Vec<f64>,
    pub atoms: Vec<crate::dist::Atom>,
}

pub const CURVE_POINTS: usize = 200;

/// Tabulate the believed distribution for plots.
pub fn believed_curve(d: &crate::dist::Mixed) -> BelievedCurve {
    let mut xs: Vec<f64> = Vec::with_capacity(CURVE_POINTS + d.atoms.len());
    if let Some(c) = &d.cont {
        let half = CURVE_POINTS / 2;
        let (lo, hi) = (c.quantile(0.001), c.quantile(0.999));
        for k in 0..half {
            // Probit-spaced probabilities between 0.1 % and 99.9 %.
            let z = -3.09 + 6.18 * k as f64 / (half - 1) as f64;
            xs.push(c.quantile(crate::numerics::norm_cdf(z)));
            if lo.is_finite() && hi.is_finite() {
                xs.push(lo + (hi - lo) * k as f64 / (half - 1) as f64);
            }
        }
    }
    xs.extend(d.atoms.iter().map(|a| a.at).filter(|a| a.is_finite()));
    xs.retain(|x| x.is_finite());
    xs.sort_by(f64::total_cmp);
    xs.dedup();
    let cm = d.cont_mass();
    let pdf = xs
        .iter()
        .map(|x| d.cont.as_ref().map_or(0.0, |c| cm * c.pdf(*x)))
        .map(|v| if v.is_finite() { v } else { 0.0 })
        .collect();
    BelievedCurve {
        cdf: xs.iter().map(|x| d.cdf(*x)).collect(),
        pdf,
        x: xs,
        atoms: d.atoms.clone(),
    }
}

pub use crate::numerics::empirical_quantile;

#[allow(clippy::too_many_arguments)]
pub fn judge(
    b: &Belief,
    kind: Kind,
    sorted_fresh: &[f64],
    in_sample: f64,
    floor: f64,
    cvm_floor: f64,
    weight: f64,
    tolerance: f64,
) -> BeliefReport {
    let fresh = discrepancy(kind, &b.target, sorted_fresh);
    let cvm = if kind == Kind::CramerVonMises {
        fresh
    } else {
        discrepancy(Kind::CramerVonMises, &b.target, sorted_fresh)
    };
    let rms = (cvm - cvm_floor).max(0.0).sqrt();
    let verdict = if fresh <= floor * kind.null_95_over_mean() {
        Verdict::MetWithinNoise
    } else if rms <= tolerance {
        Verdict::MetApproximately
    } else {
        Verdict::NotMet
    };
    let believed: Vec<f64> = PROBS.iter().map(|p| b.target.quantile(*p)).collect();
    let implied: Vec<f64> = PROBS
        .iter()
        .map(|p| empirical_quantile(sorted_fresh, *p))
        .collect();
    let n = sorted_fresh.len() as f64;
    let atoms: Vec<AtomCheck> = b
        .target
        .atoms()
        .iter()
        .map(|a| AtomCheck {
            at: a.at,
            believed: a.mass,
            implied: sorted_fresh.iter().filter(|v| **v == a.at).count() as f64 / n,
        })
        .collect();
    let inf_mass = sorted_fresh
        .iter()
        .rev()
        .take_while(|v| v.is_infinite())
        .count() as f64
        / n;
    let finite: Vec<f64> = sorted_fresh
        .iter()
        .copied()
        .filter(|v| v.is_finite())
        .collect();
    let (mean, sd) = if finite.len() > 1 {
        let m = finite.iter().sum::<f64>() / finite.len() as f64;
        let v = finite.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (finite.len() - 1) as f64;
        (Some(m), Some(v.sqrt()))
    } else {
        (None, None)
    };
    let how = if verdict == Verdict::MetWithinNoise {
        Vec::new()
    } else {
        describe(b, &believed, &implied, &atoms, sorted_fresh)
    };
    BeliefReport {
        label: b.label.clone(),
        quantity: b.request.quantity.clone(),
        stated_as: b.stated_as.clone(),
        unit: b.request.unit.clone(),
        weight,
        in_sample,
        fresh,
        noise_floor: floor,
        ratio: fresh / floor,
        rms_cdf_gap: rms,
        verdict,
        how,
        probs: PROBS.to_vec(),
        believed_quantiles: believed,
        implied_quantiles: implied,
        atoms,
        implied_mean: mean,
        implied_sd: sd,
        implied_mass_at_inf: inf_mass,
        believed_curve: believed_curve(&b.target.dist),
        ess: (b.request.support == crate::dist::Support::Unit)
            .then(|| crate::target::ess::from_draws(sorted_fresh))
            .flatten(),
        believed_ess: (b.request.support == crate::dist::Support::Unit)
            .then(|| crate::target::ess::of_belief(&b.target.dist))
            .flatten(),
    }
}

/// How the implied distribution misses the belief, in words.
pub fn describe(
    b: &Belief,
    believed: &[f64],
    implied: &[f64],
    atoms: &[AtomCheck],
    sorted: &[f64],
) -> Vec<String> {
    let scale = Scale::for_support(b.request.support);
    let g = |x: f64| {
        let (lo, hi) = scale.domain();
        if x <= lo || x >= hi || !x.is_finite() {
            None
        } else {
            Some(scale.to(x))
        }
    };
    let mut out = Vec::new();
    // Implied mass where the belief puts none (outside a bounded support).
    if let Some(c) = &b.target.dist.cont {
        let (lo, hi) = c.support();
        let n = sorted.len() as f64;
        let below = sorted.iter().take_while(|v| **v < lo).count() as f64 / n;
        let above = sorted
            .iter()
            .rev()
            .take_while(|v| **v > hi && b.target.dist.atom_at(**v).is_none())
            .count() as f64
            / n;
        if below + above > 0.01 {
            out.push(format!(
                "{:.1} % of implied draws fall outside the believed range [{}, {}]",
                100.0 * (below + above),
                fmt_num(lo),
                fmt_num(hi)
            ));
        }
    }
    for a in atoms {
        let gap = a.implied - a.believed;
        if gap.abs() > 0.02 + 0.25 * a.believed {
            let place = if a.at.is_infinite() {
                "never reached (at ∞)".to_string()
            } else {
                format!("at {}", crate::numerics::format::sig(a.at, 4))
            };
            out.push(format!(
                "{} mass {place}: believed {:.1} %, implied {:.1} %",
                if gap > 0.0 { "too much" } else { "too little" },
                100.0 * a.believed,
                100.0 * a.implied
            ));
        }
    }
    // Median shift and width ratio on the natural scale (indices: 1 = 10 %, 3 = 50 %, 5 = 90 %).
    if let (Some(bm), Some(im)) = (g(believed[3]), g(implied[3])) {
        if let (Some(b1), Some(b9), Some(i1), Some(i9)) =
            (g(believed[1]), g(believed[5]), g(implied[1]), g(implied[5]))
        {
            let bw = b9 - b1;
            let iw = i9 - i1;
            let shift = (im - bm) / bw.max(1e-300);
            if shift.abs() > 0.1 {
                out.push(format!(
                    "shifted {}: implied median {} vs believed {}",
                    if shift > 0.0 { "up" } else { "down" },
                    fmt_num(implied[3]),
                    fmt_num(believed[3])
                ));
            }
            let ratio = iw / bw;
            if ratio > 1.15 {
                out.push(format!(
                    "too wide: implied 10–90 % range is {ratio:.2}× the believed"
                ));
            } else if ratio < 1.0 / 1.15 {
                out.push(format!(
                    "too narrow: implied 10–90 % range is {ratio:.2}× the believed"
                ));
            } else {
                // Central width right: look at each tail (5 % → median, median → 95 %).
                for (k, side, level) in [(0usize, "lower", "5 %"), (6usize, "upper", "95 %")] {
                    if let (Some(bt), Some(it)) = (g(believed[k]), g(implied[k])) {
                        let r = (it - im).abs() / (bt - bm).abs().max(1e-300);
                        let word = if r > 1.25 {
                            "long"
                        } else if r < 0.8 {
                            "short"
                        } else {
                            continue;
                        };
                        out.push(format!(
                            "{side} tail too {word}: implied {level} quantile {} vs believed {}",
                            fmt_num(implied[k]),
                            fmt_num(believed[k])
                        ));
                    }
                }
            }
        }
    }
    if out.is_empty() {
        out.push("shape differs (quantiles close, CDFs differ in between)".to_string());
    }
    out
}

pub use crate::numerics::format::display as fmt_num;

/// The worst verdict over beliefs.
pub fn overall(beliefs: &[BeliefReport]) -> Verdict {
    beliefs
        .iter()
        .map(|b| b.verdict)
        .max()
        .unwrap_or(Verdict::MetWithinNoise)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::dist::{lognormal::LogNormal, Atom, Mixed};
    use std::sync::Arc;

    #[test]
    fn believed_curve_keeps_atoms_and_mass() {
        let d = Mixed::new(
            vec![
                Atom { at: 0.0, mass: 0.2 },
                Atom {
                    at: f64::INFINITY,
                    mass: 0.05,
                },
            ],
            Some(Arc::new(LogNormal::new(3.0, 0.4).unwrap())),
        )
        .unwrap();
        let c = believed_curve(&d);
        assert!(c.x.windows(2).all(|w| w[0] < w[1]));
        // The finite atom is a tabulated point with its mass included; +∞ never is.
        let k = c.x.iter().position(|x| *x == 0.0).unwrap();
        assert!((c.cdf[k] - 0.2).abs() < 1e-12);
        assert!(*c.cdf.last().unwrap() <= 0.95 + 1e-12);
        // Trapezoid integral of the continuous density ≈ its mass 0.75 over the
        // 0.1–99.9 % range (0.998 of it).
        let integral: f64 =
            c.x.windows(2)
                .zip(c.pdf.windows(2))
                .skip(k + 1)
                .map(|(x, p)| 0.5 * (p[0] + p[1]) * (x[1] - x[0]))
                .sum();
        assert!((integral - 0.75 * 0.998).abs() < 2e-3, "{integral}");
    }
}

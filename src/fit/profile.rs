//! Which directions do the beliefs leave undetermined? A global look, not the
//! local curvature alone.
//!
//! Local curvature cannot tell "flat" from "flat here, capped further away", and
//! it changes with the draws. So every weak direction v (an eigenvector of the
//! Hessian at the optimum η* whose local half-width √(2f/μ) exceeds
//! [`CANDIDATE`]), and every hyperparameter at a bound (along its axis, inwards),
//! is profiled: D(η* + s·v) is followed outwards on both sides until it rises
//! above D(η*) by the **reference floor** f (the independent-draw noise floor at
//! 10,000 draws, [`super::objective::Objective::reference_floor`]) or reaches the
//! edge of the optimiser's range (|η| = [`ETA_LIMIT`]). The flat interval's
//! width is measured on the bounded scale t = logistic(η) ∈ (0, 1), the fraction
//! of the allowed range (on the log scale where bounds span 100× or more), so
//! that a stretch of η next to a bound, which is a sliver of the range, does not
//! count as wide. At the centre of the range dt/dη = ¼, so the threshold
//! [`WIDTH`] = 0.125 is ±0.25 on the optimiser's scale there:
//!
//! * width ≥ 1.2 × 0.125: **undetermined** (any value in a wide interval fits the
//!   beliefs as well as the optimum, within one reference floor);
//! * width ≤ 0.8 × 0.125: **determined** — or, for a hyperparameter at a bound,
//!   **pushed to the bound** by the beliefs;
//! * in between: **borderline**, reported as such rather than flipped.
//!
//! The floor, the threshold and the band are fixed numbers, and with scrambled
//! Sobol draws D(λ) differs little between seeds, so the calls do not depend on
//! the seed or on the number of draws.

use super::objective::Objective;
use super::tiebreak::Stiff;
use crate::numerics::logistic;

/// Width of the flat interval (fraction of the range, t scale) that separates
/// determined from undetermined.
pub const WIDTH: f64 = 0.125;
/// Relative band around [`WIDTH`] reported as borderline.
pub const BAND: f64 = 0.2;
/// Edge of the optimiser's range: |η| beyond this is "at a bound" (0.25 % of
/// the range from it).
pub const ETA_LIMIT: f64 = 6.0;
/// Directions with a local half-width (at the reference floor) below this many
/// η units cannot be flat over [`WIDTH`] and are not profiled.
pub const CANDIDATE: f64 = 0.1;
/// First step of the outward search, η units.
const FIRST_STEP: f64 = 0.05;

#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Call {
    Determined,
    Borderline,
    Undetermined,
    /// At a bound, and D rises within the threshold as it moves inwards.
    PushedToBound,
}

impl Call {
    pub fn words(&self) -> &'static str {
        match self {
            Call::Determined => "determined",
            Call::Borderline => "borderline",
            Call::Undetermined => "UNDETERMINED",
            Call::PushedToBound => "pushed to a bound",
        }
    }
    /// Directions the tie-break settles.
    pub fn is_flat(&self) -> bool {
        matches!(self, Call::Undetermined | Call::Borderline)
    }
}

/// Where D first rises above the reference floor on one side.
#[derive(Debug, Clone, serde::Serialize, serde::Deserialize)]
pub struct Edge {
    /// Distance from η* along the direction, η units.
    #[serde(with = "crate::numerics::ext::num")]
    pub distance: f64,
    /// The search reached the edge of the range without D rising by a floor.
    pub open: bool,
    /// dD/ds at the edge (0 when open).
    #[serde(with = "crate::numerics::ext::num")]
    pub slope: f64,
}

/// The profile of one direction and its call.
#[derive(Debug, Clone, serde::Serialize, serde::Deserialize)]
pub struct Line {
    /// Unit vector over the free hyperparameters (η scale).
    #[serde(with = "crate::numerics::ext::nums")]
    pub direction: Vec<f64>,
    pub description: String,
    pub minus: Edge,
    pub plus: Edge,
    /// Width of the flat interval on the t scale.
    #[serde(with = "crate::numerics::ext::num")]
    pub width: f64,
    pub call: Call,
    /// For a hyperparameter at a bound: its index among the free ones.
    pub at_bound: Option<usize>,
    /// The lowest point of the valley floor along the direction (η), from which
    /// the edges were measured.
    #[serde(skip)]
    pub valley_min: Vec<f64>,
}

fn moved(eta: &[f64], v: &[f64], s: f64) -> Vec<f64> {
    eta.iter().zip(v).map(|(e, c)| e + s * c).collect()
}

/// Follow D from `eta` along `v` (positive s) until it rises above `d0` by
/// `budget`; the edge to within 0.2 % of its distance.
pub fn edge(obj: &Objective, eta: &[f64], v: &[f64], d0: f64, budget: f64) -> Edge {
    let limit = super::tiebreak::limit(eta, v);
    let rise = |s: f64| obj.d_at(&moved(eta, v, s)) - d0;
    let open = |s: f64| Edge {
        distance: s,
        open: true,
        slope: 0.0,
    };
    if limit <= 1e-9 {
        return open(0.0);
    }
    let (mut lo, mut s) = (0.0, FIRST_STEP.min(limit));
    let mut hi = loop {
        if rise(s) > budget {
            break s;
        }
        lo = s;
        if s >= limit {
            return open(limit);
        }
        s = (2.0 * s).min(limit);
    };
    // Regula falsi would save a few evaluations but stalls on the kinks of an
    // empirical objective; bisection is predictable.
    while hi - lo > 2e-3 * hi {
        let m = 0.5 * (lo + hi);
        if rise(m) > budget {
            hi = m;
        } else {
            lo = m;
        }
    }
    let s = 0.5 * (lo + hi);
    let h = (0.02 * s).max(0.005);
    let a = (s - h).max(0.0);
    Edge {
        distance: s,
        open: false,
        slope: (rise(s + h) - rise(a)) / (s + h - a),
    }
}

/// Width on the t scale of the segment from η − s₋v to η + s₊v.
pub fn width(eta: &[f64], v: &[f64], minus: f64, plus: f64) -> f64 {
    let a = moved(eta, v, -minus);
    let b = moved(eta, v, plus);
    a.iter()
        .zip(&b)
        .map(|(x, y)| (logistic(*y) - logistic(*x)).powi(2))
        .sum::<f64>()
        .sqrt()
}

/// The call for a flat width `w`; `bound`: the hyperparameter sits at a bound.
pub fn call_for(w: f64, bound: bool) -> Call {
    if w >= (1.0 + BAND) * WIDTH {
        Call::Undetermined
    } else if w > (1.0 - BAND) * WIDTH {
        Call::Borderline
    } else if bound {
        Call::PushedToBound
    } else {
        Call::Determined
    }
}

/// Profile a direction `v` through `eta` along the valley floor (the other,
/// determined directions `stiff` re-minimised at every point, so that a curved
/// valley — two hyperparameters trading off along a curve — is followed, not
/// cut): from the floor's lowest point out to where D has risen by `f_ref` on
/// each side, and call it.
/// The lowest point is searched within `reach` (η units) on each side.
pub fn line(
    obj: &Objective,
    eta: &[f64],
    v: Vec<f64>,
    stiff: &[Stiff],
    f_ref: f64,
    reach: f64,
) -> Line {
    use super::tiebreak::{limit, valley_edge, valley_min};
    let minus_v: Vec<f64> = v.iter().map(|c| -c).collect();
    let lo = limit(eta, &minus_v).min(reach);
    let hi = limit(eta, &v).min(reach);
    let xm = valley_min(obj, obj, eta, &v, stiff, -lo, hi);
    let p = valley_edge(obj, &xm, &v, stiff, f_ref);
    let m = valley_edge(obj, &xm, &minus_v, stiff, f_ref);
    let w =
        p.to.iter()
            .zip(&m.to)
            .map(|(a, b)| (logistic(*a) - logistic(*b)).powi(2))
            .sum::<f64>()
            .sqrt();
    let as_edge = |mv: &super::tiebreak::Move| Edge {
        distance: mv.distance,
        open: mv.open,
        slope: mv.slope,
    };
    Line {
        direction: v,
        description: String::new(),
        minus: as_edge(&m),
        plus: as_edge(&p),
        width: w,
        call: call_for(w, false),
        at_bound: None,
        valley_min: xm,
    }
}

/// Profile free hyperparameter `k`, which sits at a bound, inwards along its axis.
pub fn bound_line(obj: &Objective, eta: &[f64], k: usize, d0: f64, f_ref: f64) -> Line {
    let mut v = vec![0.0; eta.len()];
    v[k] = -eta[k].signum();
    let inward = edge(obj, eta, &v, d0, f_ref);
    let t_bound = if eta[k] > 0.0 { 1.0 } else { 0.0 };
    let w = (logistic(eta[k] + inward.distance * v[k]) - t_bound).abs();
    Line {
        direction: v,
        description: String::new(),
        minus: Edge {
            distance: 0.0,
            open: true,
            slope: 0.0,
        },
        plus: inward,
        width: w,
        call: call_for(w, true),
        at_bound: Some(k),
        valley_min: eta.to_vec(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn calls_follow_the_band() {
        assert_eq!(call_for(0.2, false), Call::Undetermined);
        assert_eq!(call_for(0.15, false), Call::Undetermined);
        assert_eq!(call_for(0.14, false), Call::Borderline);
        assert_eq!(call_for(0.11, true), Call::Borderline);
        assert_eq!(call_for(0.1, false), Call::Determined);
        assert_eq!(call_for(0.05, true), Call::PushedToBound);
    }

    /// ±0.25 on the optimiser's scale at the centre of the range is (to 1 %) the
    /// threshold: logistic(0.25) − logistic(−0.25) = 0.1244.
    #[test]
    fn threshold_is_a_quarter_unit_at_the_centre() {
        let w = width(&[0.0], &[1.0], 0.25, 0.25);
        assert!((w - WIDTH).abs() < 1e-2 * WIDTH, "width {w}");
    }
}

//! The secondary objective and the Pareto front between faithfulness and spread.
//!
//! Beliefs on a few derived quantities often leave directions of the
//! hyperparameters undetermined; among equally faithful priors we prefer the one
//! whose parameter marginals are widest (the least informative choice): the
//! secondary objective is S(λ) = −(mean over parameters of ln sd) plus a small pull
//! towards a reference point (see `Objective::secondary`). We minimise
//! D + κ·f·S for a grid of κ (in units of the noise floor f of D), warm-starting
//! each fit from its neighbour, keep the non-dominated (D, S) points, and choose:
//!
//! * `widest` (default): the widest prior whose D is within one noise floor of the
//!   most faithful point: priors the beliefs cannot tell apart, the widest of them;
//! * `knee`: the point farthest from the chord joining the ends of the front, in
//!   coordinates scaled to [0, 1] (a common rule for picking a balanced point).

use super::objective::Objective;
use super::simplex;
use serde::Serialize;

pub const KAPPAS: [f64; 11] = [
    0.0, 0.03, 0.1, 0.3, 1.0, 3.0, 10.0, 30.0, 100.0, 300.0, 1000.0,
];

#[derive(Debug, Clone, Serialize, serde::Deserialize)]
pub struct FrontPoint {
    #[serde(with = "crate::numerics::ext::num")]
    pub kappa: f64,
    #[serde(with = "crate::numerics::ext::num")]
    pub discrepancy: f64,
    /// S = −mean ln sd + pull to the reference (smaller is wider).
    #[serde(with = "crate::numerics::ext::num")]
    pub secondary: f64,
    #[serde(with = "crate::numerics::ext::nums")]
    pub hyperparameters: Vec<f64>,
    pub dominated: bool,
}

#[derive(Debug, Clone, Serialize, serde::Deserialize)]
pub struct Front {
    pub points: Vec<FrontPoint>,
    /// Index into `points` of the chosen prior.
    pub chosen: usize,
    pub rule: String,
    #[serde(with = "crate::numerics::ext::num")]
    pub noise_floor: f64,
    pub names: Vec<String>,
}

/// Trace the front from the κ = 0 optimum `eta0` (full-draw objective `obj`).
pub fn trace(obj: &mut Objective, eta0: &[f64], rule: &str) -> Front {
    let floor = obj.floor();
    let d = eta0.len() as u64;
    let mut pts: Vec<FrontPoint> = Vec::new();
    let mut x = eta0.to_vec();
    for &k in &KAPPAS {
        obj.kappa = k * floor;
        if k > 0.0 {
            x = simplex::restarted(
                &|e: &[f64]| obj.cost(e),
                &x,
                (0.3, 120 * d + 60),
                (0.05, 60 * d + 30),
                1e-3 * floor,
            )
            .x;
        }
        let h = obj.full(&x);
        let disc = obj.total(&h).unwrap_or(f64::INFINITY);
        pts.push(FrontPoint {
            kappa: k,
            discrepancy: disc,
            secondary: obj.secondary(&h),
            hyperparameters: h,
            dominated: false,
        });
    }
    obj.kappa = 0.0;
    mark_dominated(&mut pts);
    let chosen = choose(&pts, floor, rule);
    Front {
        points: pts,
        chosen,
        rule: rule.to_string(),
        noise_floor: floor,
        names: obj.spec.hypers().iter().map(|h| h.name.clone()).collect(),
    }
}

/// A point is dominated when another is at least as good in both objectives and
/// better in one.
pub fn mark_dominated(pts: &mut [FrontPoint]) {
    let snapshot: Vec<(f64, f64)> = pts.iter().map(|p| (p.discrepancy, p.secondary)).collect();
    for (i, p) in pts.iter_mut().enumerate() {
        p.dominated = snapshot.iter().enumerate().any(|(j, q)| {
            j != i
                && q.0 <= p.discrepancy
                && q.1 <= p.secondary
                && (q.0 < p.discrepancy || q.1 < p.secondary)
        });
    }
}

/// Non-dominated points sorted by discrepancy (then S decreases along them).
pub fn front_order(pts: &[FrontPoint]) -> Vec<usize> {
    let mut idx: Vec<usize> = (0..pts.len()).filter(|&i| !pts[i].dominated).collect();
    idx.sort_by(|a, b| {
        pts[*a]
            .discrepancy
            .total_cmp(&pts[*b].discrepancy)
            .then(a.cmp(b))
    });
    idx.dedup_by(|a, b| {
        pts[*a].discrepancy == pts[*b].discrepancy && pts[*a].secondary == pts[*b].secondary
    });
    idx
}

pub fn choose(pts: &[FrontPoint], floor: f64, rule: &str) -> usize {
    let nd = front_order(pts);
    if nd.is_empty() {
        return 0;
    }
    let dmin = pts[nd[0]].discrepancy;
    match rule {
        "knee" if nd.len() >= 3 => {
            let (d0, d1) = (dmin, pts[nd[nd.len() - 1]].discrepancy);
            let (s0, s1) = (pts[nd[0]].secondary, pts[nd[nd.len() - 1]].secondary);
            let sc = |p: &FrontPoint| {
                (
                    (p.discrepancy - d0) / (d1 - d0).max(1e-300),
                    (p.secondary - s1) / (s0 - s1).max(1e-300),
                )
            };
            // Chord from (0, 1) to (1, 0): distance ∝ x + y − 1 below it.
            *nd.iter()
                .max_by(|a, b| {
                    let (xa, ya) = sc(&pts[**a]);
                    let (xb, yb) = sc(&pts[**b]);
                    (1.0 - xa - ya).total_cmp(&(1.0 - xb - yb))
                })
                .unwrap_or(&nd[0])
        }
        _ => *nd
            .iter()
            .filter(|&&i| pts[i].discrepancy <= dmin + floor)
            .min_by(|a, b| pts[**a].secondary.total_cmp(&pts[**b].secondary))
            .unwrap_or(&nd[0]),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(d: f64, s: f64) -> FrontPoint {
        FrontPoint {
            kappa: 0.0,
            discrepancy: d,
            secondary: s,
            hyperparameters: vec![],
            dominated: false,
        }
    }

    #[test]
    fn dominance_and_choice() {
        let mut pts = vec![
            p(1.0, 5.0),
            p(1.5, 3.0),
            p(1.2, 6.0),
            p(3.0, 1.0),
            p(10.0, 0.9),
        ];
        mark_dominated(&mut pts);
        assert!(pts[2].dominated && !pts[0].dominated && !pts[3].dominated);
        let nd = front_order(&pts);
        // Along the front, D increases and S decreases.
        for w in nd.windows(2) {
            assert!(pts[w[0]].discrepancy < pts[w[1]].discrepancy);
            assert!(pts[w[0]].secondary > pts[w[1]].secondary);
        }
        assert_eq!(choose(&pts, 0.6, "widest"), 1);
        assert_eq!(choose(&pts, 0.1, "widest"), 0);
        assert_eq!(choose(&pts, 0.1, "knee"), 3);
    }
}

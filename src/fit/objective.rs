//! The deterministic objective D(λ) = Σ_r w_r d(P_λ,r, T_r) / Σ_r w_r on common
//! random numbers: the base variates are drawn once per fit, so D is a
//! deterministic, continuous function of λ.
//!
//! Base variates are drawn once; each evaluation maps them through the prior at λ,
//! computes every belief's quantity, sorts it (a quantity monotone in one base
//! column never reorders, so the permutation of an earlier evaluation is tried
//! first; otherwise an LSD radix sort, `radsort`, sorts the values directly),
//! and integrates the discrepancy in closed form. Free hyperparameters are
//! optimised on an unbounded scale η: λ = lo + (hi − lo)·logistic(η), or the same
//! on ln λ for positive bounds spanning two or more orders of magnitude.

use crate::discrepancy::{discrepancy, noise_floor, Kind};
use crate::error::{Error, Result};
use crate::numerics::{logistic, logit};
use crate::spec::Spec;
use crate::templates::{BaseDraws, Hyper, HyperValue, Request};
use std::cell::RefCell;
use std::sync::atomic::{AtomicU64, Ordering};

/// Draws whose independent-draw noise floor is the reference floor
/// ([`Objective::reference_floor`]).
pub const REFERENCE_DRAWS: usize = 10_000;

/// Weight of the pull towards the reference in the secondary objective.
pub const PULL: f64 = 0.5;

/// Scratch buffers for one thread, for the objective `owner` (an id from
/// [`NEXT_ID`]): another objective on the same thread resets them.
#[derive(Default)]
struct Workspace {
    owner: u64,
    out: Vec<Vec<f64>>,
    /// Per belief: the permutation that sorted an earlier evaluation, and how
    /// often it has failed to sort a later one.
    order: Vec<Vec<u32>>,
    misses: Vec<u32>,
    sorted: Vec<Vec<f64>>,
}

/// After this many evaluations whose values the kept order does not sort, a
/// belief's quantity is taken to reorder freely and is radix-sorted directly.
const ORDER_TRIES: u32 = 3;

static NEXT_ID: AtomicU64 = AtomicU64::new(1);

thread_local! {
    static WS: RefCell<Workspace> = RefCell::new(Workspace::default());
}

/// Map between the free hyperparameters and the unbounded optimisation scale.
pub fn to_eta(h: &Hyper, x: f64) -> f64 {
    match h.value {
        HyperValue::Free { lo, hi, .. } => {
            let t = if h.log_scale {
                (x.ln() - lo.ln()) / (hi.ln() - lo.ln())
            } else {
                (x - lo) / (hi - lo)
            };
            logit(t.clamp(1e-12, 1.0 - 1e-12))
        }
        HyperValue::Fixed(_) => 0.0,
    }
}

pub fn from_eta(h: &Hyper, eta: f64) -> f64 {
    match h.value {
        HyperValue::Free { lo, hi, .. } => {
            // Keep η finite-ish so the value never sits exactly on a bound.
            let t = logistic(eta.clamp(-30.0, 30.0));
            if h.log_scale {
                (lo.ln() + t * (hi.ln() - lo.ln())).exp()
            } else {
                lo + t * (hi - lo)
            }
        }
        HyperValue::Fixed(v) => v,
    }
}

/// dλ/dη of hyperparameter `h` at η (0 for a fixed one).
pub fn lambda_per_eta(h: &Hyper, eta: f64) -> f64 {
    match h.value {
        HyperValue::Free { lo, hi, .. } => {
            let t = logistic(eta.clamp(-30.0, 30.0));
            let w = t * (1.0 - t);
            if h.log_scale {
                from_eta(h, eta) * (hi.ln() - lo.ln()) * w
            } else {
                (hi - lo) * w
            }
        }
        HyperValue::Fixed(_) => 0.0,
    }
}

/// Everything an evaluation needs, shared read-only by all starts.
pub struct Objective<'a> {
    pub spec: &'a Spec,
    pub base: BaseDraws,
    /// Where the base draws came from.
    pub plan: crate::rng::Plan,
    pub free: Vec<usize>,
    pub full0: Vec<f64>,
    reqs: Vec<&'a Request>,
    weights: Vec<f64>,
    pub kind: Kind,
    /// Weight of the tie-breaking term −spread(λ).
    pub kappa: f64,
    pub floors: Vec<f64>,
    evals: AtomicU64,
    /// Identity for the per-thread scratch buffers.
    id: u64,
}

/// Sort NaN-free values ascending: an LSD radix sort (`radsort`) on the upper 32
/// bits of the order-preserving bit pattern (4 passes instead of 8), then an
/// insertion pass that orders values sharing those bits (they agree to about one
/// part in 10⁶, so they are rare and adjacent). Should the insertion pass do more
/// than a few moves per value (values crowded within 10⁻⁶ of each other), the
/// full 64-bit radix sort finishes the job, so the worst case stays linear.
pub fn sort_values(s: &mut [f64]) {
    #[inline]
    fn key(v: f64) -> u32 {
        let b = v.to_bits();
        let k = if b >> 63 == 1 { !b } else { b | (1 << 63) };
        (k >> 32) as u32
    }
    radsort::sort_by_key(s, |v| key(*v));
    let budget = 4 * s.len();
    let mut moves = 0;
    for i in 1..s.len() {
        let x = s[i];
        if x < s[i - 1] {
            let mut j = i;
            while j > 0 && s[j - 1] > x {
                s[j] = s[j - 1];
                j -= 1;
            }
            s[j] = x;
            moves += i - j;
            if moves > budget {
                radsort::sort(s);
                return;
            }
        }
    }
}

/// Fill `s` with `q` in the order `order` and report whether that is ascending;
/// stops at the first descent.
fn gather_if_sorted(q: &[f64], order: &[u32], s: &mut Vec<f64>) -> bool {
    s.clear();
    let mut prev = f64::NEG_INFINITY;
    for &i in order {
        let v = q[i as usize];
        if v < prev {
            return false;
        }
        s.push(v);
        prev = v;
    }
    true
}

impl<'a> Objective<'a> {
    pub fn new(spec: &'a Spec, n: usize, plan: &crate::rng::Plan, kind: Kind) -> Self {
        let hypers = spec.hypers();
        let total: f64 = spec.beliefs.iter().map(|b| b.weight).sum();
        Objective {
            spec,
            base: spec.model.draw_base(n, plan),
            plan: *plan,
            free: spec.free(),
            full0: hypers.iter().map(Hyper::default_value).collect(),
            reqs: spec.beliefs.iter().map(|b| &b.request).collect(),
            weights: spec.beliefs.iter().map(|b| b.weight / total).collect(),
            kind,
            kappa: 0.0,
            floors: spec
                .beliefs
                .iter()
                .map(|b| noise_floor(kind, &b.target, n))
                .collect(),
            evals: AtomicU64::new(0),
            id: NEXT_ID.fetch_add(1, Ordering::Relaxed),
        }
    }

    /// The fitting objective of `spec`: its draws, its seed, the fitting streams,
    /// its discrepancy.
    pub fn fitting(spec: &'a Spec) -> Self {
        Self::new(spec, spec.draws, &spec.plan(), spec.fit.discrepancy)
    }

    pub fn n(&self) -> usize {
        self.base.n
    }

    pub fn evaluations(&self) -> u64 {
        self.evals.load(Ordering::Relaxed)
    }

    /// Weighted noise floor of the total discrepancy.
    pub fn floor(&self) -> f64 {
        self.floors
            .iter()
            .zip(&self.weights)
            .map(|(f, w)| f * w)
            .sum()
    }

    /// The reference floor: the weighted noise floor of D for [`REFERENCE_DRAWS`]
    /// independent draws, whatever draws or points this objective uses. The
    /// identifiability calls and the tie-break measure "indistinguishable" in it,
    /// so they do not change when the draws change.
    pub fn reference_floor(&self) -> f64 {
        self.spec
            .beliefs
            .iter()
            .zip(&self.weights)
            .map(|(b, w)| w * noise_floor(self.kind, &b.target, REFERENCE_DRAWS))
            .sum()
    }

    /// D at η (κ ignored); +∞ when undefined.
    pub fn d_at(&self, eta: &[f64]) -> f64 {
        self.total(&self.full(eta))
            .ok()
            .filter(|d| d.is_finite())
            .unwrap_or(f64::INFINITY)
    }

    pub fn full(&self, eta: &[f64]) -> Vec<f64> {
        let mut h = self.full0.clone();
        let hy = self.spec.hypers();
        for (k, &i) in self.free.iter().enumerate() {
            h[i] = from_eta(&hy[i], eta[k]);
        }
        h
    }

    pub fn eta(&self, full: &[f64]) -> Vec<f64> {
        let hy = self.spec.hypers();
        self.free.iter().map(|&i| to_eta(&hy[i], full[i])).collect()
    }

    /// Simulated quantity draws at `h`, sorted ascending, one vector per belief.
    pub fn sorted_draws(&self, h: &[f64]) -> Result<Vec<Vec<f64>>> {
        self.with_sorted(h, |s| s.to_vec())
    }

    fn with_sorted<T>(&self, h: &[f64], f: impl FnOnce(&[Vec<f64>]) -> T) -> Result<T> {
        self.spec.fit.cancel.check()?;
        self.evals.fetch_add(1, Ordering::Relaxed);
        WS.with(|ws| {
            let mut ws = ws.borrow_mut();
            let ws = &mut *ws;
            let nb = self.reqs.len();
            let n = self.base.n;
            if ws.owner != self.id {
                *ws = Workspace {
                    owner: self.id,
                    ..Workspace::default()
                };
            }
            ws.out.resize(nb, Vec::new());
            ws.order.resize(nb, Vec::new());
            ws.misses.resize(nb, 0);
            ws.sorted.resize(nb, Vec::new());
            self.spec
                .model
                .simulate(h, &self.base, &self.reqs, &mut ws.out)?;
            for r in 0..nb {
                let q = &ws.out[r];
                if let Some(i) = q.iter().position(|v| v.is_nan()) {
                    return Err(Error::Numeric(format!(
                        "{} is undefined (NaN) at draw {i} for hyperparameters {h:?}",
                        self.reqs[r].label
                    )));
                }
                let s = &mut ws.sorted[r];
                let order = &mut ws.order[r];
                if order.len() == n && gather_if_sorted(q, order, s) {
                    continue;
                }
                if ws.misses[r] < ORDER_TRIES {
                    // Keep the sorting permutation: a quantity monotone in one base
                    // column (a cured fraction, say) never reorders again.
                    ws.misses[r] += 1;
                    let mut pairs: Vec<(f64, u32)> =
                        q.iter().enumerate().map(|(i, v)| (*v, i as u32)).collect();
                    radsort::sort_by_key(&mut pairs, |p| p.0);
                    order.clear();
                    order.extend(pairs.iter().map(|p| p.1));
                    s.clear();
                    s.extend(pairs.iter().map(|p| p.0));
                } else {
                    s.clear();
                    s.extend_from_slice(q);
                    sort_values(s);
                }
            }
            Ok(f(&ws.sorted))
        })
    }

    /// Per-belief discrepancies at the full hyperparameter vector `h`.
    pub fn per_belief(&self, h: &[f64], kind: Kind) -> Result<Vec<f64>> {
        self.with_sorted(h, |sorted| {
            sorted
                .iter()
                .zip(&self.spec.beliefs)
                .map(|(s, b)| discrepancy(kind, &b.target, s))
                .collect()
        })
    }

    /// Weighted total discrepancy at `h`.
    pub fn total(&self, h: &[f64]) -> Result<f64> {
        Ok(self
            .per_belief(h, self.kind)?
            .iter()
            .zip(&self.weights)
            .map(|(d, w)| d * w)
            .sum())
    }

    /// The optimiser's cost at η: D(λ) + κ·(−spread(λ)); +inf when undefined.
    pub fn cost(&self, eta: &[f64]) -> f64 {
        let h = self.full(eta);
        match self.total(&h) {
            Ok(d) if d.is_finite() => {
                if self.kappa > 0.0 {
                    d + self.kappa * self.secondary(&h)
                } else {
                    d
                }
            }
            _ => f64::INFINITY,
        }
    }

    /// The secondary objective S(λ) = −spread(λ) + 0.5·mean_k (η_k − η_ref,k)²:
    /// prefer wider priors (see `Model::spread`) and, among equally wide ones, the
    /// one nearest the reference (by default the start or the centre of the bounds,
    /// η = 0). The small second term only breaks ties the first leaves.
    pub fn secondary(&self, h: &[f64]) -> f64 {
        let eta = self.eta(h);
        let hy = self.spec.hypers();
        let mut pull = 0.0;
        for (k, &i) in self.free.iter().enumerate() {
            let r = match self.spec.fit.reference.iter().find(|(j, _)| *j == i) {
                Some((_, v)) => to_eta(&hy[i], *v),
                None => to_eta(&hy[i], hy[i].default_value()),
            };
            pull += (eta[k] - r).powi(2);
        }
        if !self.free.is_empty() {
            pull /= self.free.len() as f64;
        }
        -self.spec.model.spread(h) + PULL * pull
    }

    pub fn weights(&self) -> &[f64] {
        &self.weights
    }
}

/// The objective as an argmin problem on the optimiser's (η) scale: the cost
/// is [`Objective::cost`] (+∞ where undefined or after cancellation), so any
/// argmin solver can run on it.
impl argmin::core::CostFunction for Objective<'_> {
    type Param = Vec<f64>;
    type Output = f64;
    fn cost(&self, eta: &Self::Param) -> std::result::Result<f64, argmin::core::Error> {
        Ok(Objective::cost(self, eta))
    }
}

#[cfg(test)]
mod tests {
    use super::sort_values;

    /// argmin's Nelder–Mead runs on the objective itself and lowers it.
    #[test]
    fn argmin_solvers_run_on_the_objective() {
        use argmin::core::{CostFunction, Executor};
        let text = include_str!("../../demo-data/relapse-free-cure.toml");
        let ov = crate::spec::Overrides {
            draws: Some(1024),
            ..Default::default()
        };
        let spec = crate::spec::parse(text, None, &ov).unwrap();
        let obj = super::Objective::fitting(&spec);
        let x0 = obj.eta(&obj.full0);
        let f0 = CostFunction::cost(&obj, &x0).unwrap();
        assert_eq!(f0, obj.cost(&x0));
        let mut simplex = vec![x0.clone()];
        for i in 0..x0.len() {
            let mut p = x0.clone();
            p[i] += 0.3;
            simplex.push(p);
        }
        let solver = argmin::solver::neldermead::NelderMead::new(simplex);
        let r = Executor::new(obj, solver)
            .configure(|s| s.max_iters(60))
            .run()
            .unwrap();
        assert!(
            r.state().get_best_cost() < f0,
            "{}",
            r.state().get_best_cost()
        );
    }

    /// The two-stage sort agrees with a comparison sort, including values that
    /// share their upper 32 bits, crowded values (the fallback), signed zeros,
    /// infinities and negative numbers.
    #[test]
    fn sort_values_matches_a_comparison_sort() {
        let mut cases: Vec<Vec<f64>> = Vec::new();
        let mut x = 0.123_456_789f64;
        let mut v = Vec::new();
        for _ in 0..5000 {
            x = (x * 9301.0 + 0.497).fract();
            v.push(x * 10.0 - 5.0);
        }
        cases.push(v.clone());
        // Crowded: 5,000 values within 1e-9 of 1 (one group of equal upper bits).
        cases.push(v.iter().map(|u| 1.0 + 1e-10 * u).collect());
        // A few neighbours sharing upper bits among spread values.
        let mut w = v.clone();
        for k in 0..100 {
            w[k * 50] = 0.25 + 1e-12 * k as f64 * if k % 2 == 0 { 1.0 } else { -1.0 };
        }
        cases.push(w);
        cases.push(vec![
            0.0,
            -0.0,
            f64::INFINITY,
            -1.0,
            f64::NEG_INFINITY,
            3.0,
            0.0,
        ]);
        for c in cases {
            let mut a = c.clone();
            let mut b = c.clone();
            sort_values(&mut a);
            b.sort_by(|p, q| p.partial_cmp(q).unwrap());
            assert_eq!(a.len(), b.len());
            for (p, q) in a.iter().zip(&b) {
                assert_eq!(p, q, "sorted values differ");
            }
        }
    }
}

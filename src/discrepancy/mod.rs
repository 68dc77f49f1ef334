//! Distances between a simulated prior-predictive distribution and a belief.
//!
//! With u = T(v) both distances are integrals over u ∈ [0, 1] of (G(u) − u)²,
//! weighted by 1 (Cramér–von Mises) or 1/(u(1 − u)) (Anderson–Darling), where G
//! is the simulated CDF seen through T: for values at continuity points of T it
//! is the empirical CDF of u_i = T(q_i); across a jump of T (an atom a) it rises
//! linearly from P(a−) to P(a), the randomised probability integral transform
//! (Brockwell 2007, Statistics & Probability Letters 77; reference from memory).
//! So d = 0 exactly when P = T, atoms included.
//!
//! G is piecewise linear in u, so each piece integrates in closed form:
//! * CvM: ∫ₐᵇ e(u)² du = h(e_a² + e_a e_b + e_b²)/3 for linear e = G − u;
//! * AD:  ∫ₐᵇ e(u)²/(u(1−u)) du = α² ln(b/a) + (α+γ)² ln((1−a)/(1−b)) − γ² h for
//!   e(u) = α + γu (partial fractions), with Gauss–Legendre on short pieces far
//!   from 0 and 1, where the closed form would cancel.
//!
//! For a continuous T this equals W²/N and A²/N of the classical statistics
//! (Anderson & Darling 1952; Stephens 1974): d_CvM = (1/N)[1/(12N) + Σ(u_(i) −
//! (2i−1)/(2N))²]. Its expectation under P = T is the *noise floor*: 1/(6N) for CvM
//! and 1/N for AD; with atoms it is smaller, and [`noise_floor`] integrates the
//! variance of G exactly. Values of u are clamped to [1e-12, 1 − 1e-12], so a draw
//! outside the belief's support costs a large but finite AD penalty.

use crate::target::Target;

#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Kind {
    #[serde(rename = "cramer-von-mises")]
    CramerVonMises,
    #[serde(rename = "anderson-darling")]
    AndersonDarling,
}

impl Kind {
    pub const NAMES: [&'static str; 2] = ["cramer-von-mises", "anderson-darling"];

    pub fn parse(s: &str) -> Option<Self> {
        match s {
            "cramer-von-mises" | "cvm" => Some(Kind::CramerVonMises),
            "anderson-darling" | "ad" => Some(Kind::AndersonDarling),
            _ => None,
        }
    }

    pub fn name(&self) -> &'static str {
        match self {
            Kind::CramerVonMises => "cramer-von-mises",
            Kind::AndersonDarling => "anderson-darling",
        }
    }

    /// Asymptotic upper 5 % point of N·d under P = T, continuous case:
    /// 0.46136 for W² and 2.4924 for A² (Stephens 1974, JASA 69, Table 1A;
    /// Marsaglia & Marsaglia 2004, J. Stat. Softw. 9(2)), divided by the null mean
    /// (1/6 and 1) so that it scales any noise floor.
    pub fn null_95_over_mean(&self) -> f64 {
        match self {
            Kind::CramerVonMises => 0.46136 * 6.0,
            Kind::AndersonDarling => 2.4924,
        }
    }
}

const EPS: f64 = 1e-12;

#[inline]
fn clamp(u: f64) -> f64 {
    u.clamp(EPS, 1.0 - EPS)
}

/// ∫ₐᵇ e(u)² du (Cramér–von Mises) for e linear with e(a) = ea, e(b) = eb.
#[inline(always)]
fn piece_cvm(a: f64, b: f64, ea: f64, eb: f64) -> f64 {
    let h = b - a;
    if h <= 0.0 {
        return 0.0;
    }
    const THIRD: f64 = 1.0 / 3.0;
    h * (ea * ea + ea * eb + eb * eb) * THIRD
}

/// ∫ₐᵇ e(u)²/(u(1 − u)) du (Anderson–Darling) for e linear.
#[inline(always)]
fn piece_ad(a: f64, b: f64, ea: f64, eb: f64) -> f64 {
    let h = b - a;
    if h <= 0.0 {
        return 0.0;
    }
    let edge = a.min(1.0 - b);
    if h <= 0.05 * edge {
        // 4-point Gauss–Legendre: relative error of order (h/edge)^8.
        const X: [f64; 4] = [
            -0.861_136_311_594_052_6,
            -0.339_981_043_584_856_3,
            0.339_981_043_584_856_3,
            0.861_136_311_594_052_6,
        ];
        const W: [f64; 4] = [
            0.347_854_845_137_453_9,
            0.652_145_154_862_546_1,
            0.652_145_154_862_546_1,
            0.347_854_845_137_453_9,
        ];
        let c = 0.5 * (a + b);
        let mut s = 0.0;
        for k in 0..4 {
            let t = 0.5 * (X[k] + 1.0);
            let u = c + 0.5 * h * X[k];
            let e = ea + t * (eb - ea);
            s += W[k] * e * e / (u * (1.0 - u));
        }
        return 0.5 * h * s;
    }
    let g = (eb - ea) / h;
    let alpha = ea - g * a; // e(0)
    let beta1 = eb + g * (1.0 - b); // e(1)
    let mut s = -g * g * h;
    if alpha != 0.0 {
        s += alpha * alpha * (h / a).ln_1p();
    }
    if beta1 != 0.0 {
        s += beta1 * beta1 * (h / (1.0 - b)).ln_1p();
    }
    s.max(0.0)
}

/// Discrepancy between the empirical distribution of sorted values `q`
/// (ascending, no NaN) and the belief `t`.
pub fn discrepancy(kind: Kind, t: &Target, q: &[f64]) -> f64 {
    // One copy of the walk per distance, so the piece formula inlines.
    match kind {
        Kind::CramerVonMises => walk_sum(t, q, piece_cvm),
        Kind::AndersonDarling => walk_sum(t, q, piece_ad),
    }
}

/// The walk of [`Target::walk`] specialised to the sum of pieces: runs of values
/// between atoms are mapped to u in one pass of the table, then summed in a
/// tight loop; values on an atom make one span each.
#[inline(always)]
fn walk_sum(t: &Target, q: &[f64], piece: impl Fn(f64, f64, f64, f64) -> f64) -> f64 {
    let n = q.len();
    let inv_n = 1.0 / n as f64;
    let cm = t.dist.cont_mass();
    let atoms = &t.dist.atoms;
    let (mut pos, mut c, mut s) = (0.0f64, 0.0f64, 0.0f64);
    let (mut k, mut j, mut below, mut i) = (0usize, 0usize, 0.0f64, 0usize);
    U.with(|u| {
        let mut u = u.borrow_mut();
        while i < n {
            let x = q[i];
            while j < atoms.len() && atoms[j].at < x {
                below += atoms[j].mass;
                j += 1;
            }
            if j < atoms.len() && atoms[j].at == x {
                let count = q[i..].iter().take_while(|&&v| v == x).count();
                i += count;
                let at = below + cm * t.fc_walk(x, &mut k);
                let lo = clamp(at);
                let hi = clamp((at + atoms[j].mass).min(1.0));
                if lo > pos {
                    let g = c * inv_n;
                    s += piece(pos, lo, g - pos, g - lo);
                }
                let lo = lo.max(pos);
                let (g0, g1) = (c * inv_n, (c + count as f64) * inv_n);
                s += piece(lo, hi, g0 - lo, g1 - hi);
                c += count as f64;
                pos = pos.max(hi);
                continue;
            }
            let end = match atoms.get(j) {
                Some(a) => i + q[i..].partition_point(|&v| v < a.at),
                None => n,
            };
            t.fc_run(&q[i..end], below, cm, &mut k, &mut u);
            for &ui in u.iter() {
                let ui = clamp(ui.min(1.0));
                if ui > pos {
                    let g = c * inv_n;
                    s += piece(pos, ui, g - pos, g - ui);
                    pos = ui;
                }
                c += 1.0;
            }
            i = end;
        }
    });
    if 1.0 > pos {
        let g = c * inv_n;
        s += piece(pos, 1.0, g - pos, g - 1.0);
    }
    s
}

thread_local! {
    /// Positions u of the current run of values.
    static U: std::cell::RefCell<Vec<f64>> = const { std::cell::RefCell::new(Vec::new()) };
}

/// E[d] when the N values are an exact sample from the belief itself:
/// (1/N)·∫ Var(N^½ G(u)) w(u) du. Continuous stretches give u(1 − u); across a jump
/// [t0, t1] G interpolates F_N(t0) and F_N(t1), whose covariance is known.
pub fn noise_floor(kind: Kind, t: &Target, n: usize) -> f64 {
    let spans = t.spans();
    let w = |u: f64| match kind {
        Kind::CramerVonMises => 1.0,
        Kind::AndersonDarling => 1.0 / (u * (1.0 - u)),
    };
    // ∫ of u(1−u)·w over continuous stretches [a, b] in closed form.
    let cont = |a: f64, b: f64| match kind {
        Kind::CramerVonMises => (b * b / 2.0 - b * b * b / 3.0) - (a * a / 2.0 - a * a * a / 3.0),
        Kind::AndersonDarling => b - a,
    };
    let mut total = 0.0;
    let mut pos = 0.0;
    let (gx, gw) = crate::numerics::gauss_legendre(24);
    for (t0, t1) in spans {
        total += cont(pos, t0);
        let h = t1 - t0;
        if h > 0.0 {
            let mut s = 0.0;
            for (x, wk) in gx.iter().zip(&gw) {
                let sfrac = 0.5 * (x + 1.0);
                let u = t0 + sfrac * h;
                let v = (1.0 - sfrac).powi(2) * t0 * (1.0 - t0)
                    + sfrac * sfrac * t1 * (1.0 - t1)
                    + 2.0 * sfrac * (1.0 - sfrac) * t0 * (1.0 - t1);
                s += wk * v * w(clamp(u));
            }
            total += 0.5 * h * s;
        }
        pos = t1;
    }
    total += cont(pos, 1.0);
    total / n as f64
}

#[cfg(test)]
mod tests;

//! Tabulated design products of the regularised horseshoe.
//!
//! Per draw i, with global scale τ_i = τ0·t_i and slab scale c_i = s·κ_i (t_i and
//! κ_i fixed by the draw's uniforms once slab_df is fixed), the shrunk scale
//! (Piironen & Vehtari 2017, EJS 11, eq. 2.8) is
//!   τλ̃_j = τλ_j/√(1 + (rλ_j)²),   r = τ/c = ρ·a_i,  ρ = τ0/s,  a_i = t_i/κ_i,
//! so β = τ_i·f_i(ρ) with f_ij(ρ) = λ_j z_j/√(1 + (ρ a_i λ_j)²), and the design
//! quadratic form q_i = τ_i²·Q_i(ρ), Q_i(ρ) = ‖X_c f_i(ρ)‖²/n, the marginal signal
//! variance v_i = τ_i²·V_i(ρ), V_i(ρ) = Σ_j s_j² λ_j²/(1 + (ρ a_i λ_j)²).
//! Q_i and V_i are analytic in u = log ρ within |Im u| < π/2 (branch points where
//! (ρ a_i λ_j)² = −1), so their logarithms (positive functions, Q ~ e^{−2u} for
//! large ρ) are interpolated by a Chebyshev polynomial in u on the bounds-implied
//! interval [log(τ0_lo/s_hi), log(τ0_hi/s_lo)] (Trefethen 2013, Approximation
//! Theory and Approximation Practice, ch. 8: geometric convergence for analytic
//! functions), evaluated with the barycentric formula for Chebyshev points of the
//! first kind (Berrut & Trefethen 2004, SIAM Review 46, §5, eq. 5.3).
//! Set-up: NODES blocked design products over all draws (once per set of base
//! draws); evaluation: O(draws × NODES) multiply-adds, no design product.

use super::coef::{self, Eff};
use crate::design::Design;

/// Chebyshev nodes per draw. The interpolation error on the benchmark design
/// (5.7 decades of ρ) is checked by the `table_matches_exact` test.
pub const NODES: usize = 64;

/// log Q and log V at the nodes, draws × NODES (draw-major).
pub struct Table {
    pub draws: usize,
    pub ulo: f64,
    pub uhi: f64,
    pub lq: Vec<f64>,
    pub lv: Vec<f64>,
}

/// Chebyshev points of the first kind on [ulo, uhi].
pub fn nodes(ulo: f64, uhi: f64) -> Vec<f64> {
    (0..NODES)
        .map(|k| {
            let x = ((2 * k + 1) as f64 * std::f64::consts::PI / (2 * NODES) as f64).cos();
            0.5 * (ulo + uhi) + 0.5 * (uhi - ulo) * x
        })
        .collect()
}

impl Table {
    /// Tabulate for draws with ratios `a` (a_i = t_i/κ_i), normals `z` and local
    /// scales `lam` (draws × p). None when a node value is not positive and finite.
    pub fn build(
        d: &Design,
        a: &[f64],
        z: &[f64],
        lam: &[f64],
        ulo: f64,
        uhi: f64,
    ) -> Option<Table> {
        let n = a.len();
        let p = d.cols();
        let mut lq = vec![0.0; n * NODES];
        let mut lv = vec![0.0; n * NODES];
        for (k, u) in nodes(ulo, uhi).into_iter().enumerate() {
            let rho = u.exp();
            let fill = |i: usize, w: &mut [f64], zz: &mut [f64]| {
                zz.copy_from_slice(&z[i * p..(i + 1) * p]);
                let r = rho * a[i];
                for (w, l) in w.iter_mut().zip(&lam[i * p..(i + 1) * p]) {
                    let x = r * l;
                    // λ/√(1 + x²), written to stay finite for λ up to 1e300.
                    *w = if x < 1e150 {
                        l / (1.0 + x * x).sqrt()
                    } else {
                        1.0 / r
                    };
                }
            };
            let pr = coef::products(d, n, &[], false, true, Eff::None, true, &fill);
            for i in 0..n {
                let (q, v) = (pr.q[i], pr.v[i]);
                if !(q > 0.0 && q.is_finite() && v > 0.0 && v.is_finite()) {
                    return None;
                }
                lq[i * NODES + k] = q.ln();
                lv[i * NODES + k] = v.ln();
            }
        }
        Some(Table {
            draws: n,
            ulo,
            uhi,
            lq,
            lv,
        })
    }

    /// Whether u = log ρ lies in the tabulated interval.
    pub fn covers(&self, u: f64) -> bool {
        u >= self.ulo && u <= self.uhi
    }

    /// Barycentric weights at u (normalised to sum 1; a node hit gives a unit vector).
    pub fn weights(&self, u: f64) -> Vec<f64> {
        let xs = nodes(self.ulo, self.uhi);
        let mut w = vec![0.0; NODES];
        if let Some(k) = xs.iter().position(|x| *x == u) {
            w[k] = 1.0;
            return w;
        }
        let mut s = 0.0;
        for (k, x) in xs.iter().enumerate() {
            let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
            let b = sign * ((2 * k + 1) as f64 * std::f64::consts::PI / (2 * NODES) as f64).sin();
            w[k] = b / (u - x);
            s += w[k];
        }
        for x in w.iter_mut() {
            *x /= s;
        }
        w
    }

    /// (Q_i, V_i) of the first n draws at u.
    pub fn eval(&self, u: f64, n: usize) -> (Vec<f64>, Vec<f64>) {
        let w = self.weights(u);
        let dot = |t: &[f64]| -> Vec<f64> {
            t[..n * NODES]
                .chunks_exact(NODES)
                .map(|c| c.iter().zip(&w).map(|(a, b)| a * b).sum::<f64>().exp())
                .collect()
        };
        (dot(&self.lq), dot(&self.lv))
    }
}

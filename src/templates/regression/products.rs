//! The per-draw linear algebra of the coefficient priors ([`super::coef`]):
//! a block of coefficient draws β = ω∘z turned into the design-level products
//! the quantities read — ‖X_cβ‖²/n, Σ_j s_j²ω_j², linear forms aᵀβ at profiles
//! and contrasts, the rows X_cβ, and the shrinkage terms of `effective_nonzero`
//! (1 − κ_j = x/(1 + x), x = n s_j²ω_j²/ρ; Piironen & Vehtari 2017, EJS 11) —
//! ungrouped, or per group of columns ([`super::groups`], [`super::indep`]).
//! Blocks of 256 draws are formed and multiplied with the design (nalgebra
//! matrix products), in parallel with rayon when asked; blocks are independent,
//! so results do not depend on the thread count.

use crate::design::Design;
use nalgebra::DMatrix;
use rayon::prelude::*;

/// Per-draw design products of a block of coefficient draws (unit global).
#[derive(Default)]
pub struct Products {
    /// ‖X_c β‖²/n: the design variance of the linear predictor.
    pub q: Vec<f64>,
    /// Σ_j s_j² ω_j²: its expectation over z (the marginal signal variance).
    pub v: Vec<f64>,
    /// X_c β, rows × draws (draw i at i·rows), when asked for.
    pub rows: Vec<f64>,
    /// a_kᵀβ for each registered linear form k.
    pub forms: Vec<Vec<f64>>,
    /// Cached mode: n s_j² w_j² (draws × p, f32). Direct mode: m_eff per draw.
    pub eff_store: Vec<f32>,
    pub eff: Vec<f64>,
}

/// How effective_nonzero is served.
#[derive(Clone, Copy)]
pub enum Eff<'a> {
    None,
    /// Store n s_j² w_j² for later rescaling.
    Store,
    /// Compute m_eff = Σ_j x/(1 + x), x = n s_j² ω_j² / ρ_i, with 1/ρ per draw.
    Direct(&'a [f64]),
}

/// Draws per block: large enough that packing the design for the matrix product
/// (matrixmultiply packs its left operand on every call) is amortised.
const BLOCK: usize = 256;

/// Fills draw i's scales and normals.
pub type Fill<'a> = dyn Fn(usize, &mut [f64], &mut [f64]) + Sync + 'a;

/// Compute [`Products`] for draws 0..n, where `fill(i, w, z)` writes draw i's
/// scales ω (or w) and normals z. The design product X_cβ (the costly part,
/// rows × p per draw) is formed only when `want_q` or `want_rows`. Parallel over
/// blocks when `parallel`.
#[allow(clippy::too_many_arguments)]
pub fn products(
    d: &Design,
    n: usize,
    forms: &[Vec<(usize, f64)>],
    want_rows: bool,
    want_q: bool,
    eff: Eff,
    parallel: bool,
    fill: &Fill,
) -> Products {
    products_grouped(d, n, forms, want_rows, want_q, eff, parallel, fill, None)
}

/// [`products`], with groups of columns ([`super::groups`]): then v and each
/// form hold G values per draw (draw i at i·G, one per group, unit group
/// multiplier), q holds the G × G cross products (X_g u_g)ᵀ(X_h u_h)/n per draw
/// (draw i at i·G²), and the rows are not formed.
#[allow(clippy::too_many_arguments)]
pub fn products_grouped(
    d: &Design,
    n: usize,
    forms: &[Vec<(usize, f64)>],
    want_rows: bool,
    want_q: bool,
    eff: Eff,
    parallel: bool,
    fill: &Fill,
    grp: Option<&super::groups::Grouping>,
) -> Products {
    let p = d.cols();
    let nr = d.rows();
    let nblocks = n.div_ceil(BLOCK);
    if let Some(gr) = grp {
        let gn = gr.count();
        let one = |b: usize| -> Products {
            let i0 = b * BLOCK;
            let nb = BLOCK.min(n - i0);
            let mut bm: Vec<DMatrix<f64>> = gr
                .cols
                .iter()
                .map(|c| DMatrix::zeros(c.len(), nb))
                .collect();
            let mut w = vec![0.0; p];
            let mut z = vec![0.0; p];
            let mut out = Products {
                q: vec![0.0; nb * gn * gn],
                v: vec![0.0; nb * gn],
                forms: vec![vec![0.0; nb * gn]; forms.len()],
                ..Default::default()
            };
            if matches!(eff, Eff::Store) {
                out.eff_store = vec![0.0; nb * p];
            }
            for k in 0..nb {
                fill(i0 + k, &mut w, &mut z);
                for j in 0..p {
                    out.v[k * gn + gr.of[j]] += d.var[j] * w[j] * w[j];
                    z[j] *= w[j];
                }
                for (g, c) in gr.cols.iter().enumerate() {
                    let mut col = bm[g].column_mut(k);
                    for (r, j) in c.iter().enumerate() {
                        col[r] = z[*j];
                    }
                }
                for (f, o) in forms.iter().zip(out.forms.iter_mut()) {
                    for (j, a) in f {
                        o[k * gn + gr.of[*j]] += a * z[*j];
                    }
                }
                if matches!(eff, Eff::Store) {
                    let e = &mut out.eff_store[k * p..(k + 1) * p];
                    for j in 0..p {
                        e[j] = (nr as f64 * d.var[j] * w[j] * w[j]) as f32;
                    }
                }
            }
            if want_q {
                let m: Vec<DMatrix<f64>> = gr.x.iter().zip(&bm).map(|(x, b)| x * b).collect();
                for k in 0..nb {
                    for a in 0..gn {
                        for c in a..gn {
                            let x = m[a].column(k).dot(&m[c].column(k)) / nr as f64;
                            out.q[k * gn * gn + a * gn + c] = x;
                            out.q[k * gn * gn + c * gn + a] = x;
                        }
                    }
                }
            }
            out
        };
        let parts: Vec<Products> = if parallel && nblocks > 1 {
            (0..nblocks).into_par_iter().map(one).collect()
        } else {
            (0..nblocks).map(one).collect()
        };
        let mut all = Products {
            forms: vec![Vec::with_capacity(n * gn); forms.len()],
            ..Default::default()
        };
        for b in parts {
            all.q.extend(b.q);
            all.v.extend(b.v);
            for (a, f) in all.forms.iter_mut().zip(b.forms) {
                a.extend(f);
            }
            all.eff_store.extend(b.eff_store);
        }
        return all;
    }
    let one = |b: usize| -> Products {
        let i0 = b * BLOCK;
        let nb = BLOCK.min(n - i0);
        let mut bm = DMatrix::<f64>::zeros(p, nb);
        let mut w = vec![0.0; p];
        let mut out = Products {
            q: vec![0.0; nb],
            v: vec![0.0; nb],
            forms: vec![vec![0.0; nb]; forms.len()],
            ..Default::default()
        };
        if matches!(eff, Eff::Store) {
            out.eff_store = vec![0.0; nb * p];
        }
        if matches!(eff, Eff::Direct(_)) {
            out.eff = vec![0.0; nb];
        }
        for k in 0..nb {
            let i = i0 + k;
            let mut col = bm.column_mut(k);
            let z = col.as_mut_slice();
            fill(i, &mut w, z);
            let mut v = 0.0;
            for j in 0..p {
                v += d.var[j] * w[j] * w[j];
                z[j] *= w[j];
            }
            out.v[k] = v;
            for (f, o) in forms.iter().zip(out.forms.iter_mut()) {
                o[k] = f.iter().map(|(j, a)| a * z[*j]).sum();
            }
            match eff {
                Eff::None => {}
                Eff::Store => {
                    let e = &mut out.eff_store[k * p..(k + 1) * p];
                    for j in 0..p {
                        e[j] = (nr as f64 * d.var[j] * w[j] * w[j]) as f32;
                    }
                }
                Eff::Direct(irho) => {
                    out.eff[k] = (0..p)
                        .map(|j| shrink_term(nr as f64 * d.var[j] * w[j] * w[j] * irho[i]))
                        .sum();
                }
            }
        }
        if want_q || want_rows {
            let m = &d.xc * &bm;
            for k in 0..nb {
                let c = m.column(k);
                out.q[k] = c.iter().map(|x| x * x).sum::<f64>() / nr as f64;
            }
            if want_rows {
                out.rows = m.as_slice().to_vec();
            }
        }
        out
    };
    let parts: Vec<Products> = if parallel && nblocks > 1 {
        (0..nblocks).into_par_iter().map(one).collect()
    } else {
        (0..nblocks).map(one).collect()
    };
    let mut all = Products {
        forms: vec![Vec::with_capacity(n); forms.len()],
        ..Default::default()
    };
    for b in parts {
        all.q.extend(b.q);
        all.v.extend(b.v);
        all.rows.extend(b.rows);
        for (a, f) in all.forms.iter_mut().zip(b.forms) {
            a.extend(f);
        }
        all.eff_store.extend(b.eff_store);
        all.eff.extend(b.eff);
    }
    all
}

/// 1 − κ = x/(1 + x) for x = n s² ω²/σ², safe at x = 0 and x = ∞.
#[inline]
pub fn shrink_term(x: f64) -> f64 {
    if x.is_nan() || x <= 0.0 {
        0.0
    } else if x.is_infinite() {
        1.0
    } else {
        x / (1.0 + x)
    }
}

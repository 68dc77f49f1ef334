//! Tests of independent priors per group of covariates ([`super::indep`]): the
//! per-group R² split and every design-level quantity against the coefficients
//! formed explicitly from the definitions, closed forms under normal priors of
//! fixed scale (a point mass) and under a group's own R2D2 (exactly Beta), and
//! the refusals.

use super::tests::{cvm_vs, draws, h0, spec, CVM_999_OVER_MEAN};
use super::*;
use crate::dist::Continuous;
use crate::spec::{parse, Overrides};
use std::sync::Arc;

/// Three groups (normal of fixed scale; horseshoe with a fixed global scale;
/// the rest under an R2D2 of its own) and x9 with a prior of its own.
const INDEP: &str = r#"
[model]
template = "linear"
[design]
columns = 30
rows = 80
correlation = "ar1"
rho = 0.5
seed = 3
[prior.intercept]
family = "normal"
mean = 0.0
sd = 1.0
[prior.sigma]
family = "half-normal"
scale = 2.0
[prior.x9]
family = "normal"
mean = 0.2
sd = 0.1
[prior.coefficients.a]
covariates = ["x1", "x2", "x3", "x4", "x5"]
family = "normal"
scale = 0.3
[prior.coefficients.b]
covariates = ["x6", "x7", "x8"]
family = "horseshoe"
global = "fixed"
global_scale = 0.2
[prior.coefficients.c]
covariates = "rest"
family = "r2d2"
a = 2.0
b = 5.0
concentration = 0.5
[[belief]]
quantity = "r2_marginal"
group = "a"
distribution = { family = "beta", alpha = 2, beta = 5 }
[[belief]]
quantity = "r2_marginal"
group = "b"
distribution = { family = "beta", alpha = 2, beta = 5 }
[[belief]]
quantity = "r2_marginal"
group = "c"
distribution = { family = "beta", alpha = 2, beta = 5 }
[[belief]]
quantity = "r2_share"
group = "a"
distribution = { family = "beta", alpha = 2, beta = 5 }
[[belief]]
quantity = "r2_share"
group = "b"
distribution = { family = "beta", alpha = 2, beta = 5 }
[[belief]]
quantity = "r2_share"
group = "c"
distribution = { family = "beta", alpha = 2, beta = 5 }
[[belief]]
quantity = "r2_marginal"
distribution = { family = "beta", alpha = 2, beta = 5 }
[[belief]]
quantity = "r2"
distribution = { family = "beta", alpha = 2, beta = 5 }
[[belief]]
quantity = "signal_sd"
distribution = { family = "lognormal", meanlog = 0, sdlog = 1 }
[[belief]]
quantity = "effective_nonzero"
distribution = { family = "lognormal", meanlog = 1, sdlog = 1 }
"#;

#[test]
fn per_group_r2_split_and_design_quantities_match_the_definitions() {
    // Per draw, from the same base variates: ω_j = 0.3 (group a), 0.2·λ_j
    // (group b, λ_j the stored half-Cauchy local scale), √(σ²W_c)·w_j (group c,
    // W_c = R²_c/(1 − R²_c) with R²_c the exact Beta(2, 5) quantile of the
    // group's R² uniform, w_j = √(ψ_j)/s_j); V_g = Σ_{j∈g} s_j²ω_j². Then
    // r2_marginal(g) = V_g/(V_g + σ²), r2_share(g) = V_g/Σ_h V_h, the total
    // r2_marginal = (Σ_g V_g + s_9²b_9²)/(that + σ²), and with β formed
    // explicitly (x9's own coefficient included) r2 = q/(q + σ²), q = ‖X_cβ‖²/n,
    // signal_sd = √q, effective_nonzero = Σ_j x_j/(1 + x_j) over the grouped
    // columns, x_j = n s_j²ω_j²/σ² (Piironen & Vehtari 2017, EJS 11, eq. 3.1–3.4).
    let s = spec(INDEP);
    let n = 300;
    let h = h0(&s);
    let out = draws(&s, &h, n);
    let m = super::tests::linear(INDEP);
    let plan = rng::Plan::fit(s.seed, rng::Points::Independent);
    let base = m.draw(n, &plan);
    let k = m.priors.priors.len();
    let mut par = vec![Vec::new(); k];
    m.priors.fill(&h, &base.cols[..k], &mut par).unwrap();
    let sigma = &par[1];
    let own = &m.own[0];
    assert_eq!(own.col, 8);
    let d = &m.design;
    let gr = m.coef.groups.as_ref().unwrap();
    let ind = m.coef.indep.as_ref().unwrap();
    let (p, nr) = (d.cols(), d.rows());
    let beta_c = crate::dist::beta::Beta::new(2.0, 5.0).unwrap();
    let ru = &base.cols[k + 3 + 3 * 2 + 2];
    let sob = coef::SobolCols::draw(&m.coef, p, std::iter::empty(), n, &plan);
    let (mut z, mut loc) = (vec![0.0; p], vec![0.0; p]);
    let rel = |a: f64, b: f64, t: f64| (a - b).abs() <= t * b.abs().max(1e-300);
    for i in (0..n).step_by(7) {
        ind.base_draw(&m.coef, d, plan.seed, plan.block, i, &mut z, &mut loc, &sob);
        let s2 = sigma[i] * sigma[i];
        let r2c = beta_c.quantile(ru[i]);
        let omega: Vec<f64> = (0..p)
            .map(|j| match gr.of[j] {
                _ if j == 8 => 0.0,
                0 => 0.3,
                1 => 0.2 * loc[j],
                _ => (s2 * r2c / (1.0 - r2c)).sqrt() * loc[j],
            })
            .collect();
        let mut v = [0.0; 3];
        for j in 0..p {
            if j != 8 {
                v[gr.of[j]] += d.var[j] * omega[j] * omega[j];
            }
        }
        let tot: f64 = v.iter().sum();
        // Beta quantiles are tabulated in the simulator (|Δ logit| ≤ 1e-7).
        for g in 0..3 {
            assert!(
                rel(out[g][i], v[g] / (v[g] + s2), 1e-6),
                "draw {i} r2_marginal {g}"
            );
            assert!(
                rel(out[3 + g][i], v[g] / tot, 1e-6),
                "draw {i} r2_share {g}"
            );
        }
        let b9 = par[2][i] * own.to_stored;
        let vt = tot + d.var[8] * b9 * b9;
        assert!(rel(out[6][i], vt / (vt + s2), 1e-6), "draw {i} r2_marginal");
        let mut beta: Vec<f64> = (0..p).map(|j| omega[j] * z[j]).collect();
        beta[8] = b9;
        let eta = &d.xc * nalgebra::DVector::from_vec(beta);
        let q = eta.iter().map(|x| x * x).sum::<f64>() / nr as f64;
        assert!(rel(out[7][i], q / (q + s2), 1e-6), "draw {i} r2");
        assert!(rel(out[8][i], q.sqrt(), 1e-6), "draw {i} signal_sd");
        let eff: f64 = (0..p)
            .filter(|j| *j != 8)
            .map(|j| coef::shrink_term(nr as f64 * d.var[j] * omega[j] * omega[j] / s2))
            .sum();
        // n s_j²w_j² is stored as f32 (relative error 6e-8 per term).
        assert!(
            rel(out[9][i], eff, 1e-5),
            "draw {i} effective_nonzero {} vs {eff}",
            out[9][i]
        );
    }
}

#[test]
fn closed_forms_fixed_normal_groups_and_a_group_r2d2() {
    // (1) Every group under a normal prior of fixed scale s_g: V_g = s_g²Σ_{j∈g} s_j²
    // for every draw, so r2_share(g) is the point mass V_g/Σ_h V_h and
    // r2_marginal(g) = V_g/(V_g + σ²) with σ the draw's noise sd.
    let text = INDEP
        .replace(
            "family = \"horseshoe\"\nglobal = \"fixed\"\nglobal_scale = 0.2",
            "family = \"normal\"\nscale = 0.7",
        )
        .replace(
            "family = \"r2d2\"\na = 2.0\nb = 5.0\nconcentration = 0.5",
            "family = \"normal\"\nscale = 0.05",
        );
    let s = spec(&text);
    let n = 2000;
    let h = h0(&s);
    let out = draws(&s, &h, n);
    let m = super::tests::linear(&text);
    let d = &m.design;
    let gr = m.coef.groups.as_ref().unwrap();
    let sc = [0.3, 0.7, 0.05];
    let v: Vec<f64> = (0..3)
        .map(|g| sc[g] * sc[g] * gr.cols[g].iter().map(|j| d.var[*j]).sum::<f64>())
        .collect();
    let tot: f64 = v.iter().sum();
    let plan = rng::Plan::fit(s.seed, rng::Points::Independent);
    let base = m.draw(n, &plan);
    let k = m.priors.priors.len();
    let mut par = vec![Vec::new(); k];
    m.priors.fill(&h, &base.cols[..k], &mut par).unwrap();
    for i in 0..n {
        let s2 = par[1][i] * par[1][i];
        for g in 0..3 {
            assert!(
                (out[3 + g][i] - v[g] / tot).abs() < 1e-12,
                "share {g} draw {i}"
            );
            let want = v[g] / (v[g] + s2);
            assert!(
                (out[g][i] - want).abs() < 1e-12 * want.max(1e-3),
                "r2_marginal {g} draw {i}"
            );
        }
    }
    // (2) A group under an R2D2 of its own: V_c = σ²W_c exactly (its Dirichlet
    // sums to 1 within the group), so its own marginal R² is exactly Beta(2, 5):
    // a CvM test at 20,000 draws, and one against Beta(2, 4) fails.
    let s = spec(INDEP);
    let out = draws(&s, &h0(&s), 20_000);
    for (a, b, pass) in [(2.0, 5.0, true), (2.0, 4.0, false)] {
        let law = crate::dist::beta::Beta::new(a, b).unwrap();
        let (dd, floor) = cvm_vs(Arc::new(law), out[2].clone());
        assert_eq!(
            dd < CVM_999_OVER_MEAN * floor,
            pass,
            "Beta({a}, {b}): CvM {dd} vs floor {floor}"
        );
    }
}

#[test]
fn recomputed_route_equals_cached_route() {
    // A spike-and-slab group with its inclusion fitted is recomputed per
    // evaluation (the other groups' scales too); at inclusion 1 it is the
    // normal of scale slab_scale, so every quantity equals that of the cached
    // route (normal, scale 0.7) from the same base variates.
    let cached = INDEP.replace(
        "family = \"horseshoe\"\nglobal = \"fixed\"\nglobal_scale = 0.2",
        "family = \"normal\"\nscale = 0.7",
    );
    let fresh = INDEP.replace(
        "family = \"horseshoe\"\nglobal = \"fixed\"\nglobal_scale = 0.2",
        "family = \"spike-and-slab\"\ninclusion = { fit = [0.5, 1.0] }\nslab_scale = 0.7",
    );
    let (sc, sf) = (spec(&cached), spec(&fresh));
    assert!(super::tests::linear(&cached).coef.cached && !super::tests::linear(&fresh).coef.cached);
    let mut hf = h0(&sf);
    let i = sf
        .hypers()
        .iter()
        .position(|x| x.name == "coefficients.b.inclusion")
        .unwrap();
    hf[i] = 1.0;
    let (a, b) = (draws(&sc, &h0(&sc), 500), draws(&sf, &hf, 500));
    for (k, (x, y)) in a.iter().zip(&b).enumerate() {
        for (u, w) in x.iter().zip(y) {
            assert!(
                (u - w).abs() <= 1e-6 * u.abs().max(1e-9),
                "belief {k}: {u} vs {w}"
            );
        }
    }
}

#[test]
fn bad_independent_groups_are_named() {
    let cases = [
        (
            INDEP.replace("covariates = \"rest\"", "covariates = [\"x10\"]"),
            "\"x11\" is in no group",
        ),
        (
            INDEP.replace("[\"x6\", \"x7\", \"x8\"]", "[\"x6\", \"x5\"]"),
            "\"x5\" is already in group `a`",
        ),
        (
            INDEP.replace("[\"x6\", \"x7\", \"x8\"]", "[\"x6\", \"xx7\"]"),
            "`xx7` is not a column of the design",
        ),
        (
            INDEP.replace("[\"x6\", \"x7\", \"x8\"]", "[\"x6\", \"x9\"]"),
            "\"x9\" has a prior of its own",
        ),
        (
            INDEP.replace(
                "family = \"normal\"\nscale = 0.3",
                "family = \"gamma\"\nscale = 0.3",
            ),
            "family \"gamma\" is not a shrinkage prior",
        ),
        (
            INDEP.replace(
                "[prior.coefficients.a]",
                "[prior.coefficients]\nfamily = \"normal\"\nscale = 1.0\n[prior.coefficients.a]",
            ),
            "has a `family` of its own and a group table `a`",
        ),
        (
            INDEP.replace("scale = 0.3", "scale = 0.3\nweight = 1.0"),
            "`weight` belongs to the joint R2D2",
        ),
        (
            INDEP.replace("quantity = \"r2\"\n", "quantity = \"r2\"\ngroup = \"a\"\n"),
            "only r2_share and r2_marginal take `group`",
        ),
    ];
    for (text, want) in cases {
        let Err(e) = parse(&text, None, &Overrides::default()) else {
            panic!("{want}: accepted");
        };
        let msg = e.to_string();
        assert!(msg.contains(want), "{want}: {msg}");
    }
}

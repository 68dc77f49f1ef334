//! Tests of R2D2 with groups of covariates ([`super::groups`]): the aggregation
//! property of the Dirichlet, the group shares' Beta laws, and the design
//! products per group against the linear predictor formed explicitly.

use super::tests::{cvm_vs, draws, h0, spec, CVM_999_OVER_MEAN};
use super::*;
use crate::dist::Continuous;
use crate::spec::{parse, Overrides};
use std::sync::Arc;

const GROUPED: &str = r#"
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
[prior.coefficients]
family = "r2d2"
a = 2.0
b = 5.0
concentration = 0.5
[prior.coefficients.groups.a]
covariates = ["x1", "x2", "x3", "x4", "x5"]
weight = 1.5
[prior.coefficients.groups.b]
covariates = ["x6", "x7", "x8"]
weight = 2.0
[prior.coefficients.groups.c]
covariates = "rest"
weight = 0.5
[[belief]]
quantity = "r2_share"
group = "a"
distribution = { family = "beta", alpha = 1.5, beta = 2.5 }
[[belief]]
quantity = "r2_share"
group = "c"
distribution = { family = "beta", alpha = 0.5, beta = 3.5 }
[[belief]]
quantity = "r2_marginal"
distribution = { family = "beta", alpha = 2, beta = 5 }
[[belief]]
quantity = "r2"
distribution = { family = "beta", alpha = 2, beta = 5 }
[[belief]]
quantity = "r2_share"
group = "b"
distribution = { family = "beta", alpha = 2, beta = 2 }
"#;

#[test]
fn dirichlet_aggregation_gives_beta_share() {
    // Aggregation property (Kotz, Balakrishnan & Johnson, Continuous Multivariate
    // Distributions vol. 1, 2nd ed. 2000, §49.1; Ng, Tian & Tang, Dirichlet and
    // Related Distributions 2011, §2.3): if φ ~ Dirichlet(c_1, …, c_K), the sum
    // of the components in a set g is Beta(A_g, A − A_g), A_g = Σ_{k∈g} c_k.
    // Our own flat Dirichlet from our gamma sampler: components 0–4 at 0.3
    // (A_g = 1.5), components 5–11 at 0.5 (A − A_g = 3.5).
    let conc: Vec<f64> = (0..12).map(|k| if k < 5 { 0.3 } else { 0.5 }).collect();
    let n = 20_000;
    let mut r = rng::stream(11, 0);
    let x: Vec<f64> = (0..n)
        .map(|_| {
            let g: Vec<f64> = conc
                .iter()
                .map(|c| coef::gamma_variate(*c, &mut r))
                .collect();
            g[..5].iter().sum::<f64>() / g.iter().sum::<f64>()
        })
        .collect();
    let b = crate::dist::beta::Beta::new(1.5, 3.5).unwrap();
    let (d, floor) = cvm_vs(Arc::new(b), x.clone());
    assert!(d < CVM_999_OVER_MEAN * floor, "CvM {d} vs floor {floor}");
    // The check can fail: the same draws against Beta(1.5, 3.0) are rejected.
    let wrong = crate::dist::beta::Beta::new(1.5, 3.0).unwrap();
    let (d, floor) = cvm_vs(Arc::new(wrong), x);
    assert!(d > CVM_999_OVER_MEAN * floor, "CvM {d} vs floor {floor}");
}

#[test]
fn group_shares_are_beta_and_marginal_r2_stays_beta() {
    // Three groups with weights (1.5, 2.0, 0.5), A = 4: group a's share is the
    // first stick, Beta(1.5, 2.5), the Beta quantile of its uniform draw by
    // draw; group c's (the last, 1 − the other two sticks) is Beta(0.5, 3.5) by
    // aggregation (references above); the marginal R² is still exactly Beta(2, 5).
    let s = spec(GROUPED);
    let n = 20_000;
    let out = draws(&s, &h0(&s), n);
    let base = s
        .model
        .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
    // Prior columns (intercept, sigma), three global streams, then the sticks.
    let u = &base.cols[5];
    let ba = crate::dist::beta::Beta::new(1.5, 2.5).unwrap();
    // Tabulated quantile: |Δ logit φ| ≤ TABLE_TOL ([`crate::dist::beta::QuantileTable`]).
    let tol = |r: f64| r * (1.0 - r) * crate::dist::beta::TABLE_TOL + 1e-12;
    for i in (0..n).step_by(997) {
        assert!(
            (out[0][i] - ba.quantile(u[i])).abs() < tol(out[0][i]),
            "draw {i}"
        );
        let sum = out[0][i] + out[1][i] + out[4][i];
        assert!((sum - 1.0).abs() < 1e-12, "shares sum to {sum}");
    }
    for (k, (a, b)) in [(0, (1.5, 2.5)), (1, (0.5, 3.5)), (4, (2.0, 2.0))] {
        let d0 = crate::dist::beta::Beta::new(a, b).unwrap();
        let (d, floor) = cvm_vs(Arc::new(d0), out[k].clone());
        assert!(
            d < CVM_999_OVER_MEAN * floor,
            "belief {k}: CvM {d} vs floor {floor}"
        );
    }
    let d0 = crate::dist::beta::Beta::new(2.0, 5.0).unwrap();
    let (d, floor) = cvm_vs(Arc::new(d0), out[2].clone());
    assert!(
        d < CVM_999_OVER_MEAN * floor,
        "r2_marginal: CvM {d} vs floor {floor}"
    );
}

#[test]
fn grouped_design_variance_matches_explicit_coefficients() {
    // The per-group cross products Q_ab (X_a u_a)ᵀ(X_b u_b)/n, combined with the
    // shares, against ‖X_c β‖²/n with β formed explicitly: β_j = √(ρW φ_g ψ_j/s_j²) z_j
    // from the same base variates. Linear template: r2 = q/(q + σ²) and
    // r2_marginal = W/(1 + W), so q/(σ²W) = [r2/(1 − r2)]/W is free of σ.
    let s = spec(GROUPED);
    let n = 300;
    let out = draws(&s, &h0(&s), n);
    let plan = rng::Plan::fit(s.seed, rng::Points::Independent);
    let m = super::tests::linear(GROUPED);
    let d = &m.design;
    let gr = m.coef.groups.as_ref().unwrap();
    let (p, nr) = (d.cols(), d.rows());
    let mut z = vec![0.0; p];
    let mut loc = vec![0.0; p];
    let sob = super::coef::SobolCols::draw(&m.coef, p, std::iter::empty(), n, &plan);
    for i in (0..n).step_by(7) {
        m.coef
            .base_draw(d, plan.seed, plan.block, i, &mut z, &mut loc, &sob);
        let phi = [out[0][i], out[4][i], out[1][i]];
        let beta: Vec<f64> = (0..p)
            .map(|j| phi[gr.of[j]].sqrt() * loc[j] * z[j])
            .collect();
        let eta = &d.xc * nalgebra::DVector::from_vec(beta);
        let q_unit = eta.iter().map(|x| x * x).sum::<f64>() / nr as f64;
        let (r2, rm) = (out[3][i], out[2][i]);
        let w = rm / (1.0 - rm);
        let got = r2 / (1.0 - r2) / w;
        assert!(
            (got - q_unit).abs() <= 1e-8 * q_unit.max(1e-12),
            "draw {i}: {got} vs explicit {q_unit}"
        );
    }
}

#[test]
fn bad_groups_are_named() {
    // Each refusal names the key and the bad value.
    let cases = [
        (
            GROUPED.replace("covariates = \"rest\"", "covariates = [\"x9\"]"),
            "\"x10\" is in no group",
        ),
        (
            GROUPED.replace("[\"x6\", \"x7\", \"x8\"]", "[\"x6\", \"x5\"]"),
            "\"x5\" is already in group `a`",
        ),
        (
            GROUPED.replace("[\"x6\", \"x7\", \"x8\"]", "[\"x6\", \"xx7\"]"),
            "`xx7` is not a column of the design",
        ),
        (
            GROUPED.replace("weight = 0.5", "weight = -1.0"),
            "weight -1 must lie in",
        ),
        (
            GROUPED.replace("group = \"c\"", "group = \"d\""),
            "no coefficient group \"d\"",
        ),
        (
            GROUPED.replace("quantity = \"r2\"\n", "quantity = \"r2\"\ngroup = \"a\"\n"),
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

#[test]
fn half_concentration_route_keeps_the_dirichlet_law() {
    // With concentration ½ the base draws take Gamma(½, 1) as Z²/2 (χ²₁/2)
    // instead of the boosted Marsaglia–Tsang sampler, Z from a scrambled-Sobol
    // uniform on the Sobol columns (every column of a 30-column design; the
    // first 64 of a 100-column one) and from the per-draw stream on the others.
    // A column's weight within its group, γ_j/S_g = w_j² s_j², is
    // Beta(½, ½(n_g − 1)) by the aggregation property (references above).
    // One-sample CvM against that law, with a neighbouring law rejected, and a
    // two-sample Kolmogorov–Smirnov test against the old route (our own
    // gamma_variate on a separate stream) at the 0.1 % critical value
    // 1.949·√(2/n) (Smirnov's asymptotic law; common practice).
    let ks = |mut a: Vec<f64>, mut b: Vec<f64>| -> f64 {
        a.sort_by(f64::total_cmp);
        b.sort_by(f64::total_cmp);
        let (mut i, mut j, mut dmax) = (0, 0, 0.0f64);
        while i < a.len() && j < b.len() {
            if a[i] <= b[j] {
                i += 1;
            } else {
                j += 1;
            }
            dmax = dmax.max((i as f64 / a.len() as f64 - j as f64 / b.len() as f64).abs());
        }
        dmax
    };
    let n = 20_000;
    let crit = 1.949 * (2.0 / n as f64).sqrt();
    // (columns, column checked, its group's size).
    for (cols, checks) in [(30, [(0, 5), (9, 22)]), (100, [(0, 5), (80, 92)])] {
        let text = GROUPED.replace("columns = 30", &format!("columns = {cols}"));
        let m = super::tests::linear(&text);
        let d = &m.design;
        let p = d.cols();
        let plan = rng::Plan::fit(5, rng::Points::Independent);
        let sob = super::coef::SobolCols::draw(&m.coef, p, std::iter::empty(), n, &plan);
        assert_eq!(sob.u.len(), p.min(coef::SOBOL_COLUMNS));
        let (mut z, mut loc) = (vec![0.0; p], vec![0.0; p]);
        let mut new: Vec<Vec<f64>> = (0..2).map(|_| Vec::with_capacity(n)).collect();
        for i in 0..n {
            m.coef
                .base_draw(d, plan.seed, plan.block, i, &mut z, &mut loc, &sob);
            for (k, (j, _)) in checks.iter().enumerate() {
                new[k].push(loc[*j] * loc[*j] * d.var[*j]);
            }
        }
        let mut r = rng::stream(17, cols as u64);
        for (k, (j, ng)) in checks.iter().enumerate() {
            let old: Vec<f64> = (0..n)
                .map(|_| {
                    let g: Vec<f64> = (0..*ng).map(|_| coef::gamma_variate(0.5, &mut r)).collect();
                    g[0] / g.iter().sum::<f64>()
                })
                .collect();
            let what = format!("{cols} columns, column {j}");
            let ks_d = ks(new[k].clone(), old);
            assert!(ks_d < crit, "{what}: KS {ks_d} vs {crit}");
            let b = 0.5 * (*ng as f64 - 1.0);
            let law = crate::dist::beta::Beta::new(0.5, b).unwrap();
            let (dd, floor) = cvm_vs(Arc::new(law), new[k].clone());
            assert!(
                dd < CVM_999_OVER_MEAN * floor,
                "{what}: CvM {dd} vs {floor}"
            );
            // The check can fail: the same draws against a neighbouring law.
            let law = crate::dist::beta::Beta::new(0.5, 0.85 * b).unwrap();
            let (dd, floor) = cvm_vs(Arc::new(law), new[k].clone());
            assert!(
                dd > CVM_999_OVER_MEAN * floor,
                "{what}: wrong law accepted, CvM {dd}"
            );
        }
    }
}

#[test]
fn marginal_beliefs_skip_the_coefficient_draws_exactly() {
    // With only r2_marginal and r2_share beliefs the base draws hold no
    // coefficient variates (Σ_{j∈g} s_j²w_j² = 1 per group and draw); the draws
    // of r2_marginal and of the shares equal, draw by draw, those of the full
    // route, forced here by the extra belief on r2 (design quadratic form).
    let short_text = GROUPED.replace(
        "[[belief]]\nquantity = \"r2\"\ndistribution = { family = \"beta\", alpha = 2, beta = 5 }\n",
        "",
    );
    assert_ne!(short_text, GROUPED);
    let (full, short) = (spec(GROUPED), spec(&short_text));
    let n = 5_000;
    let a = draws(&full, &h0(&full), n);
    let b = draws(&short, &h0(&short), n);
    // Full: share a, share c, r2_marginal, r2, share b; short: without r2.
    for (k, l) in [(0, 0), (1, 1), (2, 2), (4, 3)] {
        for i in 0..n {
            let (x, y) = (a[k][i], b[l][i]);
            assert!(
                (x - y).abs() <= 1e-12 * x.abs().max(1e-12),
                "belief {k}, draw {i}: {x} vs {y}"
            );
        }
    }
    // The short route holds no coefficient products beyond v.
    let base = short
        .model
        .draw_base(64, &rng::Plan::fit(short.seed, rng::Points::Independent));
    let ex = base::RegBase::of(&base).unwrap();
    let prod = ex.cached.as_ref().unwrap();
    assert!(prod.v.iter().all(|v| *v == 1.0) && prod.forms.is_empty());
}

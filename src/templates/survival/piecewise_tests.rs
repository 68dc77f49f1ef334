//! Checks of the piecewise-exponential template against computations written
//! here independently of `Curve` (our own code, a second route): S(t) =
//! exp(−Σ h_j Δ_j(t)) draw by draw, the median and RMST of that S, the walk's
//! increments, and the hazard ratio e^β at every t. The binary's checks are in
//! tests/piecewise.rs.

use super::*;
use crate::spec::{parse, Overrides, Spec};

const CUTS: [f64; 5] = [0.0, 3.0, 7.5, 12.0, 30.0];

/// A spec with fixed hyperparameters (log_hazard_1 ~ normal(−3, 0.4),
/// τ ~ half-normal(`tau_scale`), β_arm ~ normal(−0.4, 0.2)) and `beliefs`.
fn spec_text(tau_scale: f64, draws: usize, beliefs: &str) -> String {
    format!(
        r#"
title = "test"
[model]
template = "piecewise-hazard"
cuts = [0, 3, 7.5, 12, 30]
covariates = ["arm"]
[simulation]
draws = {draws}
seed = 5
[profile.control]
arm = 0
[profile.treated]
arm = 1
[prior.log_hazard_1]
family = "normal"
mean = -3.0
sd = 0.4
[prior.hazard_walk_sd]
family = "half-normal"
scale = {tau_scale}
[prior.hazard_effect_arm]
family = "normal"
mean = -0.4
sd = 0.2
{beliefs}
"#
    )
}

fn belief(quantity: &str, extra: &str, q: [f64; 3]) -> String {
    format!(
        "[[belief]]\nquantity = \"{quantity}\"\n{extra}\nquantiles = {{ \"0.1\" = {}, \"0.5\" = {}, \"0.9\" = {} }}\n",
        q[0], q[1], q[2]
    )
}

/// Quantity draws of every belief at the (fixed) hyperparameters, and the base columns.
fn draws(text: &str) -> (Spec, Vec<Vec<f64>>, Vec<Vec<f64>>) {
    let spec = parse(text, None, &Overrides::default()).unwrap();
    let h: Vec<f64> = spec
        .model
        .hypers()
        .iter()
        .map(|x| x.default_value())
        .collect();
    let base = spec
        .model
        .draw_base(spec.draws, &crate::rng::Plan::fit(spec.seed, spec.points));
    let reqs: Vec<&Request> = spec.beliefs.iter().map(|b| &b.request).collect();
    let mut out = vec![Vec::new(); reqs.len()];
    spec.model.simulate(&h, &base, &reqs, &mut out).unwrap();
    (spec, out, base.cols)
}

/// Draw i's baseline hazards and log hazard ratio from the base columns, written
/// out again: ln h_1 = −3 + 0.4·z₀, τ = scale·|z₁|, β = −0.4 + 0.2·z₂,
/// ln h_{j+1} = ln h_j + τ·z_{3+j−1}.
fn hazards_of(cols: &[Vec<f64>], i: usize, tau_scale: f64) -> (Vec<f64>, f64) {
    let tau = tau_scale * cols[1][i].abs();
    let mut lh = vec![-3.0 + 0.4 * cols[0][i]];
    for j in 1..CUTS.len() {
        lh.push(lh[j - 1] + tau * cols[2 + j][i]);
    }
    (
        lh.iter().map(|x| x.exp()).collect(),
        -0.4 + 0.2 * cols[2][i],
    )
}

/// S(t) = exp(−m·Σ_j h_j·Δ_j(t)), Δ_j(t) = clamp(t − c_j, 0, c_{j+1} − c_j).
fn surv_direct(h: &[f64], m: f64, t: f64) -> f64 {
    let mut s = 0.0;
    for j in 0..CUTS.len() {
        let width = if j + 1 < CUTS.len() {
            CUTS[j + 1] - CUTS[j]
        } else {
            f64::INFINITY
        };
        s += h[j] * (t - CUTS[j]).clamp(0.0, width);
    }
    (-m * s).exp()
}

#[test]
fn survival_is_exp_of_minus_sum_of_hazard_times_time_in_interval() {
    let horizons = [0.5, 3.0, 5.0, 7.5, 11.999, 12.0, 20.0, 30.0, 45.0, 200.0];
    let mut beliefs = String::new();
    for t in horizons {
        for p in ["control", "treated"] {
            beliefs.push_str(&belief(
                "survival_prob",
                &format!("horizon = {t}\nprofile = \"{p}\""),
                [0.2, 0.5, 0.8],
            ));
        }
    }
    beliefs.push_str(&belief(
        "event_prob",
        "horizon = 20\nprofile = \"treated\"",
        [0.2, 0.5, 0.8],
    ));
    let (_, out, cols) = draws(&spec_text(0.3, 3000, &beliefs));
    let mut k = 0;
    for t in horizons {
        for m_on in [false, true] {
            for (i, v) in out[k].iter().enumerate() {
                let (h, beta) = hazards_of(&cols, i, 0.3);
                let m = if m_on { beta.exp() } else { 1.0 };
                let want = surv_direct(&h, m, t);
                assert!(
                    (v - want).abs() <= 1e-12 * want.max(1e-300) + 1e-300,
                    "t = {t}, draw {i}: {v} vs {want}"
                );
            }
            k += 1;
        }
    }
    for (i, v) in out[k].iter().enumerate() {
        let (h, beta) = hazards_of(&cols, i, 0.3);
        let want = 1.0 - surv_direct(&h, beta.exp(), 20.0);
        assert!(
            (v - want).abs() < 1e-12,
            "event_prob draw {i}: {v} vs {want}"
        );
    }
}

#[test]
fn median_and_rmst_of_that_survival_curve() {
    let beliefs = [
        belief(
            "median_survival",
            "profile = \"treated\"",
            [10.0, 20.0, 40.0],
        ),
        belief(
            "rmst",
            "horizon = 20\nprofile = \"treated\"",
            [5.0, 10.0, 15.0],
        ),
        belief(
            "rmst",
            "horizon = 60\nprofile = \"control\"",
            [5.0, 10.0, 15.0],
        ),
    ]
    .concat();
    let (_, out, cols) = draws(&spec_text(0.5, 2000, &beliefs));
    for i in 0..out[0].len() {
        let (h, beta) = hazards_of(&cols, i, 0.5);
        let m = beta.exp();
        // The median: S(median) = ½.
        let med = out[0][i];
        assert!(med.is_finite() && med > 0.0);
        assert!(
            (surv_direct(&h, m, med) - 0.5).abs() < 1e-12,
            "draw {i}: median {med}"
        );
        // RMST: composite Simpson on 4,000 panels per interval of the direct S
        // (S is smooth inside each interval; error far below the tolerance).
        for (o, tau, mm) in [(&out[1], 20.0, m), (&out[2], 60.0, 1.0)] {
            let mut edges: Vec<f64> = CUTS.iter().copied().filter(|c| *c < tau).collect();
            edges.push(tau);
            let mut area = 0.0;
            for w in edges.windows(2) {
                let (a, b) = (w[0], w[1]);
                let panels = 4000;
                let dx = (b - a) / panels as f64;
                let f = |x: f64| surv_direct(&h, mm, x);
                let mut s = f(a) + f(b);
                for p in 1..panels {
                    s += f(a + p as f64 * dx) * if p % 2 == 1 { 4.0 } else { 2.0 };
                }
                area += s * dx / 3.0;
            }
            assert!(
                (o[i] - area).abs() < 1e-9 * area,
                "draw {i}: rmst({tau}) {} vs Simpson {area}",
                o[i]
            );
        }
    }
}

#[test]
fn walk_increments_have_the_fitted_sd() {
    // ε_j = τ·z_j, τ ~ half-normal(s): Var ε = E[τ²]·E[z²] = s² (half-normal
    // second moment s², common practice), Var(ε²) = E[τ⁴]·E[z⁴] − s⁴ = 3s⁴·3 − s⁴
    // = 8s⁴, so the sample variance has SE s²·√(8/n). Two steps apart the log
    // hazards differ by ε_j + ε_{j+1}: variance 2s². The hazards are read back
    // from the model's own survival at the cut points,
    // h_j = ln(S(c_j)/S(c_{j+1}))/(c_{j+1} − c_j).
    let s = 0.35;
    let n = 20000;
    let mut beliefs = String::new();
    for c in &CUTS[1..] {
        beliefs.push_str(&belief(
            "survival_prob",
            &format!("horizon = {c}\nprofile = \"control\""),
            [0.2, 0.5, 0.8],
        ));
    }
    let (_, out, _) = draws(&spec_text(s, n, &beliefs));
    // out[j] is S(c_{j+1}); S(c_1 = 0) = 1.
    let lh = |i: usize, j: usize| -> f64 {
        let (a, b) = (if j == 0 { 1.0 } else { out[j - 1][i] }, out[j][i]);
        let width = CUTS[j + 1] - CUTS[j];
        ((a / b).ln() / width).ln()
    };
    let var = |d: &dyn Fn(usize) -> f64| -> f64 {
        let xs: Vec<f64> = (0..n).map(d).collect();
        xs.iter().map(|x| x * x).sum::<f64>() / n as f64 // mean zero by construction
    };
    let se = s * s * (8.0 / n as f64).sqrt();
    for j in 0..3 {
        let v = var(&|i| lh(i, j + 1) - lh(i, j));
        assert!(
            (v - s * s).abs() < 4.0 * se,
            "step {j}: var {v} vs {}",
            s * s
        );
    }
    // Two steps: ε_1 + ε_2 = τ(z_1 + z_2), Var = 2s², Var of its square
    // E[τ⁴]E[(z₁+z₂)⁴] − 4s⁴ = 3s⁴·12 − 4s⁴ = 32s⁴.
    let v2 = var(&|i| lh(i, 2) - lh(i, 0));
    let se2 = s * s * (32.0 / n as f64).sqrt();
    assert!((v2 - 2.0 * s * s).abs() < 4.0 * se2, "two steps: {v2}");
}

#[test]
fn hazard_ratio_is_exp_beta_at_every_t() {
    let mut beliefs = belief(
        "hazard_ratio",
        "profiles = [\"treated\", \"control\"]",
        [0.5, 0.7, 0.9],
    );
    for t in [0.5, 5.0, 12.0, 100.0] {
        beliefs.push_str(&belief(
            "hazard_ratio",
            &format!("horizon = {t}\nprofiles = [\"treated\", \"control\"]"),
            [0.5, 0.7, 0.9],
        ));
    }
    beliefs.push_str(&belief(
        "survival_difference",
        "horizon = 10\nprofiles = [\"treated\", \"control\"]",
        [0.0, 0.05, 0.1],
    ));
    beliefs.push_str(&belief(
        "median_ratio",
        "profiles = [\"treated\", \"control\"]",
        [1.1, 1.5, 2.0],
    ));
    let (_, out, cols) = draws(&spec_text(0.3, 3000, &beliefs));
    for i in 0..out[0].len() {
        let (h, beta) = hazards_of(&cols, i, 0.3);
        for o in &out[..5] {
            assert!(
                (o[i] / beta.exp() - 1.0).abs() < 1e-12,
                "draw {i}: {} vs exp(β) = {}",
                o[i],
                beta.exp()
            );
        }
        let sd = surv_direct(&h, beta.exp(), 10.0) - surv_direct(&h, 1.0, 10.0);
        assert!((out[5][i] - sd).abs() < 1e-12);
        // A hazard ratio below 1 lengthens the median, above 1 shortens it.
        assert_eq!(
            out[6][i] > 1.0,
            beta < 0.0,
            "draw {i}: {} at β = {beta}",
            out[6][i]
        );
    }
}

#[test]
fn bad_cuts_are_refused_with_the_key_and_value() {
    let base = spec_text(
        0.3,
        1000,
        &belief(
            "survival_prob",
            "horizon = 12\nprofile = \"control\"",
            [0.2, 0.5, 0.8],
        ),
    );
    for (cuts, needle) in [
        ("[0, 12, 6]", "cuts[3] = 6 is below cuts[2] = 12"),
        ("[0, -3, 6]", "cuts[2] = -3 is negative"),
        ("[0, 6, 6, 12]", "cuts[3] = 6 repeats cuts[2]"),
        ("[]", "empty"),
        ("[0, 6, inf]", "cuts[3] = inf is not finite"),
        ("[0, 6, nan]", "cuts[3] = nan is not finite"),
        ("[3, 6]", "must start at 0"),
        ("[0]", "one interval"),
        ("[0, \"6\"]", "expected a number"),
        ("6", "expected a list"),
    ] {
        let text = base.replace("cuts = [0, 3, 7.5, 12, 30]", &format!("cuts = {cuts}"));
        let e = parse(&text, None, &Overrides::default())
            .err()
            .unwrap()
            .to_string();
        assert!(e.contains(needle), "{cuts}: {e}");
        assert!(e.contains("cuts"), "{cuts}: {e}");
    }
    let many: Vec<String> = (0..=MAX_CUTS).map(|k| k.to_string()).collect();
    let text = base.replace(
        "cuts = [0, 3, 7.5, 12, 30]",
        &format!("cuts = [{}]", many.join(", ")),
    );
    let e = parse(&text, None, &Overrides::default())
        .err()
        .unwrap()
        .to_string();
    assert!(e.contains("at most 50"), "{e}");
    let text = base.replace("cuts = [0, 3, 7.5, 12, 30]\n", "");
    let e = parse(&text, None, &Overrides::default())
        .err()
        .unwrap()
        .to_string();
    assert!(e.contains("needs [model] cuts"), "{e}");
}

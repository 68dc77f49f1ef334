//! Tests of the multilevel quantities and of covariate-specific priors against
//! closed forms, an independent simulation and explicit recomputation.

use super::tests::{cvm_vs, draws, h0, spec, CVM_999_OVER_MEAN};
use super::*;
use crate::dist::Continuous;
use crate::numerics::{norm_cdf, norm_quantile};
use std::sync::Arc;

/// The CDF of the ICC c = σ_u²/(σ_u² + 1) when σ_u ~ half-normal(s) and σ = 1:
/// P(ICC ≤ c) = P(σ_u ≤ √(c/(1 − c))) = 2Φ(√(c/(1 − c))/s) − 1.
#[derive(Debug)]
struct IccCdf {
    s: f64,
}

impl Continuous for IccCdf {
    fn family(&self) -> &'static str {
        "icc-of-half-normal"
    }
    fn cdf(&self, c: f64) -> f64 {
        if c <= 0.0 {
            0.0
        } else if c >= 1.0 {
            1.0
        } else {
            2.0 * norm_cdf((c / (1.0 - c)).sqrt() / self.s) - 1.0
        }
    }
    fn pdf(&self, _c: f64) -> f64 {
        f64::NAN
    }
    fn quantile(&self, p: f64) -> f64 {
        let t = self.s * norm_quantile(0.5 * (1.0 + p));
        t * t / (1.0 + t * t)
    }
    fn support(&self) -> (f64, f64) {
        (0.0, 1.0)
    }
    fn mean(&self) -> Option<f64> {
        None
    }
    fn variance(&self) -> Option<f64> {
        None
    }
    fn params(&self) -> Vec<(&'static str, f64)> {
        vec![("s", self.s)]
    }
}

fn multilevel(template: &str, extra: &str, beliefs: &str) -> String {
    format!(
        r#"
[model]
template = "{template}"
[design]
columns = 6
rows = 120
clusters = 12
seed = 4
standardise = true
[simulation]
seed = 9
{extra}
[prior.intercept]
family = "normal"
mean = -2.2
sd = 1e-9
[prior.cluster_sd]
family = "half-normal"
scale = 0.7
[prior.coefficients]
family = "normal"
scale = 0.3
{beliefs}
"#
    )
}

#[test]
fn icc_of_a_half_normal_cluster_sd_has_its_closed_form() {
    // σ = 1 as a log-normal(0, 1e-9): ICC perturbations of order 1e-9, far
    // below the CvM resolution at 20,000 draws.
    let s = spec(&multilevel(
        "linear-multilevel",
        "[prior.sigma]\nfamily = \"lognormal\"\nmeanlog = 0.0\nsdlog = 1e-9",
        "[[belief]]\nquantity = \"icc\"\nquantiles = { \"0.25\" = 0.05, \"0.5\" = 0.2, \"0.75\" = 0.4 }",
    ));
    let x = draws(&s, &h0(&s), 20_000).remove(0);
    let (d, floor) = cvm_vs(Arc::new(IccCdf { s: 0.7 }), x);
    assert!(d < CVM_999_OVER_MEAN * floor, "CvM {d} vs floor {floor}");
}

#[test]
fn median_odds_ratio_is_larsen_merlo_per_draw_and_the_median_of_pair_ratios() {
    let s = spec(&multilevel(
        "logistic-multilevel",
        "",
        "[[belief]]\nquantity = \"median_odds_ratio\"\nquantiles = { \"0.25\" = 1.2, \"0.5\" = 1.5, \"0.75\" = 2.0 }",
    ));
    let n = 4000;
    let h = h0(&s);
    let x = draws(&s, &h, n).remove(0);
    // σ_u per draw from the cluster_sd base column (prior 1: intercept is 0).
    let base = s
        .model
        .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
    let hn = crate::dist::build("half-normal", &[0.7]).unwrap().unwrap();
    let mut su = vec![0.0; n];
    hn.fill_from_base(&base.cols[1], &mut su);
    for i in 0..n {
        // Larsen & Merlo (2005, Am. J. Epidemiol. 161, eq. 2).
        let want = (std::f64::consts::SQRT_2 * su[i] * 0.674_489_750_196_081_7).exp();
        assert!(
            (x[i] / want - 1.0).abs() < 1e-12,
            "draw {i}: {} vs {want}",
            x[i]
        );
    }
    // The formula is the median of exp(|u_i − u_j|) over pairs of clusters: our
    // own independent simulation of 200,000 pairs at σ_u = 0.8; the share of pairs
    // at or below the formula's value is ½ within 4 binomial SE.
    let sigma = 0.8;
    let mor = multilevel::median_ratio(sigma);
    let pairs = 200_000;
    let mut r = rng::stream(77, 0);
    let below = (0..pairs)
        .filter(|_| {
            let ui = sigma * norm_quantile(rng::open01(&mut r));
            let uj = sigma * norm_quantile(rng::open01(&mut r));
            (ui - uj).abs().exp() <= mor
        })
        .count() as f64
        / pairs as f64;
    let se = (0.25 / pairs as f64).sqrt();
    assert!((below - 0.5).abs() < 4.0 * se, "share {below}");
}

#[test]
fn cluster_risk_spread_matches_an_independent_numpy_simulation() {
    // α = −2.2 (sd 1e-9) and σ_u = 0.6 (log-normal with sdlog 1e-9): the 5–95 %
    // range of expit(α + u), u ~ N(0, 0.6²), over 10⁷ simulated clusters with
    // numpy 2.4.6 (default_rng(2026).normal; np.quantile) is 0.18957662, Monte
    // Carlo SE 7.1e-5 (200 bootstrap subsamples of 10⁶, scaled by 1/√10);
    // scipy 1.17.1's expit(α + 0.6·norm.ppf(0.95)) − expit(α + 0.6·norm.ppf(0.05))
    // gives 0.18949393 (scripts/cluster-spread-numpy.py). Tolerance: 4 SE.
    let text = multilevel(
        "logistic-multilevel",
        "",
        "[[belief]]\nquantity = \"cluster_spread\"\nquantiles = { \"0.25\" = 0.1, \"0.5\" = 0.15, \"0.75\" = 0.2 }",
    )
    .replace(
        "family = \"half-normal\"\nscale = 0.7",
        "family = \"lognormal\"\nmeanlog = -0.5108256237659907\nsdlog = 1e-9",
    );
    let s = spec(&text);
    let x = draws(&s, &h0(&s), 200).remove(0);
    for v in x {
        assert!((v - NUMPY_SPREAD).abs() < 4.0 * NUMPY_SE, "{v}");
    }
}

/// The logistic regression of `text` as its concrete type, prepared for the
/// requests of `s` (the same text, validated).
fn concrete(text: &str, s: &crate::spec::Spec) -> Regression {
    let mut m = super::tests::concrete_as(
        text,
        &crate::templates::logistic::INFO,
        Link::Logit,
        crate::templates::logistic::QUANTITIES_FOR_TESTS,
    );
    let reqs: Vec<&Request> = s.beliefs.iter().map(|b| &b.request).collect();
    m.prepare(&reqs).unwrap();
    m
}

const NUMPY_SPREAD: f64 = 0.189_576_62;
const NUMPY_SE: f64 = 7.1e-5;

const OWN: &str = r#"
[model]
template = "logistic"
[design]
columns = 8
rows = 60
correlation = "exchangeable"
rho = 0.4
seed = 2
standardise = true
[simulation]
seed = 3
[prior.intercept]
family = "normal"
mean = -1.0
sd = 0.5
[prior.x3]
family = "normal"
mean = 0.22
sd = 0.15
[prior.pair]
covariates = ["x5", "x6"]
family = "student-t"
df = 5
location = 0.0
scale = 0.4
[prior.coefficients]
family = "horseshoe"
global_scale = 0.2
[[belief]]
quantity = "odds_ratio"
contrast = "x3:2"
quantiles = { "0.25" = 1.3, "0.5" = 1.55, "0.75" = 1.8 }
[[belief]]
quantity = "signal_sd"
quantiles = { "0.25" = 0.3, "0.5" = 0.6, "0.75" = 1.0 }
[[belief]]
quantity = "prevalence"
quantiles = { "0.25" = 0.2, "0.5" = 0.27, "0.75" = 0.35 }
"#;

#[test]
fn covariate_specific_priors_enter_every_quantity() {
    let s = spec(OWN);
    let n = 2000;
    let h = h0(&s);
    let out = draws(&s, &h, n);
    let base = s
        .model
        .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
    // Prior order: intercept 0, pair (x5) 1, pair (x6) 2, x3 3 — tables in name
    // order, a list's covariates as listed. The odds ratio for 2 raw units of x3
    // is exp(2·b_x3), b_x3 ~ N(0.22, 0.15²) from its own base column.
    let stmts = s.model.priors(&h);
    let names: Vec<&str> = stmts.iter().map(|p| p.parameter.as_str()).collect();
    assert_eq!(
        names,
        ["intercept", "b_x5", "b_x6", "b_x3", "coefficients"],
        "{names:?}"
    );
    for i in (0..n).step_by(37) {
        let b = 0.22 + 0.15 * base.cols[3][i];
        assert!(
            (out[0][i] / (2.0 * b).exp() - 1.0).abs() < 1e-12,
            "draw {i}"
        );
    }
    // b_x5 and b_x6 share the hyperparameters of [prior.pair] (one set of
    // hyperparameters: pair.df, pair.location, pair.scale) but are drawn
    // independently.
    assert_ne!(base.cols[1][0], base.cols[2][0]);
    let hyper: Vec<&str> = s.hypers().iter().map(|h| h.name.as_str()).collect();
    assert_eq!(
        hyper.iter().filter(|n| n.starts_with("pair.")).count(),
        3,
        "{hyper:?}"
    );
}

#[test]
fn design_variance_with_own_priors_equals_the_explicit_linear_predictor() {
    // signal_sd² = q_s g² + 2g Σ b_k c_k + Σ b_k b_l S_kl (own.rs) must equal
    // the variance over the design rows of the explicit X_c β, which `prevalence`
    // forms row by row (shared rows plus own columns): recomputed here from the
    // evaluation's rows.
    let s = spec(OWN);
    let n = 600;
    let h = h0(&s);
    let reg = concrete(OWN, &s);
    let base = reg.draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
    let ev = reg.evaluation(&h, &base).unwrap();
    let nr = reg.design.rows() as f64;
    for i in (0..n).step_by(7) {
        let eta = ev.eta_rows(i);
        let m = eta.iter().sum::<f64>() / nr;
        let v = eta.iter().map(|e| (e - m).powi(2)).sum::<f64>() / nr;
        let q = ev.q_total_of(i);
        assert!((q - v).abs() <= 1e-9 * v.max(1e-12), "draw {i}: {q} vs {v}");
    }
}

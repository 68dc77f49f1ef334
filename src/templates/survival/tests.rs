//! Tests of the survival templates: the promotion-time identities draw by
//! draw, hazard ratios under proportional hazards, RMST against scipy quadrature.

use super::*;
use crate::spec::{parse, Overrides, Spec};

/// The quantity draws of every belief of `text` at the hyperparameters' default
/// values, and the base columns (one per prior, in prior order).
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
    let cols = base.cols.clone();
    (spec, out, cols)
}

const PROMOTION: &str = r#"
title = "test"
[model]
template = "promotion-time-cure"
covariates = ["arm"]
[simulation]
draws = 4000
seed = 3
[profile.control]
arm = 0
[profile.treated]
arm = 1
[prior.log_theta]
family = "normal"
mean = { fit = [-1.0, 1.0] }
sd = 0.5
[prior.log_scale]
family = "normal"
mean = 2.5
sd = 0.3
[prior.shape]
family = "lognormal"
meanlog = 0.2
sdlog = 0.2
[prior.theta_effect_arm]
family = "normal"
mean = -0.4
sd = 0.2
[[belief]]
quantity = "cure_fraction"
profile = "control"
quantiles = { "0.1" = 0.2, "0.5" = 0.35, "0.9" = 0.55 }
[[belief]]
quantity = "survival_prob"
horizon = 24
profile = "control"
quantiles = { "0.1" = 0.3, "0.5" = 0.45, "0.9" = 0.6 }
[[belief]]
quantity = "hazard_ratio"
profiles = ["treated", "control"]
quantiles = { "0.1" = 0.5, "0.5" = 0.7, "0.9" = 0.9 }
[[belief]]
quantity = "hazard_ratio"
horizon = 3
profiles = ["treated", "control"]
quantiles = { "0.1" = 0.5, "0.5" = 0.7, "0.9" = 0.9 }
[[belief]]
quantity = "hazard_ratio"
horizon = 120
profiles = ["treated", "control"]
quantiles = { "0.1" = 0.5, "0.5" = 0.7, "0.9" = 0.9 }
"#;

#[test]
fn promotion_time_cure_fraction_and_survival_draw_by_draw() {
    // Chen, Ibrahim & Sinha (1999, JASA 94), §2: S(t) = exp(−θF(t)),
    // cure fraction exp(−θ); θ and F recomputed here from the base columns.
    let (_, out, cols) = draws(PROMOTION);
    for i in 0..out[0].len() {
        let theta = (0.0 + 0.5 * cols[0][i]).exp(); // log_theta mean at its bounds' centre
        let lam = (2.5 + 0.3 * cols[1][i]).exp();
        let k = (0.2 + 0.2 * cols[2][i]).exp();
        let cure = (-theta).exp();
        assert!((out[0][i] - cure).abs() < 1e-13, "{i}");
        let f = 1.0 - (-(24.0 / lam).powf(k)).exp();
        let s = (-theta * f).exp();
        assert!((out[1][i] - s).abs() < 1e-12, "{i}: {} vs {s}", out[1][i]);
    }
}

#[test]
fn promotion_time_hazard_ratio_is_theta_ratio_at_every_t() {
    // A covariate on θ only: the population hazard θ·f(t) is multiplied by
    // θ₁/θ₀ = exp(β) at every t (Chen, Ibrahim & Sinha 1999, §2).
    let (spec, out, cols) = draws(PROMOTION);
    assert_eq!(spec.beliefs[2].request.horizon, None);
    for i in 0..out[2].len() {
        let ratio = (-0.4 + 0.2 * cols[3][i]).exp();
        for r in [2, 3, 4] {
            assert!(
                (out[r][i] - ratio).abs() < 1e-9 * ratio,
                "draw {i}, belief {r}: {} vs {ratio}",
                out[r][i]
            );
        }
    }
}

fn parametric(latency: &str, effect: &str, extra: &str) -> String {
    format!(
        r#"
title = "test"
[model]
template = "parametric-survival"
latency = "{latency}"
covariates = ["arm"]
[simulation]
draws = 4000
seed = 5
[profile.control]
arm = 0
[profile.treated]
arm = 1
[prior.log_scale]
family = "normal"
mean = {{ fit = [1.0, 4.0] }}
sd = 0.3
[prior.shape]
family = "lognormal"
meanlog = 0.1
sdlog = 0.2
[prior.{effect}_arm]
family = "normal"
mean = -0.3
sd = 0.25
[[belief]]
quantity = "median_survival"
profile = "control"
quantiles = {{ "0.1" = 8, "0.5" = 12, "0.9" = 20 }}
{extra}
"#
    )
}

fn hr(h: Option<f64>) -> String {
    let horizon = h.map_or(String::new(), |h| format!("horizon = {h}\n"));
    format!(
        "[[belief]]\nquantity = \"hazard_ratio\"\n{horizon}profiles = [\"treated\", \"control\"]\n\
         quantiles = {{ \"0.1\" = 0.5, \"0.5\" = 0.7, \"0.9\" = 0.9 }}\n"
    )
}

#[test]
fn ph_weibull_hazard_ratio_is_exp_beta_and_constant_in_t() {
    // S(t|x) = exp(−(t/λ)^k·e^{βx}) (Collett, Modelling Survival Data, §5.6):
    // the hazard ratio is e^β at every t.
    let extra = [hr(None), hr(Some(0.5)), hr(Some(12.0)), hr(Some(200.0))].concat();
    let (_, out, cols) = draws(&parametric("weibull", "hazard_effect", &extra));
    for i in 0..out[0].len() {
        let want = (-0.3 + 0.25 * cols[2][i]).exp();
        for (r, o) in out.iter().enumerate().skip(1) {
            assert!((o[i] - want).abs() < 1e-9 * want, "{i} {r}");
        }
    }
    // The same effect on the time scale: AFT β is the PH effect −kβ.
    let (_, out, cols) = draws(&parametric("weibull", "latency_effect", &hr(None)));
    for i in 0..out[0].len() {
        let k = (0.1 + 0.2 * cols[1][i]).exp();
        let want = (-k * (-0.3 + 0.25 * cols[2][i])).exp();
        assert!((out[1][i] - want).abs() < 1e-9 * want, "{i}");
    }
}

#[test]
fn hazard_ratio_needs_a_horizon_when_it_changes_with_time() {
    let e = parse(
        &parametric("lognormal", "latency_effect", &hr(None)),
        None,
        &Overrides::default(),
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("hazard_ratio needs `horizon`"), "{e}");
    let e = parse(
        &parametric("lognormal", "hazard_effect", ""),
        None,
        &Overrides::default(),
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("proportional-hazards latency"), "{e}");
    // A log-normal AFT effect: the ratio of cumulative hazards differs with t.
    let extra = [hr(Some(1.0)), hr(Some(100.0))].concat();
    let (_, out, _) = draws(&parametric("lognormal", "latency_effect", &extra));
    let differ = out[1]
        .iter()
        .zip(&out[2])
        .filter(|(a, b)| (*a - *b).abs() > 1e-3)
        .count();
    assert!(differ > out[1].len() / 2, "{differ}");
}

#[test]
fn mixture_cure_latency_and_population_hazard_ratios() {
    // PH Weibull latency: among the uncured the ratio is e^β at every t; the
    // population ratio of cumulative hazards, −ln S_a/−ln S_b with
    // S = π + (1 − π)S_u, depends on t (recomputed here).
    let text = r#"
title = "test"
[model]
template = "mixture-cure"
covariates = ["arm"]
[simulation]
draws = 2000
seed = 9
[profile.control]
arm = 0
[profile.treated]
arm = 1
[prior.cure_logit]
family = "normal"
mean = { fit = [-2.0, 0.0] }
sd = 0.4
[prior.log_scale]
family = "normal"
mean = 2.5
sd = 0.3
[prior.shape]
family = "lognormal"
meanlog = 0.1
sdlog = 0.2
[prior.cure_effect_arm]
family = "normal"
mean = 0.3
sd = 0.2
[prior.hazard_effect_arm]
family = "normal"
mean = -0.3
sd = 0.2
[[belief]]
quantity = "latency_hazard_ratio"
profiles = ["treated", "control"]
quantiles = { "0.1" = 0.5, "0.5" = 0.7, "0.9" = 0.9 }
[[belief]]
quantity = "latency_hazard_ratio"
horizon = 60
profiles = ["treated", "control"]
quantiles = { "0.1" = 0.5, "0.5" = 0.7, "0.9" = 0.9 }
[[belief]]
quantity = "hazard_ratio"
horizon = 36
profiles = ["treated", "control"]
quantiles = { "0.1" = 0.5, "0.5" = 0.7, "0.9" = 0.9 }
"#;
    let (_, out, cols) = draws(text);
    for i in 0..out[0].len() {
        let b = -0.3 + 0.2 * cols[4][i];
        assert!((out[0][i] - b.exp()).abs() < 1e-9 * b.exp(), "{i}");
        assert!((out[1][i] - b.exp()).abs() < 1e-9 * b.exp(), "{i}");
        let logistic = |x: f64| 1.0 / (1.0 + (-x).exp());
        let eta = -1.0 + 0.4 * cols[0][i];
        let (pa, pb) = (logistic(eta + 0.3 + 0.2 * cols[3][i]), logistic(eta));
        let lam = (2.5 + 0.3 * cols[1][i]).exp();
        let k = (0.1 + 0.2 * cols[2][i]).exp();
        let hb = (36.0 / lam).powf(k);
        let sa = pa + (1.0 - pa) * (-hb * b.exp()).exp();
        let sb = pb + (1.0 - pb) * (-hb).exp();
        let want = sa.ln() / sb.ln();
        assert!(
            (out[2][i] - want).abs() < 1e-9 * want,
            "{i}: {} {want}",
            out[2][i]
        );
    }
}

/// A model with no priors, for values at fixed parameters.
fn fixed(cure_kind: Cure, latency: Latency) -> Survival {
    Survival {
        info: &parametric::INFO,
        table: &[],
        cure_kind,
        latency,
        time_unit: "months".into(),
        covariates: Vec::new(),
        priors: PriorSet::default(),
        cure: None,
        cure_on_fraction: false,
        log_scale: 0,
        shape: None,
        cure_effects: Vec::new(),
        latency_effects: Vec::new(),
        gl: crate::numerics::gauss_legendre(32),
    }
}

#[test]
fn rmst_differences_against_scipy_quadrature() {
    // Reference: scipy 1.17.1, integrate.quad(S, 0, h, epsabs=epsrel=1e-13)
    // with S written out in numpy/scipy.stats (norm.sf, norm.cdf).
    // (model, latency, (c_a, λ_a), (c_b, λ_b), k, h, RMST_a − RMST_b, tolerance)
    let cases = [
        // promotion time, Weibull F: θ = 1.2 vs 0.8.
        (
            Cure::PromotionTime,
            Latency::Weibull,
            (1.2, 12.0),
            (0.8, 12.0),
            1.3,
            36.0,
            -4.515931556810187,
            1e-4,
        ),
        // promotion time, log-normal F (sdlog 1/1.5): θ = 1.5 vs 0.9.
        (
            Cure::PromotionTime,
            Latency::LogNormal,
            (1.5, 9.0),
            (0.9, 9.0),
            1.5,
            30.0,
            -4.531747739349088,
            1e-4,
        ),
        // mixture cure, log-normal latency: π = 0.3, λ = 15 vs π = 0.2, λ = 10.
        (
            Cure::Mixture,
            Latency::LogNormal,
            (0.3, 15.0),
            (0.2, 10.0),
            1.5,
            24.0,
            3.97673131640072,
            1e-4,
        ),
        // mixture cure, Weibull latency (closed form): π = 0.25, λ = 18 vs 0.15, 12.
        (
            Cure::Mixture,
            Latency::Weibull,
            (0.25, 18.0),
            (0.15, 12.0),
            0.9,
            48.0,
            7.155436005067287,
            1e-9,
        ),
        // parametric log-logistic: λ = 20 vs 14.
        (
            Cure::None,
            Latency::LogLogistic,
            (0.0, 20.0),
            (0.0, 14.0),
            2.0,
            36.0,
            4.475285916299914,
            1e-6,
        ),
    ];
    for (kind, lat, (ca, la), (cb, lb), k, h, want, tol) in cases {
        let m = fixed(kind, lat);
        let r = |c: f64, l: f64| m.value(SurvQuantity::Rmst, c, f64::ln(l), k, h, h.ln());
        let d = r(ca, la) - r(cb, lb);
        assert!((d - want).abs() < tol, "{kind:?} {lat:?}: {d} vs {want}");
    }
    // The RMST ratio of the log-logistic case: 1.2664071485800703 (same source).
    let m = fixed(Cure::None, Latency::LogLogistic);
    let r = |l: f64| m.value(SurvQuantity::Rmst, 0.0, f64::ln(l), 2.0, 36.0, 36f64.ln());
    assert!((r(20.0) / r(14.0) - 1.2664071485800703).abs() < 1e-6);
}

#[test]
fn promotion_time_medians() {
    // exp(−θF(t)) = ½ at F = ln 2/θ; the uncured's median at
    // F = −ln((1 + e^{−θ})/2)/θ (recomputed: the survival there is checked).
    let m = fixed(Cure::PromotionTime, Latency::Weibull);
    let (ls, k) = (f64::ln(12.0), 1.3);
    for theta in [0.5, 0.7, 1.0, 3.0] {
        let med = m.value(SurvQuantity::MedianSurvival, theta, ls, k, 1.0, 0.0);
        if theta <= std::f64::consts::LN_2 {
            assert!(med.is_infinite());
        } else {
            let s = m.surv_pop(theta, ls, k, med.ln());
            assert!((s - 0.5).abs() < 1e-12, "{theta}: {s}");
        }
        let mu = m.value(SurvQuantity::MedianUncured, theta, ls, k, 1.0, 0.0);
        let s = m.surv_pop(theta, ls, k, mu.ln());
        let cure = (-theta).exp();
        assert!(((s - cure) / (1.0 - cure) - 0.5).abs() < 1e-12, "{theta}");
    }
}

/// A cure template with `[prior.cure_fraction]` of `family` (fixed
/// parameters `params`), a cure effect of arm and beliefs on the cured fraction
/// at both profiles and on survival at 24 months in the control arm.
fn on_fraction(template: &str, effect: &str, family: &str, params: &str) -> String {
    format!(
        r#"
title = "test"
[model]
template = "{template}"
covariates = ["arm"]
[simulation]
draws = 4000
seed = 9
[profile.control]
arm = 0
[profile.treated]
arm = 1
[prior.cure_fraction]
family = "{family}"
{params}
[prior.log_scale]
family = "normal"
mean = 2.5
sd = 0.3
[prior.shape]
family = "lognormal"
meanlog = 0.2
sdlog = 0.2
[prior.{effect}_arm]
family = "normal"
mean = 0.4
sd = 0.3
[[belief]]
quantity = "cure_fraction"
profile = "control"
quantiles = {{ "0.1" = 0.2, "0.5" = 0.35, "0.9" = 0.55 }}
[[belief]]
quantity = "cure_fraction"
profile = "treated"
quantiles = {{ "0.1" = 0.2, "0.5" = 0.35, "0.9" = 0.55 }}
[[belief]]
quantity = "survival_prob"
horizon = 24
profile = "control"
quantiles = {{ "0.1" = 0.3, "0.5" = 0.45, "0.9" = 0.6 }}
"#
    )
}

#[test]
fn cure_fraction_prior_draw_is_the_models_cured_fraction() {
    // At the reference profile the model's cured fraction is the prior's draw
    // (mixture: exactly; promotion time: exp(−(−ln π)), one rounding); at the
    // treated profile the cure effect β acts on the logit (odds π/(1 − π)
    // multiplied by e^β; Farewell 1982) or on ln θ (cured fraction
    // exp(−θe^β) = π^(e^β); Chen, Ibrahim & Sinha 1999, §2), recomputed here
    // from the base columns; survival at 24 months from the model formulas.
    for (family, params) in [
        ("beta", "alpha = 4.0\nbeta = 9.0"),
        ("logit-normal", "mu = -0.8\nsigma = 0.6"),
    ] {
        for (template, effect) in [
            ("mixture-cure", "cure_effect"),
            ("promotion-time-cure", "theta_effect"),
        ] {
            let (_, out, cols) = draws(&on_fraction(template, effect, family, params));
            let prior = crate::dist::build(
                family,
                &params
                    .lines()
                    .map(|l| l.split('=').nth(1).unwrap().trim().parse().unwrap())
                    .collect::<Vec<f64>>(),
            )
            .unwrap()
            .unwrap();
            let promo = template == "promotion-time-cure";
            // The prior's draws as a column is drawn (a beta through its
            // checked quantile table).
            let mut pis = vec![0.0; out[0].len()];
            prior.fill_from_base(&cols[0], &mut pis);
            for (i, &pi) in pis.iter().enumerate() {
                assert!(pi > 0.0 && pi < 1.0);
                if promo {
                    assert!((out[0][i] - pi).abs() < 1e-12 * pi.max(1e-3), "{i}");
                } else {
                    assert_eq!(out[0][i], pi, "{template} {family} draw {i}");
                }
                let b = 0.4 + 0.3 * cols[3][i];
                let treated = out[1][i];
                if promo {
                    let want = pi.powf(b.exp());
                    assert!((treated - want).abs() < 1e-12, "{i}: {treated} vs {want}");
                } else {
                    let odds = treated / (1.0 - treated);
                    let want = pi / (1.0 - pi) * b.exp();
                    assert!((odds / want - 1.0).abs() < 1e-12, "{i}: {odds} vs {want}");
                }
                let lam = (2.5 + 0.3 * cols[1][i]).exp();
                let k = (0.2 + 0.2 * cols[2][i]).exp();
                let su = (-(24.0 / lam).powf(k)).exp();
                let s = if promo {
                    pi.powf(1.0 - su) // exp(−θF) with θ = −ln π
                } else {
                    pi + (1.0 - pi) * su
                };
                assert!((out[2][i] - s).abs() < 1e-12, "{i}: {} vs {s}", out[2][i]);
            }
        }
    }
}

#[test]
fn logit_round_trip_of_a_drawn_cure_fraction() {
    // The mixture cure at a profile its cure effect moves goes through
    // logit π: logistic(logit(π)) returns π to 1e-12 over the draws of a
    // beta(4, 9) and of beta(0.5, 0.5) (mass near 0 and 1).
    use crate::numerics::{logistic, logit};
    for (a, b) in [(4.0, 9.0), (0.5, 0.5)] {
        let d = crate::dist::build("beta", &[a, b]).unwrap().unwrap();
        let u = crate::rng::Plan::fit(7, crate::rng::Points::Independent).uniforms(0, 4000);
        for x in u {
            let pi = d.from_base(x);
            assert!((logistic(logit(pi)) - pi).abs() < 1e-12, "{pi}");
        }
    }
}

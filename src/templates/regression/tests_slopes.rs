//! Tests of the random slopes of the multilevel templates ([`super::multilevel`])
//! against closed forms computed here independently from the design file's raw
//! values: Johnson (2014, Methods Ecol. Evol. 5, 944–946) for the mean
//! random-effect variance in r2_fixed / r2_conditional, the 5–95 % ranges over
//! clusters per draw, and the base streams of the templates without slopes.

#![allow(clippy::needless_range_loop)] // draws are compared index by index with the base columns

use super::tests::{draws, h0, spec};
use super::*;
use crate::numerics::logistic;

/// Φ⁻¹(0.95) = 1.6448536269514722 (scipy 1.17.1 `norm.ppf(0.95)`; Abramowitz & Stegun 1964, Table 26.5).
const Z95: f64 = 1.644_853_626_951_472_7;

/// An invented design of 60 rows in 6 centres: age (years), dose (mg) and the
/// centre label. Returns the CSV text and the raw columns.
fn design_csv() -> (String, Vec<f64>, Vec<f64>) {
    let mut csv = String::from("age,dose,centre\n");
    let (mut age, mut dose) = (Vec::new(), Vec::new());
    for r in 0..60 {
        let a = 40.0 + ((r * 7) % 30) as f64 + 0.5 * (r % 3) as f64;
        let d = ((r * 13) % 11) as f64 * 2.5;
        csv.push_str(&format!("{a},{d},c{}\n", r % 6));
        age.push(a);
        dose.push(d);
    }
    (csv, age, dose)
}

/// The 1/n mean square of x about its mean (computed here, not by the design).
fn msq(x: &[f64]) -> f64 {
    let m = x.iter().sum::<f64>() / x.len() as f64;
    x.iter().map(|v| (v - m).powi(2)).sum::<f64>() / x.len() as f64
}

fn mean(x: &[f64]) -> f64 {
    x.iter().sum::<f64>() / x.len() as f64
}

/// A near-point prior at `v` on (0, ∞): log-normal with sdlog 1e-9, so the
/// closed forms below hold to ~1e-8 relative.
fn point(v: f64) -> String {
    format!("family = \"lognormal\"\nmeanlog = {}\nsdlog = 1e-9", v.ln())
}

fn slopes_spec(template: &str, file: &std::path::Path, extra: &str, beliefs: &str) -> String {
    format!(
        r#"
[model]
template = "{template}"
[design]
file = "{}"
group = "centre"
standardise = true
[simulation]
seed = 11
{extra}
[prior.intercept]
family = "normal"
mean = -0.8
sd = 0.4
[prior.cluster_sd]
{}
[prior.cluster_slope_sd.age]
{}
[prior.cluster_slope_sd.dose]
{}
[prior.coefficients]
family = "normal"
scale = 0.4
{beliefs}
"#,
        file.display(),
        point(0.5),
        point(0.03),
        point(0.08),
    )
}

#[test]
fn r2_fixed_and_conditional_use_johnsons_mean_random_variance() {
    let dir = tempfile::tempdir().unwrap();
    let (csv, age, dose) = design_csv();
    let f = dir.path().join("x.csv");
    std::fs::write(&f, csv).unwrap();
    // Johnson (2014), eq. for the mean random-effect variance of a random-slope
    // model: the average over the design rows of σ_u² + Σ_k σ_{v,k}² x_ik² (x
    // centred at the design mean, so no covariance term with uncorrelated
    // effects), written here as that average over rows.
    let rows = age.len();
    let (ma, md) = (mean(&age), mean(&dose));
    let (su, sa, sd) = (0.5f64, 0.03f64, 0.08f64);
    let random = (0..rows)
        .map(|i| su * su + (sa * (age[i] - ma)).powi(2) + (sd * (dose[i] - md)).powi(2))
        .sum::<f64>()
        / rows as f64;
    assert!((random - (su * su + sa * sa * msq(&age) + sd * sd * msq(&dose))).abs() < 1e-12);
    let beliefs = "[[belief]]\nquantity = \"r2_fixed\"\nquantiles = { \"0.25\" = 0.1, \"0.5\" = 0.2, \"0.75\" = 0.3 }\n\
[[belief]]\nquantity = \"r2_conditional\"\nquantiles = { \"0.25\" = 0.2, \"0.5\" = 0.3, \"0.75\" = 0.4 }\n\
[[belief]]\nquantity = \"signal_sd\"\nquantiles = { \"0.25\" = 0.2, \"0.5\" = 0.3, \"0.75\" = 0.4 }\n\
[[belief]]\nquantity = \"icc\"\nquantiles = { \"0.25\" = 0.05, \"0.5\" = 0.1, \"0.75\" = 0.2 }";
    // σ_d²: σ² = 1.3² (linear), π²/3 (logistic, latent scale; Nakagawa &
    // Schielzeth 2013, Methods Ecol. Evol. 4, eq. 26–27).
    for (template, sigma, d) in [
        (
            "linear-multilevel",
            format!("[prior.sigma]\n{}", point(1.3)),
            1.69,
        ),
        (
            "logistic-multilevel",
            String::new(),
            std::f64::consts::PI.powi(2) / 3.0,
        ),
        // Poisson: ln(1 + 1/λ), λ = e^(α + σ_u²/2) at the reference profile
        // (Nakagawa, Johnson & Schielzeth 2017, J. R. Soc. Interface 14), per draw.
        ("poisson-multilevel", String::new(), f64::NAN),
    ] {
        let s = spec(&slopes_spec(template, &f, &sigma, beliefs));
        let x = draws(&s, &h0(&s), 500);
        let base = s
            .model
            .draw_base(500, &rng::Plan::fit(s.seed, rng::Points::Independent));
        for i in 0..500 {
            let alpha = -0.8 + 0.4 * base.cols[0][i];
            let d = if d.is_nan() {
                (1.0 + 1.0 / (alpha + 0.5 * su * su).exp()).ln()
            } else {
                d
            };
            // σ_f²: the design variance of the fixed part (signal_sd², checked
            // against the explicit linear predictor in tests_multilevel).
            let f2 = x[2][i] * x[2][i];
            let fixed = f2 / (f2 + random + d);
            let cond = (f2 + random) / (f2 + random + d);
            assert!(
                (x[0][i] - fixed).abs() < 1e-7,
                "{template} draw {i}: {} vs {fixed}",
                x[0][i]
            );
            assert!(
                (x[1][i] - cond).abs() < 1e-7,
                "{template} draw {i}: {} vs {cond}",
                x[1][i]
            );
            // The ICC is the reference profile's: the slopes do not enter.
            let icc = su * su / (su * su + d);
            assert!(
                (x[3][i] - icc).abs() < 1e-7,
                "{template} draw {i}: icc {}",
                x[3][i]
            );
        }
        assert!(s.beliefs[3]
            .request
            .label
            .contains("at the reference profile"));
    }
}

#[test]
fn cluster_spread_at_a_profile_includes_the_slope_variance_there() {
    let dir = tempfile::tempdir().unwrap();
    let (csv, age, dose) = design_csv();
    let f = dir.path().join("x.csv");
    std::fs::write(&f, csv).unwrap();
    // age has its own prior fixed at 0.02 per year, so η at the profile is known.
    let text = slopes_spec(
        "logistic-multilevel",
        &f,
        "[profile.old]\nage = 70\ndose = 5\n",
        "[prior.age]\nfamily = \"normal\"\nmean = 0.02\nsd = 1e-12\n\
[[belief]]\nquantity = \"cluster_spread\"\nprofile = \"old\"\nquantiles = { \"0.25\" = 0.1, \"0.5\" = 0.2, \"0.75\" = 0.3 }\n\
[[belief]]\nquantity = \"cluster_spread\"\nquantiles = { \"0.25\" = 0.1, \"0.5\" = 0.2, \"0.75\" = 0.3 }\n\
[[belief]]\nquantity = \"event_prob\"\nprofile = \"old\"\nquantiles = { \"0.25\" = 0.1, \"0.5\" = 0.2, \"0.75\" = 0.3 }",
    );
    let s = spec(&text);
    let x = draws(&s, &h0(&s), 400);
    let (ma, md) = (mean(&age), mean(&dose));
    let sd_old = (0.25f64 + (0.03 * (70.0 - ma)).powi(2) + (0.08 * (5.0 - md)).powi(2)).sqrt();
    for i in 0..400 {
        // η at the profile in a typical cluster, from event_prob (its own check
        // is elsewhere): the spread is expit(η ± z·sd) at that profile.
        let p = x[2][i];
        let eta = (p / (1.0 - p)).ln();
        let want = logistic(eta + Z95 * sd_old) - logistic(eta - Z95 * sd_old);
        assert!(
            (x[0][i] - want).abs() < 1e-7,
            "draw {i}: {} vs {want}",
            x[0][i]
        );
        // At the reference profile the slope part vanishes: sd = σ_u.
        assert!(x[1][i] > 0.0);
    }
    // The reference spread with σ_u alone (η = α there).
    let base = s
        .model
        .draw_base(400, &rng::Plan::fit(s.seed, rng::Points::Independent));
    for i in 0..400 {
        let a = -0.8 + 0.4 * base.cols[0][i];
        let want = logistic(a + Z95 * 0.5) - logistic(a - Z95 * 0.5);
        assert!((x[1][i] - want).abs() < 1e-7, "draw {i}");
    }
}

#[test]
fn slope_spread_is_the_range_of_the_cluster_ratios_per_draw() {
    let dir = tempfile::tempdir().unwrap();
    let (csv, _, _) = design_csv();
    let f = dir.path().join("x.csv");
    std::fs::write(&f, csv).unwrap();
    // Random β_age (own prior) and σ_v,age ~ half-normal(0.02): per draw the
    // range over clusters of the odds ratio for 10 years is
    // exp(10β + z·10σ_v) − exp(10β − z·10σ_v); the mean-difference version of
    // the linear template is 2·z·10σ_v.
    for template in [
        "logistic-multilevel",
        "poisson-multilevel",
        "linear-multilevel",
    ] {
        let text = slopes_spec(
            template,
            &f,
            if template == "linear-multilevel" {
                "[prior.sigma]\nfamily = \"half-normal\"\nscale = 1.0"
            } else {
                ""
            },
            "[prior.age]\nfamily = \"normal\"\nmean = 0.02\nsd = 0.01\n\
[[belief]]\nquantity = \"slope_spread\"\ncontrast = \"age:10\"\nquantiles = { \"0.25\" = 0.1, \"0.5\" = 0.2, \"0.75\" = 0.3 }",
        )
        .replace(
            &format!("[prior.cluster_slope_sd.age]\n{}", point(0.03)),
            "[prior.cluster_slope_sd.age]\nfamily = \"half-normal\"\nscale = 0.02",
        );
        let s = spec(&text);
        let n = 2000;
        let x = draws(&s, &h0(&s), n).remove(0);
        let base = s
            .model
            .draw_base(n, &rng::Plan::fit(s.seed, rng::Points::Independent));
        let names: Vec<String> = s
            .model
            .priors(&h0(&s))
            .into_iter()
            .map(|p| p.parameter)
            .collect();
        let bi = names.iter().position(|p| p == "b_age").unwrap();
        let vi = names.iter().position(|p| p == "slope_sd_age").unwrap();
        let hn = crate::dist::build("half-normal", &[0.02]).unwrap().unwrap();
        let mut sv = vec![0.0; n];
        hn.fill_from_base(&base.cols[vi], &mut sv);
        for i in 0..n {
            let b = 0.02 + 0.01 * base.cols[bi][i];
            let h = Z95 * 10.0 * sv[i];
            let want = if template == "linear-multilevel" {
                2.0 * h
            } else {
                (10.0 * b + h).exp() - (10.0 * b - h).exp()
            };
            assert!(
                (x[i] - want).abs() <= 1e-12 * want.max(1e-12) + 1e-15,
                "{template} draw {i}: {} vs {want}",
                x[i]
            );
        }
    }
}

#[test]
fn slopes_take_fresh_streams_and_leave_the_other_base_columns_unchanged() {
    let dir = tempfile::tempdir().unwrap();
    let (csv, _, _) = design_csv();
    let f = dir.path().join("x.csv");
    std::fs::write(&f, csv).unwrap();
    let beliefs = "[prior.age]\nfamily = \"normal\"\nmean = 0.02\nsd = 0.01\n[[belief]]\nquantity = \"icc\"\nquantiles = { \"0.25\" = 0.05, \"0.5\" = 0.1, \"0.75\" = 0.2 }";
    let with = spec(&slopes_spec("logistic-multilevel", &f, "", beliefs));
    let text = slopes_spec("logistic-multilevel", &f, "", beliefs);
    let cut = text.find("[prior.cluster_slope_sd.age]").unwrap();
    let end = text.find("[prior.coefficients]").unwrap();
    let without = spec(&format!("{}{}", &text[..cut], &text[end..]));
    let plan = rng::Plan::fit(with.seed, rng::Points::Independent);
    let (a, b) = (
        with.model.draw_base(300, &plan),
        without.model.draw_base(300, &plan),
    );
    // intercept, cluster_sd, b_age, then the global streams: the same columns.
    assert_eq!(a.cols[..3], b.cols[..3]);
    assert_eq!(a.cols[5..8], b.cols[3..6]);
    // The two slope columns come from streams 56 and 57 of the plan.
    assert_eq!(a.cols[3], plan.normals(multilevel::SLOPE_STREAM, 300));
    assert_eq!(a.cols[4], plan.normals(multilevel::SLOPE_STREAM + 1, 300));
}

#[test]
fn slope_spread_of_a_covariate_under_the_shared_prior_uses_its_drawn_coefficient() {
    // dose stays under the shared normal prior (standardised design): per draw
    // the odds ratio for 4 mg is exp(4β_dose) (the odds_ratio quantity), and the
    // range over clusters is exp(c + z·4σ_v) − exp(c − z·4σ_v) with c its log
    // and σ_v = 0.08 per mg.
    let dir = tempfile::tempdir().unwrap();
    let (csv, _, _) = design_csv();
    let f = dir.path().join("x.csv");
    std::fs::write(&f, csv).unwrap();
    let text = slopes_spec(
        "logistic-multilevel",
        &f,
        "",
        "[[belief]]\nquantity = \"slope_spread\"\ncontrast = \"dose:4\"\nquantiles = { \"0.25\" = 0.1, \"0.5\" = 0.2, \"0.75\" = 0.3 }\n\
[[belief]]\nquantity = \"odds_ratio\"\ncontrast = \"dose:4\"\nquantiles = { \"0.25\" = 0.9, \"0.5\" = 1.0, \"0.75\" = 1.1 }",
    );
    let s = spec(&text);
    let x = draws(&s, &h0(&s), 1000);
    let h = Z95 * 4.0 * 0.08;
    let mut moved = 0;
    for i in 0..1000 {
        let c = x[1][i].ln();
        let want = (c + h).exp() - (c - h).exp();
        assert!(
            (x[0][i] - want).abs() < 1e-7 * want,
            "draw {i}: {} vs {want}",
            x[0][i]
        );
        moved += usize::from((x[1][i] - 1.0).abs() > 1e-3);
    }
    // The shared coefficient does vary across draws.
    assert!(moved > 900, "{moved}");
}

#[test]
fn the_slope_spread_formula_is_the_simulated_range_over_clusters() {
    // Our own independent simulation: 200,000 clusters' odds ratios
    // exp(b + v_j), v_j ~ N(0, σ_v²), b = 0.2, σ_v = 0.3; their empirical 5 % and
    // 95 % quantiles give the range the formula exp(b + zσ_v) − exp(b − zσ_v)
    // states. Tolerance: 4 × the sum of the two quantiles' SEs,
    // √(p(1 − p)/n)/f(q) on the log scale (f the normal density there) times
    // the exp's slope.
    let (b, sv, n) = (0.2_f64, 0.3_f64, 200_000usize);
    let mut r = rng::stream(2014, 0);
    let mut or: Vec<f64> = (0..n)
        .map(|_| (b + sv * crate::numerics::norm_quantile(rng::open01(&mut r))).exp())
        .collect();
    or.sort_by(f64::total_cmp);
    let range = or[(0.95 * n as f64) as usize] - or[(0.05 * n as f64) as usize];
    let want = (b + Z95 * sv).exp() - (b - Z95 * sv).exp();
    let dens = (-0.5 * Z95 * Z95).exp() / (2.0 * std::f64::consts::PI).sqrt() / sv;
    let se_q = (0.05 * 0.95 / n as f64).sqrt() / dens;
    let se = se_q * ((b + Z95 * sv).exp() + (b - Z95 * sv).exp());
    assert!(
        (range - want).abs() < 4.0 * se,
        "{range} vs {want} (4 SE {})",
        4.0 * se
    );
}

//! Integration tests of covariate-specific priors, the multilevel templates and
//! the warnings about beliefs a template cannot meet: the real binary on
//! temporary files.

mod common;

use std::path::Path;
use std::process::Output;

fn run(args: &[&str], dir: &Path) -> Output {
    common::bin().args(args).current_dir(dir).output().unwrap()
}

fn text(o: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    )
}

fn fit_json(dir: &Path, out: &str) -> serde_json::Value {
    let s = std::fs::read_to_string(dir.join(out).join("fit.json")).unwrap();
    serde_json::from_str(&s).unwrap()
}

/// 40 covariates under a regularised horseshoe; covariate x7 takes a prior of
/// its own (invented scenario).
const OWN_OR: &str = r#"
title = "odds-ratio belief among 40 covariates (test)"
[model]
template = "logistic"
[design]
columns = 40
rows = 400
correlation = "exchangeable"
rho = 0.2
seed = 3
standardise = true
[simulation]
draws = 8000
seed = 5
[prior.intercept]
family = "normal"
mean = -1.5
sd = 0.3
[prior.x7]
family = "normal"
mean = { fit = [-1.0, 1.0] }
sd = { fit = [0.01, 1.0] }
[prior.coefficients]
family = "regularised-horseshoe"
global_scale = { fit = [0.0001, 5.0] }
slab_scale = { fit = [0.05, 5.0] }
slab_df = 4
[[belief]]
quantity = "odds_ratio"
contrast = "x7"
distribution = { family = "lognormal", meanlog = 0.22314355, sdlog = 0.15 }
[[belief]]
quantity = "r2_latent"
distribution = { family = "beta", alpha = 1.65, beta = 3.85 }
"#;
// The R² belief: Beta(2, 5) lies just outside what this regularised horseshoe
// reaches: its fresh-draw verdict was "met within noise" at seed 5 but "met
// approximately" at seeds 6 and 7 (ratios 4.6, 5.3) with per-draw coefficient
// streams, and approximately at seeds 5–8 with the Sobol coefficient columns.
// Beta(1.65, 3.85) has the mean and sd of the template's implied R² at global
// and slab scales 0.25 (262,144 draws of `priorsmith simulate`, moment-matched:
// our own computation); met within noise at seeds 5, 6, 8, 9, 10 (fresh ratios
// 1.35–2.67) and approximately at seed 7 (6.0): the verdict's 5 % test, and a
// Beta is not exactly the implied shape.

#[test]
fn odds_ratio_belief_among_40_covariates_and_r2_belief_are_both_met() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("own.toml"), OWN_OR).unwrap();
    let o = run(&["fit", "own.toml", "-o", "own", "-q"], dir.path());
    assert!(o.status.success(), "{}", text(&o));
    assert!(!text(&o).contains("warning"), "{}", text(&o));
    let j = fit_json(dir.path(), "own");
    assert_eq!(j["beliefs"][0]["verdict"], "met_within_noise", "{j:#}");
    assert_eq!(j["beliefs"][1]["verdict"], "met_within_noise", "{j:#}");
    // The fitted own prior is the belief itself: exp(b) ~ log-normal(ln 1.25,
    // 0.15) exactly when b ~ N(ln 1.25, 0.15²); tolerance: 6 Monte Carlo SE
    // (the record's), at least 0.005.
    let h = &j["hyperparameters"];
    for (k, want) in [("x7.mean", 0.223_143_55), ("x7.sd", 0.15)] {
        let got = h[k].as_f64().unwrap();
        let se = j["mc_error"][k].as_f64().unwrap_or(0.0);
        assert!((got - want).abs() < (6.0 * se).max(0.005), "{k} = {got}");
    }

    // Without the covariate's own prior the same belief cannot be met: check
    // says so before fitting, with the remedy, and the fit misses it.
    let before = OWN_OR.replace(
        "[prior.x7]\nfamily = \"normal\"\nmean = { fit = [-1.0, 1.0] }\nsd = { fit = [0.01, 1.0] }\n",
        "",
    );
    std::fs::write(dir.path().join("shared.toml"), before).unwrap();
    let o = run(&["check", "shared.toml"], dir.path());
    assert!(o.status.success(), "{}", text(&o));
    let err = String::from_utf8_lossy(&o.stderr).to_string();
    assert!(
        err.contains("warning: odds_ratio (x7 +1)")
            && err.contains("symmetric about zero")
            && err.contains("[prior.x7]"),
        "{err}"
    );
    let o = run(&["fit", "shared.toml", "-o", "shared", "-q"], dir.path());
    assert!(o.status.success(), "{}", text(&o));
    assert!(text(&o).contains("warning: odds_ratio"), "{}", text(&o));
    let j = fit_json(dir.path(), "shared");
    assert_eq!(j["beliefs"][0]["verdict"], "not_met", "{j:#}");
}

#[test]
fn multilevel_starters_fit_as_shipped_and_export() {
    let dir = tempfile::tempdir().unwrap();
    for t in [
        "linear-multilevel",
        "logistic-multilevel",
        "poisson-multilevel",
    ] {
        let f = format!("{t}.toml");
        let o = run(&["new", t, "-o", &f, "-q"], dir.path());
        assert!(o.status.success(), "{}", text(&o));
        let o = run(&["fit", &f, "-o", t, "-q"], dir.path());
        assert!(o.status.success(), "{t}: {}", text(&o));
        assert!(!text(&o).contains("warning"), "{t}: {}", text(&o));
        let j = fit_json(dir.path(), t);
        assert_eq!(j["template"], t);
        for b in j["beliefs"].as_array().unwrap() {
            let v = b["verdict"].as_str().unwrap();
            assert!(
                v == "met_within_noise" || v == "met_approximately",
                "{t}: {} {v}",
                b["label"]
            );
        }
        // Stan and PyMC state the random intercepts; brms the sd as class "sd".
        let out = dir.path().join(t);
        let stan = run(
            &["export", "--to", "stan", out.to_str().unwrap()],
            dir.path(),
        );
        let s = text(&stan);
        assert!(stan.status.success(), "{s}");
        assert!(
            s.contains("u = cluster_sd * u_z") && s.contains("cluster_sd ~ normal(0, "),
            "{s}"
        );
        let pymc = run(
            &["export", "--to", "pymc", out.to_str().unwrap()],
            dir.path(),
        );
        assert!(
            text(&pymc).contains("pm.HalfNormal(\"cluster_sd\""),
            "{}",
            text(&pymc)
        );
        let brms = run(
            &["export", "--to", "brms", out.to_str().unwrap()],
            dir.path(),
        );
        let b = text(&brms);
        assert!(brms.status.success(), "{b}");
        assert!(b.contains("class = \"sd\"") && b.contains("(1 | "), "{b}");
        if t == "logistic-multilevel" {
            assert!(b.contains("class = \"b\", coef = \"x1\""), "{b}");
        }
    }
}

#[test]
fn group_column_of_a_csv_design_gives_the_clusters() {
    let dir = tempfile::tempdir().unwrap();
    let mut csv = String::from("age,centre,dose\n");
    for r in 0..60 {
        csv.push_str(&format!(
            "{},{},{}\n",
            40 + (r * 7) % 30,
            ["north", "south", "east", "west", "mid"][r % 5],
            (r * 13) % 11
        ));
    }
    std::fs::write(dir.path().join("x.csv"), csv).unwrap();
    let spec = r#"
title = "group column (test)"
[model]
template = "logistic-multilevel"
[design]
file = "x.csv"
group = "centre"
[simulation]
draws = 1000
[prior.intercept]
family = "normal"
mean = -1.0
sd = 0.5
[prior.cluster_sd]
family = "half-cauchy"
scale = { fit = [0.01, 2.0] }
[prior.coefficients]
family = "normal"
scale = 0.1
[[belief]]
quantity = "icc"
quantiles = { "0.25" = 0.02, "0.5" = 0.06, "0.75" = 0.15 }
"#;
    std::fs::write(dir.path().join("g.toml"), spec).unwrap();
    let o = run(&["fit", "g.toml", "-o", "g", "-q"], dir.path());
    assert!(o.status.success(), "{}", text(&o));
    let out = dir.path().join("g");
    let s = text(&run(
        &["export", "--to", "stan", out.to_str().unwrap()],
        dir.path(),
    ));
    // 5 centres; age and dose are the covariates (the group column is not).
    assert!(
        s.contains("vector[5] u_z;") && s.contains("vector[2] beta;"),
        "{s}"
    );
    assert!(s.contains("cluster_sd ~ cauchy(0, "), "{s}");
}

#[test]
fn bad_multilevel_and_own_prior_input_is_a_clear_error() {
    let dir = tempfile::tempdir().unwrap();
    let base = r#"
[model]
template = "logistic"
[design]
columns = 5
rows = 50
[prior.intercept]
family = "normal"
mean = 0.0
sd = 1.0
[prior.coefficients]
family = "normal"
scale = 0.5
[[belief]]
quantity = "event_prob"
quantiles = { "0.25" = 0.3, "0.5" = 0.5, "0.75" = 0.7 }
"#;
    let cases: [(&str, &str, &[&str]); 6] = [
        // A misspelt covariate name: neither a parameter nor a design column.
        (
            "[prior.x9]\nfamily = \"normal\"\nmean = 0.0\nsd = 1.0\n",
            "",
            &["[prior.x9]", "not a parameter", "nor a column of the design"],
        ),
        (
            "[prior.pair]\ncovariates = [\"x1\", \"xx2\"]\nfamily = \"normal\"\nmean = 0.0\nsd = 1.0\n",
            "",
            &["prior.pair.covariates", "`xx2` is not a column", "x2"],
        ),
        // A family whose support does not fit says why.
        (
            "[prior.x1]\nfamily = \"gamma\"\nshape = 2.0\nrate = 1.0\n",
            "",
            &["prior.x1.family", "support is (0, ∞)", "the real line"],
        ),
        (
            "[prior.x1]\nfamily = \"normal\"\nmean = 0.0\nsd = 1.0\n[prior.both]\ncovariates = [\"x1\"]\nfamily = \"normal\"\nmean = 0.0\nsd = 1.0\n",
            "",
            &["`x1` has two priors of its own"],
        ),
        (
            "",
            "clusters = 5\n",
            &["design.clusters", "has no clusters", "logistic-multilevel"],
        ),
        (
            "",
            "group = \"centre\"\n",
            &["design.group", "a design `file`"],
        ),
    ];
    for (k, (prior, design, needles)) in cases.iter().enumerate() {
        let text = base
            .replace(
                "[prior.coefficients]",
                &format!("{prior}[prior.coefficients]"),
            )
            .replace("rows = 50\n", &format!("rows = 50\n{design}"));
        let p = dir.path().join(format!("bad{k}.toml"));
        std::fs::write(&p, text).unwrap();
        common::assert_rejected(dir.path(), &p, &format!("bad{k}.toml"), 3, needles);
    }
    // The multilevel template without clusters, and σ refused with its reason.
    let ml = base
        .replace("\"logistic\"", "\"linear-multilevel\"")
        .replace(
            "[prior.coefficients]",
            "[prior.sigma]\nfamily = \"normal\"\nmean = 1.0\nsd = 0.1\n[prior.cluster_sd]\nfamily = \"half-t\"\n[prior.coefficients]",
        );
    let p = dir.path().join("ml.toml");
    std::fs::write(&p, &ml).unwrap();
    common::assert_rejected(
        dir.path(),
        &p,
        "ml.toml",
        3,
        &["needs the design's clusters"],
    );
    let p = dir.path().join("ml2.toml");
    std::fs::write(&p, ml.replace("rows = 50\n", "rows = 50\nclusters = 5\n")).unwrap();
    common::assert_rejected(
        dir.path(),
        &p,
        "ml2.toml",
        3,
        &["prior.sigma.family", "support is the real line", "(0, ∞)"],
    );
}

/// Precision mode on a random-intercept logistic model with 20 covariates whose
/// shared scale only the odds ratio of `x2` fixes (the multilevel bench's
/// invented scenario, `benches/multilevel.rs`). With per-draw coefficient
/// streams that scale's Monte Carlo error fell like N^(−1/2) and precision mode
/// climbed to its cap of 2¹⁸ draws; with the coefficients' Sobol columns its
/// first 8,192 draws meet the target (0.15 % of each determined value).
#[test]
fn precision_mode_stops_early_when_a_contrast_fixes_the_shared_scale() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("ml.toml"), ML_PRECISION).unwrap();
    let o = run(&["fit", "ml.toml", "-o", "ml", "-q"], dir.path());
    assert!(o.status.success(), "{}", text(&o));
    let j = fit_json(dir.path(), "ml");
    let steps = j["draws_chosen"]["steps"].as_array().unwrap();
    assert_eq!(steps.len(), 1, "{steps:?}");
    assert_eq!(steps[0][0], 8192);
    assert_eq!(j["draws_chosen"]["reached"], true);
    let v = j["hyperparameters"]["coefficients.scale"].as_f64().unwrap();
    let se = j["mc_error"]["coefficients.scale"].as_f64().unwrap();
    assert!(se <= 0.0015 * v, "scale {v} ± {se}");
}

const ML_PRECISION: &str = include_str!("fixtures/multilevel-50x20.toml");

/// A logistic random-intercept model on 6 covariates in 30 centres with a random
/// slope of x1 (invented scenario), for the bad-input and recovery tests.
const SLOPES: &str = r#"
title = "random slope (test)"
[model]
template = "logistic-multilevel"
[design]
columns = 6
rows = 600
clusters = 30
seed = 3
standardise = true
[simulation]
draws = 8000
seed = 5
[prior.intercept]
family = "normal"
mean = -1.5
sd = 0.3
[prior.cluster_sd]
family = "half-normal"
scale = 0.5
[prior.cluster_slope_sd.x1]
family = "half-normal"
scale = { fit = [0.005, 2.0] }
[prior.x1]
family = "normal"
mean = 0.2
sd = 1e-9
[prior.coefficients]
family = "normal"
scale = 0.3
"#;

#[test]
fn a_slope_spread_belief_recovers_the_slope_sd_scale() {
    // σ_v ~ half-normal(s*) with s* = 0.15 and b_x1 fixed at 0.2: the range over
    // centres of the odds ratio per unit of x1, exp(b + zσ_v) − exp(b − zσ_v) =
    // 2e^b sinh(zσ_v), is increasing in σ_v, so its p-quantile is
    // 2e^b sinh(z·s*·Φ⁻¹((1 + p)/2)) (closed form, our own; Φ⁻¹ values from
    // scipy 1.17.1 norm.ppf). The fit must find s* within 4 Monte Carlo SE: the
    // relative SE of a half-normal scale from n draws is 1/√(2n) (the delta
    // method on mean σ², Var(σ²)/E(σ²)² = 2), 0.0079 at n = 8,000.
    let z = 1.644_853_626_951_472_7_f64;
    let b = 0.2_f64;
    let s = 0.15_f64;
    // norm.ppf((1 + p)/2) for p = 0.1, 0.25, 0.5, 0.75, 0.9 (scipy 1.17.1; rerun
    // there on 2026-12-03, equal to every printed digit).
    let ppf = [
        (0.1, 0.125_661_346_855_074_1),
        (0.25, 0.318_639_363_964_375_2),
        (0.5, 0.674_489_750_196_081_7),
        (0.75, 1.150_349_380_376_008_4),
        (0.9, 1.644_853_626_951_472_7),
    ];
    let q: Vec<String> = ppf
        .iter()
        .map(|(p, x)| format!("\"{p}\" = {}", 2.0 * b.exp() * (z * s * x).sinh()))
        .collect();
    let spec = format!(
        "{SLOPES}[[belief]]\nquantity = \"slope_spread\"\ncontrast = \"x1\"\nquantiles = {{ {} }}\n",
        q.join(", ")
    );
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("s.toml"), spec).unwrap();
    let o = run(&["fit", "s.toml", "-o", "s", "-q"], dir.path());
    assert!(o.status.success(), "{}", text(&o));
    let j = fit_json(dir.path(), "s");
    let v = j["hyperparameters"]["cluster_slope_sd.x1.scale"]
        .as_f64()
        .unwrap();
    let se = s / (2.0_f64 * 8000.0).sqrt();
    eprintln!("fitted slope sd scale {v} (target {s}, SE {se})");
    assert!(
        (v - s).abs() < 4.0 * se,
        "fitted {v} vs {s} (4 SE {})",
        4.0 * se
    );
    // The exports state the slope: Stan non-centred, brms with its group.
    let out = dir.path().join("s");
    let st = text(&run(
        &["export", "--to", "stan", out.to_str().unwrap()],
        dir.path(),
    ));
    assert!(
        st.contains("vector[30] v_z_x1;")
            && st.contains("vector[30] v_x1 = slope_sd_x1 * v_z_x1;")
            && st.contains("slope_sd_x1 ~ normal(0, "),
        "{st}"
    );
    let br = text(&run(
        &["export", "--to", "brms", out.to_str().unwrap()],
        dir.path(),
    ));
    assert!(
        br.contains("class = \"sd\", group = \"cluster\", coef = \"x1\")")
            && br.contains("(1 + x1 || cluster)"),
        "{br}"
    );
}

#[test]
fn bad_random_slope_input_is_a_clear_error() {
    let dir = tempfile::tempdir().unwrap();
    let belief = "[[belief]]\nquantity = \"icc\"\nquantiles = { \"0.25\" = 0.05, \"0.5\" = 0.1, \"0.75\" = 0.2 }\n";
    let ok = format!("{SLOPES}{belief}");
    let cases: Vec<(String, Vec<&str>)> = vec![
        // A slope on a column that is not in the design.
        (
            ok.replace("[prior.cluster_slope_sd.x1]", "[prior.cluster_slope_sd.x11]"),
            vec!["prior.cluster_slope_sd.x11", "`x11`", "not a column of the design", "did you mean"],
        ),
        // Slopes in a template without clusters.
        (
            ok.replace("\"logistic-multilevel\"", "\"logistic\"")
                .replace("clusters = 30\n", "")
                .replace("quantity = \"icc\"", "quantity = \"event_prob\""),
            vec!["prior.cluster_slope_sd", "has no clusters, so no random slopes", "logistic-multilevel"],
        ),
        // A family whose support is not (0, ∞).
        (
            ok.replace(
                "[prior.cluster_slope_sd.x1]\nfamily = \"half-normal\"\nscale = { fit = [0.005, 2.0] }",
                "[prior.cluster_slope_sd.x1]\nfamily = \"normal\"\nmean = 0.0\nsd = 1.0",
            ),
            vec!["prior.cluster_slope_sd.x1.family", "\"normal\"", "support is the real line", "(0, ∞)"],
        ),
        // A hyperparameter outside the family's domain.
        (
            ok.replace("scale = { fit = [0.005, 2.0] }", "scale = -0.2"),
            vec!["prior.cluster_slope_sd.x1.scale", "-0.2"],
        ),
        // slope_spread on a covariate without a random slope.
        (
            format!(
                "{SLOPES}[[belief]]\nquantity = \"slope_spread\"\ncontrast = \"x2\"\nquantiles = {{ \"0.25\" = 0.1, \"0.5\" = 0.2, \"0.75\" = 0.3 }}\n"
            ),
            vec!["belief[1].contrast", "\"x2\" has no random slope", "x1"],
        ),
        // Not a table.
        (
            ok.replace(
                "[prior.cluster_slope_sd.x1]\nfamily = \"half-normal\"\nscale = { fit = [0.005, 2.0] }",
                "[prior.cluster_slope_sd]\nx1 = 0.3",
            ),
            vec!["prior.cluster_slope_sd.x1", "must be a table"],
        ),
    ];
    for (k, (text, needles)) in cases.iter().enumerate() {
        let p = dir.path().join(format!("slope{k}.toml"));
        std::fs::write(&p, text).unwrap();
        common::assert_rejected(dir.path(), &p, &format!("slope{k}.toml:"), 3, needles);
    }
}

//! The piecewise-exponential template (`piecewise-hazard`) on the real binary:
//! a fit from survival-at-horizons beliefs, bad `cuts` refused by `check` and
//! `fit` with file, line, key and value, and the Stan / PyMC exports with the
//! likelihood pinned by golden files (brms refused with the reason).

mod common;
use common::*;
use std::path::Path;

/// Beliefs at 6, 12, 24 and 36 months (11 quantiles, 2 % to 98 %) and on the hazard
/// ratio (5 % to 95 %): the quantiles of a prior simulated independently in numpy 2.4.6 (10⁶ draws,
/// default_rng(1)): ln h_1 ~ N(−2.8, 0.25²), τ ~ half-normal(0.25), ln h_{j+1} =
/// ln h_j + τ·z_j, β ~ N(−0.3, 0.15²), cuts [0, 6, 12, 24], S(t) = exp(−Σ h_j Δ_j(t)).
const SPEC: &str = r#"
title = "Piecewise hazards from survival at four horizons (invented scenario)"
[model]
template = "piecewise-hazard"
cuts = [0, 6, 12, 24]
covariates = ["arm"]
[simulation]
draws = 20000
seed = 11
[profile.control]
arm = 0
[profile.treated]
arm = 1
[prior.log_hazard_1]
family = "normal"
mean = { fit = [-6.0, 1.0] }
sd = { fit = [0.05, 2.0] }
[prior.hazard_walk_sd]
family = "half-normal"
scale = { fit = [0.02, 1.5] }
[prior.hazard_effect_arm]
family = "normal"
mean = { fit = [-1.5, 1.0] }
sd = { fit = [0.05, 1.0] }
[[belief]]
quantity = "survival_prob"
horizon = 6
quantiles = { "0.02" = 0.5435, "0.05" = 0.5769, "0.1" = 0.6052, "0.25" = 0.6495, "0.4" = 0.678, "0.5" = 0.6943, "0.6" = 0.7098, "0.75" = 0.7347, "0.9" = 0.7672, "0.95" = 0.785, "0.98" = 0.8038 }
[[belief]]
quantity = "survival_prob"
horizon = 12
quantiles = { "0.02" = 0.2653, "0.05" = 0.3116, "0.1" = 0.3508, "0.25" = 0.4139, "0.4" = 0.4559, "0.5" = 0.4806, "0.6" = 0.5045, "0.75" = 0.5434, "0.9" = 0.5964, "0.95" = 0.6265, "0.98" = 0.6589 }
[[belief]]
quantity = "survival_prob"
horizon = 24
quantiles = { "0.02" = 0.0453, "0.05" = 0.0772, "0.1" = 0.1079, "0.25" = 0.1631, "0.4" = 0.2043, "0.5" = 0.2303, "0.6" = 0.257, "0.75" = 0.3031, "0.9" = 0.3738, "0.95" = 0.4188, "0.98" = 0.4719 }
[[belief]]
quantity = "survival_prob"
horizon = 36
quantiles = { "0.02" = 0.0056, "0.05" = 0.0166, "0.1" = 0.0309, "0.25" = 0.0629, "0.4" = 0.0908, "0.5" = 0.11, "0.6" = 0.131, "0.75" = 0.1705, "0.9" = 0.2388, "0.95" = 0.288, "0.98" = 0.3522 }
[[belief]]
quantity = "hazard_ratio"
profiles = ["treated", "control"]
quantiles = { "0.05" = 0.5789, "0.25" = 0.6695, "0.5" = 0.7408, "0.75" = 0.8195, "0.95" = 0.9479 }
"#;

fn fit(dir: &Path, name: &str, text: &str, extra: &[&str]) -> std::path::PathBuf {
    let spec = write(dir, &format!("{name}.toml"), text);
    let out = dir.join(name);
    let mut args = vec![
        "fit",
        spec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "-q",
    ];
    args.extend_from_slice(extra);
    let r = run(&args);
    assert!(r.status.success(), "{name}: {}", stderr(&r));
    out
}

fn hyper(v: &serde_json::Value, name: &str) -> f64 {
    v["hyperparameters"][name]
        .as_f64()
        .unwrap_or_else(|| panic!("{name} in fit.json"))
}

#[test]
fn fit_from_survival_at_horizons_meets_the_beliefs_and_finds_the_generating_prior() {
    let d = tempfile::tempdir().unwrap();
    let out = fit(d.path(), "pw", SPEC, &[]);
    let v = json(&out.join("fit.json"));
    assert_eq!(v["verdict"], "met_within_noise", "{}", v["verdict"]);
    // The report draws this template's survival bands through survival_prob.
    let report = std::fs::read_to_string(out.join("report.html")).unwrap();
    for p in ["control", "treated"] {
        assert!(
            report.contains(&format!("Prior-predictive survival curve, profile {p}")),
            "no survival bands for {p} in the report"
        );
    }
    // The beliefs are the generating prior's quantiles (rounded to 4 digits):
    // the fit lands on it. Tolerance 0.02 (common practice for a recovery
    // check; at seed 11 every value is within 0.002 of the generating one).
    for (name, want, tol) in [
        ("log_hazard_1.mean", -2.8, 0.02),
        ("hazard_effect_arm.mean", -0.3, 0.02),
        ("log_hazard_1.sd", 0.25, 0.02),
        ("hazard_walk_sd.scale", 0.25, 0.02),
        ("hazard_effect_arm.sd", 0.15, 0.02),
    ] {
        let got = hyper(&v, name);
        assert!((got - want).abs() < tol, "{name}: {got} vs {want}");
    }
}

#[test]
fn bad_cuts_name_file_line_key_and_value() {
    let d = tempfile::tempdir().unwrap();
    // cuts sits on line 5 of SPEC.
    for (k, (cuts, needle)) in [
        ("[0, 12, 6]", "cuts[3] = 6 is below cuts[2] = 12"),
        ("[0, -3, 6]", "cuts[2] = -3 is negative"),
        ("[0, 6, 6, 12]", "cuts[3] = 6 repeats cuts[2]"),
        ("[]", "cuts = [] is empty"),
        ("[0, 6, inf]", "cuts[3] = inf is not finite"),
        ("[4, 6]", "cuts[1] = 4: the first interval must start at 0"),
    ]
    .into_iter()
    .enumerate()
    {
        let text = SPEC.replace("cuts = [0, 6, 12, 24]", &format!("cuts = {cuts}"));
        let name = format!("bad{k}.toml");
        let spec = write(d.path(), &name, &text);
        assert_rejected(
            d.path(),
            &spec,
            &format!("{name}:5"),
            3,
            &["model.cuts", needle],
        );
    }
    let many: Vec<String> = (0..60).map(|k| k.to_string()).collect();
    let text = SPEC.replace(
        "cuts = [0, 6, 12, 24]",
        &format!("cuts = [{}]", many.join(", ")),
    );
    let spec = write(d.path(), "many.toml", &text);
    assert_rejected(
        d.path(),
        &spec,
        "many.toml:5",
        3,
        &["60 values", "at most 50"],
    );
}

/// The export without the lines that hold fitted numbers (the scalar priors,
/// checked against fit.json in `scalar_priors_match`) and without the header.
fn structure(code: &str) -> String {
    let fitted = [
        "log_hazard_1 ~",
        "hazard_walk_sd ~",
        "hazard_effect_arm ~",
        "// half-normal(",
        "log_hazard_1 = pm.",
        "hazard_walk_sd = pm.",
        "hazard_effect_arm = pm.",
    ];
    let header = [
        "Prior exported",
        "fit:",
        "spec sha256",
        "seed ",
        "A fitted prior",
    ];
    code.lines()
        .filter(|l| {
            let t = l.trim();
            let body = t.trim_start_matches("//").trim_start_matches('#').trim();
            !fitted.iter().any(|f| t.starts_with(f))
                && !((t.starts_with("//") || t.starts_with('#'))
                    && header.iter().any(|h| body.starts_with(h)))
        })
        .map(|l| format!("{l}\n"))
        .collect()
}

/// The numbers of a call `name(…)` or keyword arguments on the line of `param`.
fn numbers_after(code: &str, start: &str) -> Vec<f64> {
    let line = code
        .lines()
        .map(str::trim)
        .find(|l| l.starts_with(start))
        .unwrap_or_else(|| panic!("{start} in\n{code}"));
    let args = &line[line.find('(').unwrap() + 1..line.find(')').unwrap()];
    args.split(',')
        .map(|a| a.rsplit('=').next().unwrap().trim())
        .filter_map(|a| a.parse().ok())
        .collect()
}

fn scalar_priors_match(code: &str, lang: &str, v: &serde_json::Value) {
    let m = hyper(v, "log_hazard_1.mean");
    let s = hyper(v, "log_hazard_1.sd");
    let t = hyper(v, "hazard_walk_sd.scale");
    let close = |a: f64, b: f64| (a - b).abs() <= 1e-5 * b.abs();
    let (lh, walk) = match lang {
        "stan" => (
            numbers_after(code, "log_hazard_1 ~ normal("),
            numbers_after(code, "hazard_walk_sd ~ normal(")[1],
        ),
        _ => (
            numbers_after(code, "log_hazard_1 = pm.Normal("),
            numbers_after(code, "hazard_walk_sd = pm.HalfNormal(")[0],
        ),
    };
    assert!(
        close(lh[0], m) && close(lh[1], s),
        "{lang}: {lh:?} vs {m}, {s}"
    );
    assert!(close(walk, t), "{lang}: {walk} vs {t}");
}

#[test]
fn exports_match_golden_files_and_brms_is_refused_with_the_mapping() {
    let d = tempfile::tempdir().unwrap();
    let out = fit(
        d.path(),
        "starter",
        include_str!("../model-templates/piecewise-hazard.toml"),
        &["--draws", "2000"],
    );
    let v = json(&out.join("fit.json"));
    let dir = out.to_str().unwrap();
    for (lang, ext) in [("stan", "stan"), ("pymc", "py")] {
        for (with, suffix) in [(true, ""), (false, "-prior")] {
            let mut args = vec!["export", dir, "--to", lang];
            if with {
                args.push("--with-likelihood");
            }
            let r = run(&args);
            assert!(r.status.success(), "{lang}: {}", stderr(&r));
            let code = stdout(&r);
            scalar_priors_match(&code, lang, &v);
            let got = structure(&code);
            assert_golden(
                &got,
                &format!("survival/piecewise-hazard{suffix}.{ext}"),
                &format!("{lang}:"),
            );
        }
    }
    for args in [
        vec!["export", dir, "--to", "brms"],
        vec!["export", dir, "--to", "brms", "--with-likelihood"],
    ] {
        let r = run(&args);
        assert_eq!(r.status.code(), Some(3), "{}", stderr(&r));
        let e = stderr(&r);
        for needle in [
            "brms has no piecewise-exponential family",
            "b_interval<j> = log_hazard[j]",
            "offset(log(exposure_j))",
            "--to stan",
        ] {
            assert!(e.contains(needle), "{needle} in {e}");
        }
    }
}

#[test]
fn catalogue_and_new_know_the_template() {
    let r = run(&["templates"]);
    assert!(stdout(&r).contains("piecewise-hazard"));
    let r = run(&["templates", "piecewise-hazard"]);
    for w in [
        "cuts",
        "hazard_walk_sd",
        "log_hazard_1",
        "hazard_ratio",
        "rmst_ratio",
    ] {
        assert!(stdout(&r).contains(w), "{w}: {}", stdout(&r));
    }
    assert!(!stdout(&r).contains("cure_fraction"));
}

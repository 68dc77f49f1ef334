//! End-to-end tests of `fit`, `simulate`, `check`, `templates`, `new`, `demo` on the real binary.

mod common;
use common::*;

#[test]
fn readme_example_fits_reproducibly_on_one_or_two_threads() {
    let d = tempfile::tempdir().unwrap();
    let spec = write(d.path(), "rfs.toml", EXAMPLE);
    let o1 = d.path().join("a");
    let o2 = d.path().join("b");
    let r1 = run(&[
        "--threads",
        "1",
        "--quiet",
        "fit",
        spec.to_str().unwrap(),
        "--out",
        o1.to_str().unwrap(),
    ]);
    assert!(r1.status.success(), "{}", stderr(&r1));
    let r2 = run(&[
        "--threads",
        "2",
        "--quiet",
        "fit",
        spec.to_str().unwrap(),
        "--out",
        o2.to_str().unwrap(),
    ]);
    assert!(r2.status.success(), "{}", stderr(&r2));
    let (j1, j2) = (json(&o1.join("fit.json")), json(&o2.join("fit.json")));
    assert_eq!(
        j1["hyperparameters"], j2["hyperparameters"],
        "same seed, different thread count"
    );
    assert_eq!(j1["beliefs"], j2["beliefs"]);
    assert_eq!(
        std::fs::read(o1.join("draws.csv")).unwrap(),
        std::fs::read(o2.join("draws.csv")).unwrap()
    );
    // Keys documented in the README.
    for k in [
        "cure_logit.mean",
        "cure_logit.sd",
        "log_scale.mean",
        "log_scale.sd",
        "shape.meanlog",
        "shape.sdlog",
    ] {
        assert!(j1["hyperparameters"][k].is_number(), "missing {k}");
    }
    assert_eq!(j1["hyperparameters"]["shape.sdlog"], 0.25);
    assert_eq!(j1["seed"], 11);
    assert_eq!(j1["draws"], 20000);
    assert!(j1["optimiser"]["evaluations"].as_u64().unwrap() > 10);
    assert_eq!(j1["beliefs"].as_array().unwrap().len(), 3);
    let summary = std::fs::read_to_string(o1.join("summary.txt")).unwrap();
    assert!(summary.contains("verdict") && summary.contains("Caution"));
    // Every belief is judged against its noise floor.
    for b in j1["beliefs"].as_array().unwrap() {
        assert!(b["noise_floor"].as_f64().unwrap() > 0.0);
        assert!(b["verdict"].is_string());
    }
}

#[test]
fn a_different_seed_gives_different_but_close_hyperparameters() {
    let d = tempfile::tempdir().unwrap();
    let spec = write(d.path(), "rfs.toml", EXAMPLE);
    let a = d.path().join("a");
    let b = d.path().join("b");
    assert!(run(&[
        "-q",
        "fit",
        spec.to_str().unwrap(),
        "--out",
        a.to_str().unwrap()
    ])
    .status
    .success());
    assert!(run(&[
        "-q",
        "fit",
        spec.to_str().unwrap(),
        "--seed",
        "12",
        "--out",
        b.to_str().unwrap()
    ])
    .status
    .success());
    let (ja, jb) = (json(&a.join("fit.json")), json(&b.join("fit.json")));
    assert_ne!(ja["hyperparameters"], jb["hyperparameters"]);
    let ma = ja["hyperparameters"]["cure_logit.mean"].as_f64().unwrap();
    let mb = jb["hyperparameters"]["cure_logit.mean"].as_f64().unwrap();
    assert!((ma - mb).abs() < 0.1, "{ma} vs {mb}");
}

/// A belief the template expresses exactly is recovered: cure fraction
/// logit-normal(μ = −1.2, σ = 0.4) with cure_logit ~ Normal(mean, sd) has the exact
/// solution mean = −1.2, sd = 0.4.
#[test]
fn recovers_an_expressible_belief_at_the_noise_floor() {
    let d = tempfile::tempdir().unwrap();
    let spec = write(
        d.path(),
        "rec.toml",
        r#"
title = "recovery"
[model]
template = "mixture-cure"
[simulation]
draws = 20000
seed = 5
[prior.cure_logit]
family = "normal"
mean = { fit = [-4.0, 4.0] }
sd = { fit = [0.05, 2.5] }
[prior.log_scale]
family = "normal"
mean = 2.5
sd = 0.3
[prior.shape]
family = "lognormal"
meanlog = 0.0
sdlog = 0.2
[[belief]]
quantity = "cure_fraction"
distribution = { family = "logit-normal", mu = -1.2, sigma = 0.4 }
"#,
    );
    let out = d.path().join("o");
    let r = run(&[
        "-q",
        "fit",
        spec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(r.status.success(), "{}", stderr(&r));
    let j = json(&out.join("fit.json"));
    let m = j["hyperparameters"]["cure_logit.mean"].as_f64().unwrap();
    let s = j["hyperparameters"]["cure_logit.sd"].as_f64().unwrap();
    // Monte Carlo error of a mean and an sd from 20,000 normal draws: 0.4/√N = 0.0028
    // and 0.4/√(2N) = 0.002; allow 4 standard errors.
    assert!((m + 1.2).abs() < 4.0 * 0.4 / (20000f64).sqrt(), "mean {m}");
    assert!((s - 0.4).abs() < 4.0 * 0.4 / (40000f64).sqrt(), "sd {s}");
    let b = &j["beliefs"][0];
    assert_eq!(b["verdict"], "met_within_noise");
    // Fresh-draw discrepancy at the noise floor: below the null 95 % point.
    assert!(b["ratio"].as_f64().unwrap() < 2.77, "ratio {}", b["ratio"]);
}

#[test]
fn simulate_reports_implied_quantities() {
    let d = tempfile::tempdir().unwrap();
    let spec = write(d.path(), "rfs.toml", EXAMPLE);
    let r = run(&[
        "simulate",
        spec.to_str().unwrap(),
        "--set",
        "cure_logit.mean=-1.2",
        "--set",
        "cure_logit.sd=0.4",
        "--json",
    ]);
    assert!(r.status.success(), "{}", stderr(&r));
    let v: serde_json::Value = serde_json::from_str(&stdout(&r)).unwrap();
    assert_eq!(v["hyperparameters"]["cure_logit.mean"], -1.2);
    let q = &v["quantities"][0];
    // Median of a logit-normal(−1.2, 0.4) cure fraction is logistic(−1.2) = 0.2315 (closed form);
    // sampling error of a median from 20,000 draws is ≈ 0.0013.
    let med = q["quantiles"][3].as_f64().unwrap();
    assert!((med - 1.0 / (1.0 + 1.2f64.exp())).abs() < 0.006, "{med}");
    let bad = run(&[
        "simulate",
        spec.to_str().unwrap(),
        "--set",
        "cure_logit.sd=-1",
    ]);
    // A command-line value (README's exit-code table).
    assert_eq!(bad.status.code(), Some(2), "{}", stderr(&bad));
    let bad = run(&[
        "simulate",
        spec.to_str().unwrap(),
        "--set",
        "cure_logit.sdd=1",
    ]);
    assert!(!bad.status.success());
    assert!(stderr(&bad).contains("cure_logit.sd"), "{}", stderr(&bad));
}

#[test]
fn check_templates_new_and_demo() {
    let d = tempfile::tempdir().unwrap();
    let spec = write(d.path(), "rfs.toml", EXAMPLE);
    let r = run(&["check", spec.to_str().unwrap()]);
    assert!(r.status.success());
    assert!(stdout(&r).contains("valid"));
    let r = run(&["templates"]);
    assert!(stdout(&r).contains("mixture-cure"));
    let r = run(&["templates", "mixture-cure"]);
    assert!(stdout(&r).contains("median_survival"));
    let r = run(&["templates", "mixture-cur"]);
    // A command-line value (README's exit-code table).
    assert_eq!(r.status.code(), Some(2));
    assert!(stderr(&r).contains("did you mean `mixture-cure`"));
    let starter = d.path().join("s.toml");
    let r = run(&["new", "mixture-cure", "--out", starter.to_str().unwrap()]);
    assert!(r.status.success());
    assert_eq!(std::fs::read_to_string(&starter).unwrap(), EXAMPLE);
    let r = run(&["new", "mixture-cure", "--out", starter.to_str().unwrap()]);
    assert_eq!(r.status.code(), Some(4), "refuses to overwrite");
    let demo = d.path().join("demo");
    let r = run(&["demo", "--out", demo.to_str().unwrap()]);
    assert!(r.status.success(), "{}", stderr(&r));
    assert!(stdout(&r).contains("relapse-free-cure"));
    assert!(demo.join("relapse-free-cure").join("fit.json").exists());
    assert!(demo.join("two-arm-cure").join("summary.txt").exists());
}

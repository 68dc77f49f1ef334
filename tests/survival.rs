//! The survival templates on the real binary: every survival starter and the
//! survival demo fit as shipped ("met within noise" or "met approximately"),
//! the catalogue and `new` know the new templates, and bad survival input is a
//! clear error naming file, line and key.

mod common;
use common::*;

/// Every survival starter and the two-arm hazard-ratio demo, as shipped.
const SHIPPED: [(&str, &str); 4] = [
    (
        "mixture-cure",
        include_str!("../model-templates/mixture-cure.toml"),
    ),
    (
        "promotion-time-cure",
        include_str!("../model-templates/promotion-time-cure.toml"),
    ),
    (
        "parametric-survival",
        include_str!("../model-templates/parametric-survival.toml"),
    ),
    (
        "two-arm-hazard-ratio",
        include_str!("../demo-data/two-arm-hazard-ratio.toml"),
    ),
];

#[test]
fn survival_starters_and_demo_fit_as_shipped() {
    let d = tempfile::tempdir().unwrap();
    for (name, text) in SHIPPED {
        let spec = write(d.path(), &format!("{name}.toml"), text);
        let out = d.path().join(name);
        let r = run(&[
            "fit",
            spec.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "-q",
        ]);
        assert!(r.status.success(), "{name}: {}", stderr(&r));
        let v = json(&out.join("fit.json"));
        let verdict = v["verdict"].as_str().unwrap();
        assert!(
            ["met_within_noise", "met_approximately"].contains(&verdict),
            "{name}: verdict {verdict}"
        );
        // Every survival fit records its likelihood for `export --with-likelihood`.
        assert!(v["likelihood"]["stan"]["model"].is_array(), "{name}");
    }
}

#[test]
fn catalogue_and_new_know_the_survival_templates() {
    let r = run(&["templates"]);
    for t in ["mixture-cure", "promotion-time-cure", "parametric-survival"] {
        assert!(stdout(&r).contains(t), "{t}");
    }
    let r = run(&["templates", "promotion-time-cure"]);
    for q in [
        "cure_fraction",
        "hazard_ratio",
        "rmst_difference",
        "median_ratio",
        "log_theta",
    ] {
        assert!(stdout(&r).contains(q), "{q}: {}", stdout(&r));
    }
    let r = run(&["templates", "parametric-survival"]);
    assert!(stdout(&r).contains("hazard_effect_<c>"));
    assert!(!stdout(&r).contains("cure_fraction"));
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("s.toml");
    let r = run(&["new", "parametric-survival", "--out", p.to_str().unwrap()]);
    assert!(r.status.success(), "{}", stderr(&r));
    assert_eq!(std::fs::read_to_string(&p).unwrap(), SHIPPED[2].1);
}

#[test]
fn bad_survival_input_names_file_line_and_key() {
    let d = tempfile::tempdir().unwrap();
    let base = SHIPPED[2].1;
    // A PH effect on a log-normal latency.
    let text = base.replace("latency = \"weibull\"", "latency = \"lognormal\"");
    let spec = write(d.path(), "ln.toml", &text);
    assert_rejected(
        d.path(),
        &spec,
        "ln.toml",
        3,
        &[
            "prior.hazard_effect_arm",
            "proportional-hazards latency",
            "latency_effect_arm",
        ],
    );
    // A hazard ratio whose value changes with time needs a horizon.
    let text = base
        .replace("latency = \"weibull\"", "latency = \"loglogistic\"")
        .replace("[prior.hazard_effect_arm]", "[prior.latency_effect_arm]");
    let spec = write(d.path(), "ll.toml", &text);
    assert_rejected(
        d.path(),
        &spec,
        "ll.toml",
        3,
        &["hazard_ratio needs `horizon`"],
    );
    // Both kinds of effect for one covariate.
    let text =
        format!("{base}\n[prior.latency_effect_arm]\nfamily = \"normal\"\nmean = 0.0\nsd = 0.2\n");
    let spec = write(d.path(), "both.toml", &text);
    assert_rejected(
        d.path(),
        &spec,
        "both.toml",
        3,
        &["both [prior.latency_effect_arm]"],
    );
    // A cure quantity in parametric survival is unknown there, with the valid ones.
    let text = base.replace(
        "quantity = \"median_survival\"",
        "quantity = \"cure_fraction\"",
    );
    let spec = write(d.path(), "cf.toml", &text);
    assert_rejected(
        d.path(),
        &spec,
        "cf.toml",
        3,
        &["has no quantity \"cure_fraction\"", "survival_prob"],
    );
}

#[test]
fn gengamma_latency_fits_and_is_the_weibull_at_q_one() {
    // Prentice's generalised gamma with Q = 1 is the Weibull (Prentice 1974,
    // Biometrika 61): the parametric starter refitted with latency = "gengamma",
    // gengamma_q = 1 (same priors, same seed, so the same draws) gives the Weibull's
    // fitted hyperparameters; with Q = -0.4 and an AFT effect (hazard ratio as the
    // ratio of cumulative hazards at 12 months) it fits as shipped.
    let d = tempfile::tempdir().unwrap();
    let base = SHIPPED[2].1;
    let fit = |name: &str, text: &str| {
        let spec = write(d.path(), &format!("{name}.toml"), text);
        let out = d.path().join(name);
        let r = run(&[
            "fit",
            spec.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "-q",
        ]);
        assert!(r.status.success(), "{name}: {}", stderr(&r));
        json(&out.join("fit.json"))
    };
    let wb = fit("weibull", base);
    let gg = fit(
        "gg1",
        &base.replace(
            "latency = \"weibull\"",
            "latency = \"gengamma\"\ngengamma_q = 1.0",
        ),
    );
    let (a, b) = (
        wb["hyperparameters"].to_string(),
        gg["hyperparameters"].to_string(),
    );
    let nums = |s: &str| -> Vec<f64> {
        s.split(|c: char| !(c.is_ascii_digit() || "-.eE".contains(c)))
            .filter_map(|t| t.parse().ok())
            .collect()
    };
    let (na, nb) = (nums(&a), nums(&b));
    assert!(!na.is_empty() && na.len() == nb.len(), "{a}\n{b}");
    for (x, y) in na.iter().zip(&nb) {
        assert!(
            (x - y).abs() <= 1e-6 * x.abs().max(1.0),
            "{x} vs {y}\n{a}\n{b}"
        );
    }
    let text = base
        .replace(
            "latency = \"weibull\"",
            "latency = \"gengamma\"\ngengamma_q = -0.4",
        )
        .replace("[prior.hazard_effect_arm]", "[prior.latency_effect_arm]")
        .replace(
            "mean = { fit = [-1.5, 1.0] }",
            "mean = { fit = [-1.0, 1.5] }",
        )
        .replace(
            "quantity = \"hazard_ratio\"         # constant in time for a Weibull: no horizon",
            "quantity = \"hazard_ratio\"\nhorizon = 12",
        )
        // 5,000 draws keep the test short (an incomplete gamma per draw and horizon).
        .replace("draws = 20000", "draws = 5000");
    let v = fit("ggneg", &text);
    let verdict = v["verdict"].as_str().unwrap();
    assert!(
        ["met_within_noise", "met_approximately"].contains(&verdict),
        "gengamma Q = -0.4: verdict {verdict}"
    );
}

#[test]
fn bad_gengamma_input_names_file_line_and_key() {
    let d = tempfile::tempdir().unwrap();
    let base = SHIPPED[2].1;
    for (file, repl, needles) in [
        (
            "noq.toml",
            "latency = \"gengamma\"",
            &["needs [model] gengamma_q"][..],
        ),
        (
            "bigq.toml",
            "latency = \"gengamma\"\ngengamma_q = 4.5",
            &["model.gengamma_q", "outside [-3, 3]"][..],
        ),
        (
            "wbq.toml",
            "latency = \"weibull\"\ngengamma_q = 0.5",
            &["gengamma_q given but latency = \"weibull\""][..],
        ),
        (
            "ph.toml",
            "latency = \"gengamma\"\ngengamma_q = 0.5",
            &[
                "prior.hazard_effect_arm",
                "proportional-hazards latency",
                "gengamma",
            ][..],
        ),
    ] {
        let text = base.replace("latency = \"weibull\"", repl);
        let spec = write(d.path(), file, &text);
        assert_rejected(d.path(), &spec, file, 3, needles);
    }
}

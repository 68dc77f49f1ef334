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

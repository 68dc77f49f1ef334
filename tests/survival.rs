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

/// The starter of a cure template with its cure table replaced by a beta prior
/// on the cured fraction itself, both parameters fitted.
fn on_cure_fraction(starter: &str, table: &str) -> String {
    let head = format!("[prior.{table}]");
    // The table's header line (not a comment that names it).
    let i = 1 + starter
        .find(&format!("\n{head}"))
        .expect("starter has the cure table");
    let j = i + starter[i..].find("\n\n").unwrap();
    format!(
        "{}[prior.cure_fraction]\nfamily = \"beta\"\nalpha = {{ fit = [0.5, 60.0] }}\nbeta = {{ fit = [0.5, 60.0] }}{}",
        &starter[..i],
        &starter[j..]
    )
}

/// ψ₁(x), the trigamma function: the recurrence ψ₁(x) = ψ₁(x + 1) + 1/x² up
/// to x ≥ 10, then the asymptotic series (Abramowitz & Stegun 6.4.12). Our own
/// code.
fn trigamma(mut x: f64) -> f64 {
    let mut s = 0.0;
    while x < 10.0 {
        s += 1.0 / (x * x);
        x += 1.0;
    }
    let x2 = 1.0 / (x * x);
    s + 1.0 / x
        + x2 / 2.0
        + (1.0 / x) * x2 * (1.0 / 6.0 - x2 * (1.0 / 30.0 - x2 * (1.0 / 42.0 - x2 / 30.0)))
}

#[test]
fn trigamma_matches_known_values() {
    // ψ₁(1) = π²/6, ψ₁(½) = π²/2 (Abramowitz & Stegun 6.4.2, 6.4.4).
    let pi2 = std::f64::consts::PI.powi(2);
    assert!((trigamma(1.0) - pi2 / 6.0).abs() < 1e-10);
    assert!((trigamma(0.5) - pi2 / 2.0).abs() < 1e-10);
}

#[test]
fn beta_prior_on_the_cure_fraction_recovers_a_beta_belief() {
    // No covariates, one belief: the cured fraction is Beta(6, 14). The
    // model's cured fraction is the prior's draw itself, so the fitted beta
    // prior must be Beta(6, 14) up to Monte Carlo error. Tolerance: 4 × the
    // fit's own Monte Carlo standard error (fit.json `mc_error`, from
    // independent replicates of the draw set), which is itself checked against
    // the iid bound √([I⁻¹]_jj / n), I the Fisher information of the beta
    // (a minimum-distance estimator from n iid draws is no better than the MLE;
    // scrambled Sobol points do better than iid).
    let d = tempfile::tempdir().unwrap();
    for (template, seed) in [("mixture-cure", 4), ("promotion-time-cure", 4)] {
        let text = format!(
            r#"title = "cure fraction recovery (invented)"
[model]
template = "{template}"
latency = "weibull"
[simulation]
draws = 4000
seed = {seed}
[prior.cure_fraction]
family = "beta"
alpha = {{ fit = [0.5, 60.0] }}
beta = {{ fit = [0.5, 60.0] }}
[prior.log_scale]
family = "normal"
mean = 2.5
sd = 0.3
[prior.shape]
family = "lognormal"
meanlog = 0.1
sdlog = 0.2
[[belief]]
quantity = "cure_fraction"
distribution = {{ family = "beta", alpha = 6, beta = 14 }}
"#
        );
        let spec = write(d.path(), &format!("{template}.toml"), &text);
        let out = d.path().join(template);
        let r = run(&[
            "fit",
            spec.to_str().unwrap(),
            "-o",
            out.to_str().unwrap(),
            "-q",
        ]);
        assert!(r.status.success(), "{template}: {}", stderr(&r));
        let v = json(&out.join("fit.json"));
        let (a, b) = (6.0, 14.0);
        let t = trigamma(a + b);
        let (ia, ib) = (trigamma(a) - t, trigamma(b) - t);
        let det = ia * ib - t * t;
        let n = v["draws"].as_f64().unwrap();
        let iid = [(ib / det / n).sqrt(), (ia / det / n).sqrt()];
        for (k, (name, want)) in [("alpha", a), ("beta", b)].into_iter().enumerate() {
            let key = format!("cure_fraction.{name}");
            let got = v["hyperparameters"][&key].as_f64().unwrap();
            let se = v["mc_error"][&key].as_f64().unwrap();
            assert!(
                se > 0.0 && se <= iid[k],
                "{template} {key}: mc_error {se} vs iid {}",
                iid[k]
            );
            assert!(
                (got - want).abs() <= 4.0 * se,
                "{template} {key}: {got} vs {want} (4 SE = {})",
                4.0 * se
            );
        }
        let verdict = v["verdict"].as_str().unwrap();
        assert_eq!(verdict, "met_within_noise", "{template}");
        // The record states the prior on the fraction, on (0, 1).
        let p = v["prior"]
            .as_array()
            .unwrap()
            .iter()
            .find(|p| p["parameter"] == "cure_fraction")
            .expect("cure_fraction in the record");
        assert_eq!(p["family"], "beta");
        // A batch row with the file as it is refits it to the same numbers.
        let table = write(d.path(), "table.csv", "id,simulation.seed\nr1,4\n");
        let bout = d.path().join(format!("{template}-batch"));
        let r = run(&[
            "-q",
            "batch",
            table.to_str().unwrap(),
            "--spec",
            spec.to_str().unwrap(),
            "--out",
            bout.to_str().unwrap(),
        ]);
        assert!(r.status.success(), "{template} batch: {}", stderr(&r));
        let res = std::fs::read_to_string(bout.join("results.csv")).unwrap();
        let head: Vec<&str> = res.lines().next().unwrap().split(',').collect();
        let row: Vec<&str> = res.lines().nth(1).unwrap().split(',').collect();
        let col = head
            .iter()
            .position(|h| *h == "cure_fraction.alpha")
            .unwrap();
        let got: f64 = row[col].parse().unwrap();
        let fit_alpha = v["hyperparameters"]["cure_fraction.alpha"]
            .as_f64()
            .unwrap();
        // (1e-12: serde_json's float parsing may differ from Rust's in the last bit.)
        assert!(
            (got / fit_alpha - 1.0).abs() < 1e-12,
            "{got} vs {fit_alpha}"
        );
    }
}

#[test]
fn cure_fraction_starters_fit_sweep_report_and_export() {
    // The mixture-cure and promotion-time starters with [prior.cure_fraction]
    // (beta, both parameters fitted) instead of their cure table: every belief
    // met, and the report, exports and (mixture cure) a sweep work on the new prior.
    let d = tempfile::tempdir().unwrap();
    for (name, table) in [
        ("mixture-cure", "cure_logit"),
        ("promotion-time-cure", "log_theta"),
    ] {
        let starter = SHIPPED.iter().find(|s| s.0 == name).unwrap().1;
        let text = on_cure_fraction(starter, table).replace("draws = 20000", "draws = 4000");
        assert!(!text.contains(&format!("[prior.{table}]")));
        let spec = write(d.path(), &format!("{name}.toml"), &text);
        let out = d.path().join(name);
        let r = run(&[
            "fit",
            spec.to_str().unwrap(),
            "-o",
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
        let h = &v["hyperparameters"];
        assert!(h["cure_fraction.alpha"].as_f64().unwrap() > 0.5);
        assert!(h.get(format!("{table}.mean")).is_none());
        assert!(out.join("report.html").is_file());
        let r = run(&["report", out.to_str().unwrap()]);
        assert!(r.status.success(), "{name} report: {}", stderr(&r));
        for lang in ["stan", "pymc", "brms", "json"] {
            let r = run(&["export", out.to_str().unwrap(), "--to", lang]);
            assert!(r.status.success(), "{name} {lang}: {}", stderr(&r));
        }
        let stan = stdout(&run(&["export", out.to_str().unwrap(), "--to", "stan"]));
        assert!(
            stan.contains("real<lower=0, upper=1> cure_fraction;"),
            "{stan}"
        );
        assert!(stan.contains("cure_fraction ~ beta("), "{stan}");
        if name != "mixture-cure" {
            continue;
        }
        let sweep = d.path().join(format!("{name}-sweep"));
        let r = run(&[
            "-q",
            "sweep",
            spec.to_str().unwrap(),
            "--widths",
            "0.75",
            "--beliefs",
            "1",
            "--out",
            sweep.to_str().unwrap(),
        ]);
        assert!(r.status.success(), "{name} sweep: {}", stderr(&r));
        let csv = std::fs::read_to_string(sweep.join("sweep.csv")).unwrap();
        assert!(csv.lines().next().unwrap().contains("cure_fraction.alpha"));
    }
}

#[test]
fn bad_cure_fraction_input_names_file_line_key_and_remedy() {
    let d = tempfile::tempdir().unwrap();
    let starter = SHIPPED[0].1;
    let base = on_cure_fraction(starter, "cure_logit");
    // A family off (0, 1): refused, with its support.
    let text = base.replace(
        "[prior.cure_fraction]\nfamily = \"beta\"",
        "[prior.cure_fraction]\nfamily = \"normal\"",
    );
    let spec = write(d.path(), "normal.toml", &text);
    assert_rejected(
        d.path(),
        &spec,
        "normal.toml:",
        3,
        &[
            "prior.cure_fraction.family",
            "family \"normal\" is not available for cure_fraction",
            "its support is the real line",
            "(0, 1)",
            "valid: beta, logit-normal",
        ],
    );
    let text = base.replace(
        "[prior.cure_fraction]\nfamily = \"beta\"",
        "[prior.cure_fraction]\nfamily = \"uniform\"",
    );
    let spec = write(d.path(), "uniform.toml", &text);
    assert_rejected(
        d.path(),
        &spec,
        "uniform.toml:",
        3,
        &[
            "\"uniform\" is not available",
            "beta with alpha = 1, beta = 1",
        ],
    );
    // Both scales of the one parameter.
    let text = format!("{base}\n[prior.cure_logit]\nfamily = \"normal\"\nmean = 0.0\nsd = 1.0\n");
    let spec = write(d.path(), "both.toml", &text);
    assert_rejected(
        d.path(),
        &spec,
        "both.toml:",
        3,
        &[
            "key `prior.cure_fraction`",
            "[prior.cure_fraction] and [prior.cure_logit] both given",
            "give one",
        ],
    );
    let promo = on_cure_fraction(SHIPPED[1].1, "log_theta");
    let text = format!("{promo}\n[prior.log_theta]\nfamily = \"normal\"\nmean = 0.0\nsd = 1.0\n");
    let spec = write(d.path(), "both-promo.toml", &text);
    assert_rejected(
        d.path(),
        &spec,
        "both-promo.toml:",
        3,
        &[
            "[prior.cure_fraction] and [prior.log_theta] both given",
            "ln(−ln cure_fraction)",
        ],
    );
    // No cured fraction to put it on.
    let text = base.replace("# cure = false", "cure = false");
    let spec = write(d.path(), "nocure.toml", &text);
    assert_rejected(
        d.path(),
        &spec,
        "nocure.toml:",
        3,
        &[
            "[prior.cure_fraction] given but [model] cure = false",
            "set cure = true",
        ],
    );
    // A fitted bound outside the beta's domain names the value.
    let text = base.replacen(
        "alpha = { fit = [0.5, 60.0] }",
        "alpha = { fit = [-1.0, 60.0] }",
        1,
    );
    let spec = write(d.path(), "domain.toml", &text);
    assert_rejected(
        d.path(),
        &spec,
        "domain.toml:",
        3,
        &["prior.cure_fraction.alpha", "-1"],
    );
}

#[test]
fn logit_normal_cure_fraction_is_the_normal_cure_logit() {
    // A logit-normal(μ, σ) prior on the cured fraction π is a normal(μ, σ)
    // prior on logit π (the definition of the logit-normal): the mixture-cure
    // starter fitted either way draws the same π (logistic of the same
    // normal draws), so the fitted numbers are the same bit for bit.
    let d = tempfile::tempdir().unwrap();
    let starter = SHIPPED[0].1.replace("draws = 20000", "draws = 2000");
    let i = 1 + starter.find("\n[prior.cure_logit]").unwrap();
    let j = i + starter[i..].find("\n\n").unwrap();
    let ln = format!(
        "{}[prior.cure_fraction]\nfamily = \"logit-normal\"\nmu = {{ fit = [-4.0, 4.0] }}\nsigma = {{ fit = [0.05, 2.5] }}{}",
        &starter[..i],
        &starter[j..]
    );
    let mut fitted = Vec::new();
    for (name, text) in [("logit", starter.clone()), ("fraction", ln)] {
        let spec = write(d.path(), &format!("{name}.toml"), &text);
        let out = d.path().join(name);
        let r = run(&[
            "fit",
            spec.to_str().unwrap(),
            "-o",
            out.to_str().unwrap(),
            "-q",
        ]);
        assert!(r.status.success(), "{name}: {}", stderr(&r));
        let v = json(&out.join("fit.json"));
        let h = &v["hyperparameters"];
        let (m, s) = match name {
            "logit" => ("cure_logit.mean", "cure_logit.sd"),
            _ => ("cure_fraction.mu", "cure_fraction.sigma"),
        };
        fitted.push([
            h[m].as_f64().unwrap(),
            h[s].as_f64().unwrap(),
            h["log_scale.mean"].as_f64().unwrap(),
            h["shape.meanlog"].as_f64().unwrap(),
        ]);
    }
    assert_eq!(fitted[0], fitted[1]);
}

//! Every registered family is usable wherever the templates offer families of
//! its kind, found through the registry, not by name: each real-valued family
//! as a mixture-cure `log_scale` prior (fit, then exported to Stan, PyMC and
//! brms) and as a linear regression's intercept prior (checked). A family added
//! to the registry is covered here without editing this file.

mod common;

use priorsmith::dist::params::Elicited;
use priorsmith::dist::{FamilyInfo, FAMILIES};

/// A `[prior.NAME]` table for `f` with fixed parameters at the family's start
/// hints for the elicited quantiles `pts` (a valid member of the family).
fn prior_table(name: &str, f: &FamilyInfo, pts: &[(f64, f64)]) -> String {
    let e = Elicited::new(pts);
    let mut t = format!("[prior.{name}]\nfamily = \"{}\"\n", f.name);
    for spec in f.specs {
        let v = spec.domain.from_working(spec.start.working(&e, 0.0));
        t.push_str(&format!("{} = {v:?}\n", spec.name));
    }
    t
}

/// Replace the `[prior.NAME]` table of a starter (up to the next table).
fn with_prior(starter: &str, name: &str, table: &str) -> String {
    let head = format!("[prior.{name}]");
    let Some(i) = starter.find(&head) else {
        panic!("starter has no {head}")
    };
    let j = starter[i + 1..]
        .find("\n[")
        .map_or(starter.len(), |k| i + 2 + k);
    format!("{}{table}\n{}", &starter[..i], &starter[j..])
}

fn real_valued() -> Vec<&'static FamilyInfo> {
    let v: Vec<_> = FAMILIES
        .iter()
        .copied()
        .filter(|f| f.real_valued())
        .collect();
    assert!(v.len() >= 4, "registry lost its real-valued families");
    v
}

#[test]
fn real_valued_families_fit_and_export_as_a_cure_log_scale() {
    let dir = tempfile::tempdir().unwrap();
    // Log latency scale around 3 (about 20 months).
    let pts = [(0.1, 2.0), (0.5, 3.0), (0.9, 4.0)];
    for f in real_valued() {
        let spec = with_prior(
            common::EXAMPLE,
            "log_scale",
            &prior_table("log_scale", f, &pts),
        )
        .replace("draws = 20000", "draws = 2000");
        let path = common::write(dir.path(), &format!("{}.toml", f.name), &spec);
        let out = dir.path().join(f.name);
        let o = common::run(&[
            "fit",
            path.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--quiet",
        ]);
        assert!(o.status.success(), "{}: {}", f.name, common::stderr(&o));
        let fit = common::json(&out.join("fit.json"));
        let stated = fit["prior"].as_array().and_then(|ps| {
            ps.iter()
                .find(|p| p["parameter"] == "log_scale")
                .and_then(|p| p["family"].as_str())
        });
        assert_eq!(stated, Some(f.name));
        for lang in ["stan", "pymc", "brms"] {
            let o = common::run(&["export", out.to_str().unwrap(), "--to", lang]);
            assert!(
                o.status.success(),
                "{} {lang}: {}",
                f.name,
                common::stderr(&o)
            );
            let code = common::stdout(&o);
            assert!(
                code.lines()
                    .any(|l| l.contains("log_scale") || l.contains("logScale")),
                "{} {lang}: no log_scale statement in\n{code}",
                f.name
            );
        }
    }
}

#[test]
fn real_valued_families_are_accepted_as_a_regression_intercept() {
    let dir = tempfile::tempdir().unwrap();
    let starter = include_str!("../model-templates/linear.toml");
    let pts = [(0.1, -1.0), (0.5, 0.0), (0.9, 1.0)];
    for f in real_valued() {
        let spec = with_prior(starter, "intercept", &prior_table("intercept", f, &pts));
        let path = common::write(dir.path(), &format!("{}.toml", f.name), &spec);
        let o = common::run(&["check", path.to_str().unwrap()]);
        assert!(o.status.success(), "{}: {}", f.name, common::stderr(&o));
    }
}

/// Where a parameter takes its values, for the support rule.
#[derive(Clone, Copy, Debug, PartialEq)]
enum On {
    Real,
    Positive,
    /// (0, ∞) and, by role, uniform (survival `shape`).
    PositiveOrUniform,
    Unit,
}

/// Every (template starter, parameter, where it lives) whose `[prior.*]` table
/// takes a family; `cure_fraction` replaces the cure table of the two cure
/// templates.
const SLOTS: [(&str, &str, &str, On); 21] = [
    ("linear", "intercept", "intercept", On::Real),
    ("linear", "sigma", "sigma", On::Positive),
    ("linear-multilevel", "sigma", "sigma", On::Positive),
    (
        "linear-multilevel",
        "cluster_sd",
        "cluster_sd",
        On::Positive,
    ),
    (
        "logistic-multilevel",
        "cluster_sd",
        "cluster_sd",
        On::Positive,
    ),
    ("logistic-multilevel", "x1", "x1", On::Real),
    (
        "poisson-multilevel",
        "cluster_sd",
        "cluster_sd",
        On::Positive,
    ),
    ("poisson", "intercept", "intercept", On::Real),
    ("mixture-cure", "cure_logit", "cure_logit", On::Real),
    ("mixture-cure", "cure_logit", "cure_fraction", On::Unit),
    ("mixture-cure", "log_scale", "log_scale", On::Real),
    ("mixture-cure", "shape", "shape", On::PositiveOrUniform),
    ("promotion-time-cure", "log_theta", "log_theta", On::Real),
    (
        "promotion-time-cure",
        "log_theta",
        "cure_fraction",
        On::Unit,
    ),
    (
        "promotion-time-cure",
        "shape",
        "shape",
        On::PositiveOrUniform,
    ),
    (
        "parametric-survival",
        "shape",
        "shape",
        On::PositiveOrUniform,
    ),
    ("parametric-survival", "log_scale", "log_scale", On::Real),
    (
        "parametric-survival",
        "hazard_effect_arm",
        "hazard_effect_arm",
        On::Real,
    ),
    ("piecewise-hazard", "log_hazard_1", "log_hazard_1", On::Real),
    (
        "piecewise-hazard",
        "hazard_walk_sd",
        "hazard_walk_sd",
        On::Positive,
    ),
    (
        "piecewise-hazard",
        "hazard_effect_arm",
        "hazard_effect_arm",
        On::Real,
    ),
];

fn starter(name: &str) -> &'static str {
    match name {
        "linear" => include_str!("../model-templates/linear.toml"),
        "linear-multilevel" => include_str!("../model-templates/linear-multilevel.toml"),
        "logistic-multilevel" => include_str!("../model-templates/logistic-multilevel.toml"),
        "poisson-multilevel" => include_str!("../model-templates/poisson-multilevel.toml"),
        "poisson" => include_str!("../model-templates/poisson.toml"),
        "mixture-cure" => include_str!("../model-templates/mixture-cure.toml"),
        "promotion-time-cure" => include_str!("../model-templates/promotion-time-cure.toml"),
        "parametric-survival" => include_str!("../model-templates/parametric-survival.toml"),
        "piecewise-hazard" => include_str!("../model-templates/piecewise-hazard.toml"),
        other => panic!("no starter {other}"),
    }
}

/// The support rule over templates × parameters × families (checked through
/// the library's spec parser): a parameter on ℝ takes every family on the real
/// line or on an interval its prior sets, one on (0, ∞) every family on (0, ∞)
/// (half-Cauchy, half-t and log-logistic included), a probability every family
/// on (0, 1); a refused family's error says why (its support).
#[test]
fn support_rule_over_templates_parameters_and_families() {
    use priorsmith::dist::Support;
    let mut accepted_on = std::collections::BTreeMap::new();
    for (template, table, param, on) in SLOTS {
        let pts: &[(f64, f64)] = match on {
            On::Real => &[(0.1, -1.0), (0.5, 0.0), (0.9, 1.0)],
            On::Positive | On::PositiveOrUniform => &[(0.1, 0.5), (0.5, 1.0), (0.9, 2.0)],
            On::Unit => &[(0.1, 0.15), (0.5, 0.25), (0.9, 0.4)],
        };
        for f in FAMILIES.iter().copied() {
            let want = match on {
                On::Real => f.real_valued(),
                On::Positive => f.support == Support::Positive,
                On::PositiveOrUniform => f.support == Support::Positive || f.name == "uniform",
                On::Unit => f.support == Support::Unit,
            };
            let text = with_prior(starter(template), table, &prior_table(param, f, pts));
            let got = priorsmith::spec::parse(&text, None, &Default::default());
            match (&got, want) {
                (Ok(_), true) => {
                    accepted_on
                        .entry((template, param))
                        .or_insert_with(Vec::new)
                        .push(f.name);
                }
                (Err(e), false) => {
                    let msg = e.to_string();
                    assert!(
                        msg.contains(&format!("family \"{}\" is not available", f.name))
                            && msg.contains("its support is"),
                        "{template} {param} {}: refused without the reason: {msg}",
                        f.name
                    );
                }
                (Ok(_), false) => panic!("{template} {param}: {} accepted", f.name),
                (Err(e), true) => panic!("{template} {param}: {} refused: {e}", f.name),
            }
        }
    }
    // The families the issue names, by name (so a change of the rule is seen).
    let has = |t: &str, p: &str, f: &str| accepted_on[&(t, p)].contains(&f);
    for (t, p) in [
        ("linear", "sigma"),
        ("linear-multilevel", "cluster_sd"),
        ("logistic-multilevel", "cluster_sd"),
        ("poisson-multilevel", "cluster_sd"),
        ("mixture-cure", "shape"),
        ("piecewise-hazard", "hazard_walk_sd"),
    ] {
        for f in [
            "half-cauchy",
            "half-student-t",
            "loglogistic",
            "half-normal",
        ] {
            assert!(has(t, p, f), "{t} {p}: {f} refused");
        }
    }
    for t in ["mixture-cure", "promotion-time-cure"] {
        assert_eq!(accepted_on[&(t, "cure_fraction")], ["beta", "logit-normal"]);
    }
}

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

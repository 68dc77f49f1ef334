//! Registry tests: every family in [`FAMILIES`] declares what the rest of the
//! program asks of it, and its declarations hold. A new family is checked here
//! without being named.

use super::invariants::{check, check_reference};
use super::params::Elicited;
use super::{family, Base, Continuous, FamilyInfo, Form, Forms, Role, Support, FAMILIES};
use crate::export::{brms, pymc, stan, Header, Item, Scalar};
use crate::numerics::norm_quantile;

fn reference(f: &FamilyInfo) -> Box<dyn Continuous> {
    (f.build)(f.reference.params)
        .unwrap_or_else(|e| panic!("{}: reference parameters rejected: {e}", f.name))
}

#[test]
fn names_are_unique_and_parameters_declared_once() {
    for (i, f) in FAMILIES.iter().enumerate() {
        assert!(
            FAMILIES[..i].iter().all(|g| g.name != f.name),
            "{} twice",
            f.name
        );
        let declared: Vec<&str> = f.specs.iter().map(|p| p.name).collect();
        assert_eq!(f.params, declared.as_slice(), "{}", f.name);
        assert_eq!(f.reference.params.len(), f.params.len(), "{}", f.name);
        assert_eq!(family(f.name).map(|g| g.name), Some(f.name));
    }
}

#[test]
fn every_family_matches_its_reference_values() {
    for f in FAMILIES {
        let r = &f.reference;
        assert!(!r.source.trim().is_empty(), "{}: no source", f.name);
        assert!(
            !r.points.is_empty() && !r.quantiles.is_empty(),
            "{}: no reference values",
            f.name
        );
        let d = reference(f);
        check_reference(d.as_ref(), r);
        check(d.as_ref());
    }
}

#[test]
fn support_and_base_agree_with_the_distribution() {
    for f in FAMILIES {
        let d = reference(f);
        let (lo, hi) = d.support();
        let ok = match f.support {
            Support::Real => lo == f64::NEG_INFINITY && hi == f64::INFINITY,
            Support::Positive => lo == 0.0 && hi == f64::INFINITY,
            Support::Unit => lo == 0.0 && hi == 1.0,
            Support::Interval => lo.is_finite() && hi.is_finite() && lo < hi,
        };
        assert!(ok, "{}: support {:?} but ({lo}, {hi})", f.name, f.support);
        // Draws from evenly spread base variates follow the family: the sorted
        // draws sit at their plotting positions (a grid, not a random sample,
        // so the only error is the grid's 1/n; a map need not be monotone, as
        // the half-normal's θ = scale·|z| is not).
        let n = 2000;
        let u: Vec<f64> = (0..n).map(|i| (i as f64 + 0.5) / n as f64).collect();
        let base: Vec<f64> = match f.base {
            Base::Normal => u.iter().map(|p| norm_quantile(*p)).collect(),
            Base::Uniform => u.clone(),
        };
        let mut x = vec![0.0; n];
        d.fill_from_base(&base, &mut x);
        x.sort_by(f64::total_cmp);
        for (xi, ui) in x.iter().zip(&u) {
            let gap = (d.cdf(*xi) - ui).abs();
            assert!(gap <= 1.0 / n as f64, "{}: cdf({xi}) is {gap} off", f.name);
        }
    }
}

#[test]
fn domains_agree_with_the_constructors() {
    for f in FAMILIES {
        for (k, spec) in f.specs.iter().enumerate() {
            let mut bad = vec![f64::NAN, f64::INFINITY];
            if spec.domain == super::Domain::Positive {
                bad.extend([0.0, -1.0]);
            }
            for x in bad {
                let mut p = f.reference.params.to_vec();
                p[k] = x;
                assert!(!spec.domain.contains(x));
                match (f.build)(&p) {
                    Err(e) => assert_eq!(e.param, spec.name, "{}: {x}", f.name),
                    Ok(_) => panic!("{}: `{}` = {x} accepted", f.name, spec.name),
                }
            }
            let w = spec.domain.to_working(f.reference.params[k]);
            let back = spec.domain.from_working(w);
            assert!((back - f.reference.params[k]).abs() < 1e-12 * back.abs().max(1.0));
        }
    }
}

#[test]
fn every_family_builds_from_its_start_hints() {
    // Elicited quantiles on a positive scale, inside (0, 1), and on the real line.
    let sets: [&[(f64, f64)]; 3] = [
        &[(0.05, 1.0), (0.5, 3.0), (0.95, 12.0)],
        &[(0.1, 0.15), (0.5, 0.25), (0.9, 0.40)],
        &[(0.25, -2.0), (0.75, 5.5)],
    ];
    for f in FAMILIES {
        // Quantiles inside the family's support (a uniform's comes from them).
        let inside = |x: f64| match f.support {
            Support::Real | Support::Interval => true,
            Support::Positive => x > 0.0,
            Support::Unit => x > 0.0 && x < 1.0,
        };
        for pts in sets.iter().filter(|pts| pts.iter().all(|p| inside(p.1))) {
            let e = Elicited::new(pts);
            for s in [0.0, 1.0, -1.0, 2.0, -2.0] {
                let p: Vec<f64> = f
                    .specs
                    .iter()
                    .map(|spec| spec.domain.from_working(spec.start.working(&e, s)))
                    .collect();
                let d = (f.build)(&p)
                    .unwrap_or_else(|err| panic!("{}: start {p:?} rejected: {err}", f.name));
                if s == 0.0 {
                    check(d.as_ref());
                }
            }
        }
    }
}

fn header() -> Header {
    Header {
        title: "registry test".into(),
        template: "registry-test".into(),
        tool_version: "0".into(),
        spec_digest: "0".into(),
        seed: 1,
        draws: 1,
        verdict: "met within noise".into(),
        date: "2026-01-01".into(),
    }
}

fn declared<F>(form: &Form<F>) -> Result<(), &'static str> {
    match form {
        Form::Written(_) => Ok(()),
        Form::Absent(why) => Err(why),
    }
}

#[test]
fn every_family_exports_to_every_language_or_says_it_cannot() {
    let h = header();
    for f in FAMILIES {
        let scalar = Scalar {
            parameter: "theta".into(),
            family: f,
            params: f.reference.params.to_vec(),
            about: String::new(),
        };
        let items = [Item::Scalar(scalar.clone())];
        type Render = fn(&Header, &[Item]) -> crate::error::Result<String>;
        let langs: [(&str, Result<(), &str>, Render); 3] = [
            ("stan", declared(&f.forms.stan), stan::render),
            ("pymc", declared(&f.forms.pymc), pymc::render),
            ("brms", declared(&f.forms.brms), brms::render),
        ];
        for (lang, decl, render) in langs {
            match (decl, render(&h, &items)) {
                (Ok(()), Ok(code)) => assert!(code.contains("theta"), "{}: {lang}", f.name),
                (Err(why), Err(e)) => {
                    let msg = e.to_string();
                    assert!(msg.contains(f.name) && msg.contains(why), "{msg}");
                }
                (Ok(()), Err(e)) => panic!("{}: {lang} export failed: {e}", f.name),
                (Err(_), Ok(_)) => panic!("{}: {lang} exported a declared absence", f.name),
            }
        }
        // Stan's constraint is the support: declared on the parameter, or on the
        // parameter derived from a helper.
        if let Ok(form) = stan::form(&scalar) {
            let bounds = match form.derived {
                Some((_, lo, hi)) => (lo, hi),
                None => (form.lower, form.upper),
            };
            let (lo, hi) = reference(f).support();
            let finite = |x: f64| x.is_finite().then_some(x);
            assert_eq!(bounds, (finite(lo), finite(hi)), "{}: Stan bounds", f.name);
        }
    }
}

/// The allowed sets of the templates before the registry decided them: (family,
/// real-valued, noise sd, latency shape). A family added later is not listed
/// here; its attributes decide where it is offered.
const BEFORE: [(&str, bool, bool, bool); 15] = [
    ("normal", true, false, false),
    ("lognormal", false, false, true),
    ("gamma", false, false, true),
    ("inverse-gamma", false, true, true),
    ("beta", false, false, false),
    ("logit-normal", false, false, false),
    ("student-t", true, false, false),
    ("half-normal", false, true, true),
    ("half-student-t", false, true, false),
    ("half-cauchy", false, false, false),
    ("exponential", false, true, true),
    ("uniform", true, false, true),
    ("weibull", false, false, true),
    ("laplace", true, false, false),
    ("loglogistic", false, false, false),
];

#[test]
fn template_allow_lists_keep_their_families() {
    for (name, real, noise, shape) in BEFORE {
        let f = family(name).unwrap_or_else(|| panic!("{name} left the registry"));
        assert_eq!(f.real_valued(), real, "{name}");
        assert_eq!(f.suits(Role::NoiseSd), noise, "{name}");
        assert_eq!(f.suits(Role::LatencyShape), shape, "{name}");
    }
}

#[test]
fn a_declared_absence_is_a_clear_export_error() {
    // The normal family as if PyMC and brms could not state it.
    static NO_PYMC: FamilyInfo = FamilyInfo {
        forms: Forms {
            pymc: Form::Absent("PyMC has no such class"),
            brms: Form::Absent("brms has no such prior"),
            ..super::normal::INFO.forms
        },
        ..super::normal::INFO
    };
    let items = [Item::Scalar(Scalar {
        parameter: "theta".into(),
        family: &NO_PYMC,
        params: vec![0.0, 1.0],
        about: String::new(),
    })];
    assert!(stan::render(&header(), &items).is_ok());
    for (render, lang, why) in [
        (
            pymc::render as fn(&Header, &[Item]) -> _,
            "PyMC",
            "no such class",
        ),
        (brms::render, "brms", "no such prior"),
    ] {
        let e = render(&header(), &items).unwrap_err().to_string();
        assert!(
            e.contains(&format!("export to {lang} does not know family \"normal\""))
                && e.contains("`theta`")
                && e.contains(why),
            "{e}"
        );
    }
}

//! Integration tests for `priorsmith export` and `priorsmith report`, on the real
//! binary and temporary folders.
//!
//! Round trip: the exported code is parsed back by the small parsers below, each
//! statement is turned into a distribution using the *language's* documented
//! parameterisation (written here independently of src/export: Stan Functions
//! Reference, "Continuous distributions on [0, ∞)" etc.; PyMC 5 API reference,
//! `pymc.distributions.continuous`; brms prior strings are Stan calls; from
//! memory of those references), and its quantiles are compared with those of
//! the fitted prior built with `priorsmith::dist`. A rate written where a scale
//! belongs, or an sd where a variance belongs, moves the quantiles and fails.
//! Constrained parameters follow Stan's semantics: a declared bound truncates
//! the stated distribution, F_trunc⁻¹(p) = F⁻¹(F(L) + p·(F(U) − F(L))).

mod common;

use priorsmith::dist::{self, Continuous};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const FIXTURE: &str = include_str!("fixtures/all-families-fit.json");
const PROBS: [f64; 7] = [0.01, 0.05, 0.25, 0.5, 0.75, 0.95, 0.99];

fn run(args: &[&str]) -> Output {
    common::bin()
        .args(args)
        .env("SOURCE_DATE_EPOCH", "1767225600") // 2026-01-01
        .output()
        .expect("binary runs")
}

fn ok(args: &[&str]) -> String {
    let o = run(args);
    assert!(
        o.status.success(),
        "priorsmith {args:?} failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    String::from_utf8(o.stdout).expect("utf-8")
}

fn fixture_dir() -> tempfile::TempDir {
    let d = tempfile::tempdir().unwrap();
    std::fs::write(d.path().join("fit.json"), FIXTURE).unwrap();
    d
}

/// A distribution as CDF and quantile closures.
struct D {
    cdf: Box<dyn Fn(f64) -> f64>,
    q: Box<dyn Fn(f64) -> f64>,
}

fn from(c: Box<dyn Continuous>) -> D {
    let c: std::sync::Arc<dyn Continuous> = c.into();
    let c2 = c.clone();
    D {
        cdf: Box::new(move |x| c.cdf(x)),
        q: Box::new(move |p| c2.quantile(p)),
    }
}

fn logistic(mu: f64, s: f64) -> D {
    D {
        cdf: Box::new(move |x| 1.0 / (1.0 + (-(x - mu) / s).exp())),
        q: Box::new(move |p| mu + s * (p / (1.0 - p)).ln()),
    }
}

fn build(f: &str, p: &[f64]) -> D {
    from(dist::build(f, p).unwrap().unwrap())
}

/// Stan's parameterisations (Stan Functions Reference).
fn stan_dist(name: &str, a: &[f64]) -> D {
    match (name, a.len()) {
        ("normal", 2) => build("normal", a), // normal(mu, sigma), sigma an sd
        ("lognormal", 2) => build("lognormal", a), // lognormal(mu, sigma) of log y
        ("gamma", 2) => build("gamma", a),   // gamma(alpha, beta): beta a rate
        ("inv_gamma", 2) => build("inverse-gamma", a), // inv_gamma(alpha, beta): beta a scale
        ("beta", 2) => build("beta", a),     // beta(alpha, beta)
        ("student_t", 3) => build("student-t", a), // student_t(nu, mu, sigma)
        ("cauchy", 2) => build("student-t", &[1.0, a[0], a[1]]), // Cauchy = t with 1 df
        ("exponential", 1) => build("exponential", a), // exponential(beta): beta a rate
        ("uniform", 2) => build("uniform", a), // uniform(alpha, beta)
        ("weibull", 2) => build("weibull", a), // weibull(alpha shape, sigma scale)
        ("double_exponential", 2) => build("laplace", a), // double_exponential(mu, sigma scale)
        ("logistic", 2) => logistic(a[0], a[1]), // logistic(mu, sigma scale)
        ("gumbel", 2) => build("gumbel", a), // gumbel(mu, beta): beta a scale
        _ => panic!(
            "test parser does not know Stan distribution {name}/{}",
            a.len()
        ),
    }
}

/// PyMC 5 parameterisations (PyMC API reference).
fn pymc_dist(cls: &str, k: &BTreeMap<String, f64>) -> (D, Option<f64>) {
    let g = |n: &str| *k.get(n).unwrap_or_else(|| panic!("{cls} lacks {n}"));
    // (distribution, lower truncation for the Half* families)
    match cls {
        "Normal" => (build("normal", &[g("mu"), g("sigma")]), None),
        "LogNormal" => (build("lognormal", &[g("mu"), g("sigma")]), None),
        "Gamma" => (build("gamma", &[g("alpha"), g("beta")]), None), // beta = rate
        "InverseGamma" => (build("inverse-gamma", &[g("alpha"), g("beta")]), None), // beta = scale
        "Beta" => (build("beta", &[g("alpha"), g("beta")]), None),
        "LogitNormal" => {
            let n = build("normal", &[g("mu"), g("sigma")]);
            let inv = |x: f64| 1.0 / (1.0 + (-x).exp());
            (
                D {
                    cdf: Box::new(move |x| (n.cdf)((x / (1.0 - x)).ln())),
                    q: Box::new({
                        let n = build("normal", &[g("mu"), g("sigma")]);
                        move |p| inv((n.q)(p))
                    }),
                },
                None,
            )
        }
        "StudentT" => (build("student-t", &[g("nu"), g("mu"), g("sigma")]), None),
        "HalfNormal" => (build("normal", &[0.0, g("sigma")]), Some(0.0)),
        "HalfStudentT" => (build("student-t", &[g("nu"), 0.0, g("sigma")]), Some(0.0)),
        "HalfCauchy" => (build("student-t", &[1.0, 0.0, g("beta")]), Some(0.0)),
        "Exponential" => (build("exponential", &[g("lam")]), None), // lam = rate
        "Uniform" => (build("uniform", &[g("lower"), g("upper")]), None),
        "Weibull" => (build("weibull", &[g("alpha"), g("beta")]), None), // beta = scale
        "Laplace" => (build("laplace", &[g("mu"), g("b")]), None),
        "Logistic" => (logistic(g("mu"), g("s")), None),
        "Gumbel" => (build("gumbel", &[g("mu"), g("beta")]), None), // beta = scale
        _ => panic!("test parser does not know PyMC class {cls}"),
    }
}

/// Quantile of `d` truncated to [lo, hi].
fn truncated(d: D, lo: Option<f64>, hi: Option<f64>) -> Box<dyn Fn(f64) -> f64> {
    let fl = lo.map_or(0.0, |l| (d.cdf)(l));
    let fu = hi.map_or(1.0, |u| (d.cdf)(u));
    Box::new(move |p| (d.q)(fl + p * (fu - fl)))
}

fn transform(func: &str) -> fn(f64) -> f64 {
    match func {
        "inv_logit" | "invlogit" => |x| 1.0 / (1.0 + (-x).exp()),
        "exp" => f64::exp,
        other => panic!("unknown transform {other}"),
    }
}

fn args(s: &str) -> Vec<f64> {
    s.split(',')
        .map(|a| {
            a.trim()
                .parse::<f64>()
                .unwrap_or_else(|_| panic!("not a number: {a}"))
        })
        .collect()
}

/// `name(args)` → (name, args).
fn call(s: &str) -> (String, String) {
    let open = s.find('(').expect("(");
    let close = s.rfind(')').expect(")");
    (s[..open].trim().to_string(), s[open + 1..close].to_string())
}

fn bounds(decl: &str) -> (Option<f64>, Option<f64>) {
    let mut lo = None;
    let mut hi = None;
    if let (Some(a), Some(b)) = (decl.find('<'), decl.find('>')) {
        for part in decl[a + 1..b].split(',') {
            let (k, v) = part.split_once('=').unwrap();
            let v: f64 = v.trim().parse().unwrap();
            match k.trim() {
                "lower" | "lb" => lo = Some(v),
                "upper" | "ub" => hi = Some(v),
                other => panic!("unknown bound {other}"),
            }
        }
    }
    (lo, hi)
}

type QFn = Box<dyn Fn(f64) -> f64>;
type Quantiles = BTreeMap<String, QFn>;

/// Parse exported Stan code: parameter name → quantile function.
fn parse_stan(code: &str) -> Quantiles {
    let mut block = "";
    let mut decl: BTreeMap<String, (Option<f64>, Option<f64>)> = BTreeMap::new();
    let mut derived: BTreeMap<String, (String, String)> = BTreeMap::new();
    let mut stmt: BTreeMap<String, (String, Vec<f64>)> = BTreeMap::new();
    for raw in code.lines() {
        let line = raw.split("//").next().unwrap().trim();
        if line.is_empty() {
            continue;
        }
        if line.ends_with('{') {
            block = match line.trim_end_matches('{').trim() {
                "parameters" => "p",
                "transformed parameters" => "t",
                "model" => "m",
                other => panic!("unexpected block {other}"),
            };
            continue;
        }
        if line == "}" {
            continue;
        }
        let line = line.trim_end_matches(';');
        match block {
            "p" => {
                let name = line.rsplit(' ').next().unwrap().to_string();
                decl.insert(name, bounds(line));
            }
            "t" => {
                let (lhs, rhs) = line.split_once(" = ").unwrap();
                let lhs = lhs.trim();
                let name = lhs.rsplit(' ').next().unwrap().to_string();
                let (f, a) = call(rhs);
                derived.insert(name, (f, a.trim().to_string()));
            }
            "m" => {
                let (lhs, rhs) = line.split_once('~').unwrap();
                let (f, a) = call(rhs);
                stmt.insert(lhs.trim().to_string(), (f, args(&a)));
            }
            _ => panic!("statement outside a block: {line}"),
        }
    }
    let mut out: Quantiles = BTreeMap::new();
    let sampled = |v: &str| -> Box<dyn Fn(f64) -> f64> {
        let (f, a) = &stmt[v];
        let (lo, hi) = decl[v];
        truncated(stan_dist(f, a), lo, hi)
    };
    for (name, (f, v)) in &derived {
        let q = sampled(v);
        let g = transform(f);
        out.insert(name.clone(), Box::new(move |p| g(q(p))));
    }
    for name in decl.keys() {
        if !derived.values().any(|(_, v)| v == name) {
            out.insert(name.clone(), sampled(name));
        }
    }
    out
}

/// Parse exported PyMC code.
fn parse_pymc(code: &str) -> Quantiles {
    let mut dists: BTreeMap<String, (String, BTreeMap<String, f64>)> = BTreeMap::new();
    let mut derived: BTreeMap<String, (String, String)> = BTreeMap::new();
    for raw in code.lines() {
        let line = raw.split('#').next().unwrap().trim();
        let Some((lhs, rhs)) = line.split_once(" = pm.") else {
            continue;
        };
        let (cls, inner) = call(rhs);
        let mut parts = inner.splitn(2, ',');
        let quoted = parts.next().unwrap().trim().trim_matches('"').to_string();
        assert_eq!(quoted, lhs.trim(), "PyMC name must match the variable");
        let rest = parts.next().unwrap_or_default().trim().to_string();
        if cls == "Deterministic" {
            let (f, a) = call(rest.trim_start_matches("pm.math."));
            derived.insert(lhs.trim().to_string(), (f, a));
            continue;
        }
        let kw: BTreeMap<String, f64> = rest
            .split(',')
            .map(|kv| {
                let (k, v) = kv.split_once('=').unwrap();
                (k.trim().to_string(), v.trim().parse().unwrap())
            })
            .collect();
        dists.insert(lhs.trim().to_string(), (cls, kw));
    }
    let mut out: Quantiles = BTreeMap::new();
    let q_of = |v: &str| {
        let (cls, kw) = &dists[v];
        let (d, lo) = pymc_dist(cls, kw);
        truncated(d, lo, None)
    };
    for (name, (f, v)) in &derived {
        let q = q_of(v);
        let g = transform(f);
        out.insert(name.clone(), Box::new(move |p| g(q(p))));
    }
    for name in dists.keys() {
        if !derived.values().any(|(_, v)| v == name) {
            out.insert(name.clone(), q_of(name));
        }
    }
    out
}

/// Parse exported brms code (set_prior calls and the comments naming parameters).
fn parse_brms(code: &str) -> Quantiles {
    let mut alias: BTreeMap<String, String> = BTreeMap::new(); // nlpar → parameter
    let mut derived: BTreeMap<String, (String, String)> = BTreeMap::new(); // parameter → (f, nlpar)
    let mut out: Quantiles = BTreeMap::new();
    let mut priors: Vec<(String, QFn)> = Vec::new(); // (nlpar, quantile)
    for raw in code.lines() {
        let line = raw.trim();
        if let Some(c) = line.strip_prefix("# nlpar ") {
            let (nl, p) = c.split_once(" is the parameter ").unwrap();
            alias.insert(nl.to_string(), p.to_string());
        } else if let Some(c) = line.strip_prefix("# ") {
            if let Some((p, rest)) = c.split_once(" is ") {
                if let Some((expr, _)) = rest.split_once(':') {
                    if expr.contains('(') && !p.contains(' ') {
                        let (f, a) = call(expr);
                        derived.insert(p.to_string(), (f, a));
                    }
                }
            }
        } else if let Some(c) = line.strip_prefix("set_prior(") {
            let c = c.trim_end_matches(',').trim_end_matches(')');
            let (dist_s, rest) = c[1..].split_once('"').unwrap();
            let (f, a) = call(dist_s);
            let mut nlpar = String::new();
            let (mut lo, mut hi) = (None, None);
            for kv in rest.split(',').skip(1) {
                let (k, v) = kv.split_once('=').unwrap();
                let v = v.trim().trim_matches('"');
                match k.trim() {
                    "class" => assert_eq!(v, "b"),
                    "nlpar" => {
                        assert!(!v.contains('_') && !v.contains('.'), "brms nlpar {v}");
                        nlpar = v.to_string()
                    }
                    "lb" => lo = Some(v.parse().unwrap()),
                    "ub" => hi = Some(v.parse().unwrap()),
                    other => panic!("unknown set_prior argument {other}"),
                }
            }
            priors.push((nlpar, truncated(stan_dist(&f, &args(&a)), lo, hi)));
        }
    }
    for (nl, q) in priors {
        if let Some((p, (f, _))) = derived.iter().find(|(_, (_, a))| *a == nl) {
            let g = transform(f);
            out.insert(p.clone(), Box::new(move |x| g(q(x))));
        } else {
            out.insert(alias.get(&nl).cloned().unwrap_or(nl), q);
        }
    }
    out
}

/// The fitted priors of a fit.json: parameter → (family, params).
fn fitted(json: &str) -> Vec<(String, String, Vec<f64>)> {
    let v: serde_json::Value = serde_json::from_str(json).unwrap();
    v["prior"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| {
            (
                s["parameter"].as_str().unwrap().to_string(),
                s["family"].as_str().unwrap().to_string(),
                s["params"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .map(|p| p[1].as_f64().unwrap())
                    .collect(),
            )
        })
        .collect()
}

/// Compare quantiles; the exports round to 6 significant digits, so a relative
/// tolerance of 1e-4 of the interquartile range is far above rounding and far
/// below any parameterisation slip.
fn compare(json: &str, parsed: &Quantiles, lang: &str) -> Result<(), String> {
    let want = fitted(json);
    if parsed.len() != want.len() {
        return Err(format!(
            "{lang}: parsed {:?}, expected {} parameters",
            parsed.keys().collect::<Vec<_>>(),
            want.len()
        ));
    }
    for (name, fam, params) in want {
        let d = dist::build(&fam, &params).unwrap().unwrap();
        let q = parsed
            .get(&name)
            .ok_or_else(|| format!("{lang}: no statement for {name}"))?;
        let iqr = d.quantile(0.75) - d.quantile(0.25);
        for p in PROBS {
            let (a, b) = (q(p), d.quantile(p));
            if (a - b).abs() > 1e-4 * (iqr + b.abs()) {
                return Err(format!(
                    "{lang}: {name} ({fam}) quantile {p}: exported {a}, fitted {b}"
                ));
            }
        }
    }
    Ok(())
}

fn export(dir: &Path, lang: &str) -> String {
    ok(&["export", dir.to_str().unwrap(), "--to", lang])
}

#[test]
fn stan_round_trip_every_family() {
    let d = fixture_dir();
    let code = export(d.path(), "stan");
    compare(FIXTURE, &parse_stan(&code), "stan").unwrap();
    assert!(code.contains("real<lower=0> p_gamma;"));
    assert!(
        code.contains("real<lower=0, upper=1> p_logit_normal = inv_logit(p_logit_normal_logit);")
    );
}

#[test]
fn pymc_round_trip_every_family() {
    let d = fixture_dir();
    let code = export(d.path(), "pymc");
    compare(FIXTURE, &parse_pymc(&code), "pymc").unwrap();
    assert!(code.contains("with pm.Model() as model:"));
}

#[test]
fn brms_round_trip_every_family() {
    let d = fixture_dir();
    let code = export(d.path(), "brms");
    compare(FIXTURE, &parse_brms(&code), "brms").unwrap();
    assert!(code.contains("priors <- c("));
}

#[test]
fn json_round_trip_every_family() {
    let d = fixture_dir();
    let text = export(d.path(), "json");
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let mut parsed: Quantiles = BTreeMap::new();
    for p in v["priors"].as_array().unwrap() {
        let fam = p["family"].as_str().unwrap().to_string();
        let info = dist::family(&fam).unwrap();
        let vals: Vec<f64> = info
            .params
            .iter()
            .map(|n| p["params"][*n].as_f64().unwrap())
            .collect();
        let d = dist::build(&fam, &vals).unwrap().unwrap();
        parsed.insert(
            p["parameter"].as_str().unwrap().to_string(),
            Box::new(move |x| d.quantile(x)),
        );
    }
    compare(FIXTURE, &parsed, "json").unwrap();
    assert_eq!(v["generated"]["exported"], "2026-01-01");
}

#[test]
fn a_parameterisation_slip_fails_the_round_trip() {
    // Writing the gamma's scale (1/rate = 0.4) where Stan wants the rate (2.5),
    // or a variance where it wants an sd, must be caught by the comparison.
    let d = fixture_dir();
    let code = export(d.path(), "stan");
    assert!(code.contains("gamma(3.2, 2.5)"));
    let slip = code.replace("gamma(3.2, 2.5)", "gamma(3.2, 0.4)");
    assert!(compare(FIXTURE, &parse_stan(&slip), "stan").is_err());
    let slip = code.replace("normal(-1.3, 0.7)", "normal(-1.3, 0.49)");
    assert!(compare(FIXTURE, &parse_stan(&slip), "stan").is_err());
    let py = export(d.path(), "pymc");
    let slip = py.replace(
        "InverseGamma(\"p_inverse_gamma\", alpha=4.5, beta=2.2)",
        "InverseGamma(\"p_inverse_gamma\", alpha=4.5, beta=0.454545)",
    );
    assert_ne!(slip, py);
    assert!(compare(FIXTURE, &parse_pymc(&slip), "pymc").is_err());
}

#[test]
fn header_names_version_digest_seed_date_verdict() {
    let d = fixture_dir();
    for (lang, mark) in [("stan", "//"), ("pymc", "#"), ("brms", "#")] {
        let code = export(d.path(), lang);
        let head: Vec<&str> = code.lines().take(5).collect();
        assert!(head.iter().all(|l| l.starts_with(mark)), "{lang}: {head:?}");
        let h = head.join("\n");
        for want in [
            "priorsmith 0.1.0",
            &"0".repeat(64),
            "seed 7",
            "exported 2026-01-01",
            "verdict: met within noise",
        ] {
            assert!(h.contains(want), "{lang} header lacks {want}: {h}");
        }
    }
}

#[test]
fn out_file_is_written_atomically_and_bad_input_is_a_clear_error() {
    let d = fixture_dir();
    let out = d.path().join("prior.stan");
    ok(&[
        "export",
        d.path().to_str().unwrap(),
        "--to",
        "stan",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(std::fs::read_to_string(&out).unwrap().contains("model {"));
    let names: Vec<String> = std::fs::read_dir(d.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
        .collect();
    assert!(names.iter().all(|n| !n.contains(".tmp-")), "{names:?}");

    // A wrong parameter name in fit.json: error names the file and key, no output file.
    let bad = FIXTURE.replacen("\"rate\"", "\"scale\"", 1);
    std::fs::write(d.path().join("fit.json"), bad).unwrap();
    let out2 = d.path().join("bad.stan");
    let o = run(&[
        "export",
        d.path().to_str().unwrap(),
        "--to",
        "stan",
        "--out",
        out2.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(3));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("fit.json") && err.contains("prior[2].params[1]") && err.contains("`rate`"),
        "{err}"
    );
    assert!(!out2.exists());

    // A statement without family or template code (e.g. a vector prior): clear error.
    let mut v: serde_json::Value = serde_json::from_str(FIXTURE).unwrap();
    v["prior"][0] = serde_json::json!({"parameter": "beta", "about": "coefficients", "size": 5});
    std::fs::write(d.path().join("fit.json"), v.to_string()).unwrap();
    let o = run(&["export", d.path().to_str().unwrap(), "--to", "pymc"]);
    assert_eq!(o.status.code(), Some(3));
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("neither a family nor template-supplied code")
    );
    assert!(o.stdout.is_empty());

    // Missing folder: an I/O error (exit 4).
    let o = run(&["export", "/nonexistent/priorsmith", "--to", "stan"]);
    assert_eq!(o.status.code(), Some(4));
}

#[test]
fn template_supplied_code_is_pasted_and_missing_languages_are_errors() {
    let d = fixture_dir();
    let mut v: serde_json::Value = serde_json::from_str(FIXTURE).unwrap();
    v["prior"].as_array_mut().unwrap().push(serde_json::json!({
        "parameter": "beta",
        "about": "regression coefficients (horseshoe)",
        "code": {
            "stan": {
                "parameters": ["vector[3] beta;", "real<lower=0> tau;"],
                "model": ["tau ~ cauchy(0, 0.1);", "beta ~ normal(0, tau);"]
            }
        }
    }));
    std::fs::write(d.path().join("fit.json"), v.to_string()).unwrap();
    let code = export(d.path(), "stan");
    assert!(code.contains("  vector[3] beta;\n"));
    assert!(code.contains("  beta ~ normal(0, tau);\n"));
    let o = run(&["export", d.path().to_str().unwrap(), "--to", "brms"]);
    assert_eq!(o.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&o.stderr).contains("has no brms code"));
}

const SPEC: &str = r#"
title = "Export test (invented)"
[model]
template = "mixture-cure"
latency = "weibull"
time_unit = "months"
[simulation]
draws = 2000
seed = 5
[prior.cure_logit]
family = "normal"
mean = { fit = [-4.0, 4.0] }
sd = { fit = [0.05, 2.5] }
[prior.log_scale]
family = "normal"
mean = { fit = [0.0, 5.0] }
sd = 0.3
[prior.shape]
family = "gamma"
shape = 8.0
rate = { fit = [2.0, 20.0] }
[[belief]]
quantity = "cure_fraction"
quantiles = { "0.1" = 0.15, "0.5" = 0.25, "0.9" = 0.40 }
[[belief]]
quantity = "median_survival"
distribution = { family = "lognormal", meanlog = 3.0, sdlog = 0.4 }
atoms = [{ at = inf, mass = 0.1 }]
"#;

fn fit_small() -> (tempfile::TempDir, PathBuf) {
    let d = tempfile::tempdir().unwrap();
    let spec = d.path().join("spec.toml");
    std::fs::write(&spec, SPEC).unwrap();
    let out = d.path().join("out");
    ok(&[
        "fit",
        spec.to_str().unwrap(),
        "--draws",
        "2000",
        "-q",
        "-o",
        out.to_str().unwrap(),
    ]);
    (d, out)
}

#[test]
fn fit_then_export_round_trips_the_fitted_prior() {
    let (_d, out) = fit_small();
    let json = std::fs::read_to_string(out.join("fit.json")).unwrap();
    compare(&json, &parse_stan(&export(&out, "stan")), "stan").unwrap();
    compare(&json, &parse_pymc(&export(&out, "pymc")), "pymc").unwrap();
    compare(&json, &parse_brms(&export(&out, "brms")), "brms").unwrap();
}

#[test]
fn fit_writes_a_self_contained_report_with_every_plot() {
    let (_d, out) = fit_small();
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    // Two beliefs × (CDF + density) + hyperparameters.
    for id in [
        "belief-1-cdf",
        "belief-1-density",
        "belief-2-cdf",
        "belief-2-density",
        "hyperparameters",
    ] {
        assert!(html.contains(&format!("id=\"{id}\"")), "{id} missing");
        let svg = std::fs::read_to_string(out.join("plots").join(format!("{id}.svg"))).unwrap();
        assert!(svg.starts_with("<svg xmlns=\"http://www.w3.org/2000/svg\""));
    }
    assert!(html.contains(&esc(
        priorsmith::output::summary::CAUTION.trim_start_matches("Caution: ")
    )));
    // Never-reached mass is shown in its own column.
    assert!(html.contains("never reached"));
    // Self-contained: no external resources.
    for bad in ["src=\"http", "href=\"http", "@import", "url(http"] {
        assert!(!html.contains(bad), "external resource: {bad}");
    }
    // `report` rewrites it from fit.json + draws.csv alone (the spec is gone).
    std::fs::remove_file(out.join("report.html")).unwrap();
    std::fs::remove_file(out.parent().unwrap().join("spec.toml")).unwrap();
    ok(&["report", out.to_str().unwrap(), "-q"]);
    assert!(out.join("report.html").exists());
}

#[test]
fn report_renders_optional_diagnostics_when_present() {
    // Without a traced front the report has no Pareto section; with the knee
    // rule the fit traces one and the report plots it.
    let (_d, out) = fit_small();
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(!html.contains("id=\"pareto\""));
    assert!(html.contains("No Pareto front was traced"));
    assert!(!html.contains(">null<"), "raw null shown");
    assert!(html.contains("class=\"directions\""), "no directions table");
    assert!(html.contains("identifiability (as recorded in fit.json)"));
    let d = tempfile::tempdir().unwrap();
    let spec = d.path().join("spec.toml");
    std::fs::write(&spec, format!("{SPEC}\n[fit]\ntie_break = \"knee\"\n")).unwrap();
    let out = d.path().join("out");
    let (s, o) = (spec.to_str().unwrap(), out.to_str().unwrap());
    ok(&["fit", s, "--draws", "2000", "-q", "-o", o]);
    ok(&["report", o, "-q"]);
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("id=\"pareto\""));
    assert!(html.contains("one noise floor above the best"));
    assert!(out.join("plots/pareto.svg").exists());
    assert!(!html.contains("Sensitivity sweep"));
}

#[test]
fn report_with_bad_draws_is_a_clear_error() {
    let (_d, out) = fit_small();
    std::fs::remove_file(out.join("report.html")).unwrap();
    let csv = std::fs::read_to_string(out.join("draws.csv")).unwrap();
    let broken = csv.replacen("\n2,", "\n2,oops,", 1);
    std::fs::write(out.join("draws.csv"), broken).unwrap();
    let o = run(&["report", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&o.stderr).contains("draws.csv"));
    assert!(!out.join("report.html").exists());
}

fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Headless Chromium loads the report without script errors and every plot has a
/// rendered box. Skips (with a message) where chromium is not installed.
#[test]
fn report_renders_in_headless_chromium() {
    let Some(chrome) = ["chromium", "chromium-browser", "google-chrome"]
        .iter()
        .find(|c| {
            Command::new(c)
                .arg("--version")
                .output()
                .is_ok_and(|o| o.status.success())
        })
    else {
        eprintln!("SKIP report_renders_in_headless_chromium: chromium not found (apt-get install -y chromium)");
        return;
    };
    let (_d, out) = fit_small();
    let profile = tempfile::tempdir().unwrap();
    let url = format!("file://{}", out.join("report.html").display());
    let o = Command::new(chrome)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            &format!("--user-data-dir={}", profile.path().display()),
            "--window-size=1200,3000",
            "--dump-dom",
            &url,
        ])
        .output()
        .unwrap();
    assert!(
        o.status.success(),
        "chromium failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    let dom = String::from_utf8_lossy(&o.stdout);
    let attr = |name: &str| -> Option<String> {
        let k = format!("{name}=\"");
        let i = dom.find(&k)? + k.len();
        Some(dom[i..].split('"').next()?.to_string())
    };
    assert_eq!(attr("data-errors"), None, "script errors in the report");
    let plots = attr("data-plots").expect("the check script ran");
    // Every plot the report draws is also written as its own SVG file.
    let files = std::fs::read_dir(out.join("plots"))
        .unwrap()
        .filter(|e| {
            e.as_ref()
                .unwrap()
                .path()
                .extension()
                .is_some_and(|x| x == "svg")
        })
        .count();
    assert!(files >= 5, "only {files} plot files");
    assert_eq!(plots, files.to_string());
    assert_eq!(
        attr("data-plots-rendered").as_deref(),
        Some(plots.as_str()),
        "some plots did not render"
    );
}

/// A belief on the uncured median alone leaves hyperparameters to the
/// tie-break: the summary, the report's headline and caution box, and the
/// terminal say so, though the belief is met.
#[test]
fn undetermined_fit_is_named_in_headline_summary_and_terminal() {
    let d = tempfile::tempdir().unwrap();
    let base = include_str!("../model-templates/mixture-cure.toml");
    let i = base.find("[[belief]]").unwrap();
    let spec_text = format!(
        "{}[[belief]]\nquantity = \"median_uncured\"\ndistribution = {{ family = \"lognormal\", meanlog = 2.5, sdlog = 0.3 }}\n",
        &base[..i]
    );
    let spec = d.path().join("und.toml");
    std::fs::write(&spec, spec_text).unwrap();
    let out = d.path().join("out");
    let o = run(&[
        "fit",
        spec.to_str().unwrap(),
        "--draws",
        "4000",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("undetermined; the tie-break set"), "{err}");
    let summary = std::fs::read_to_string(out.join("summary.txt")).unwrap();
    assert!(summary.contains("Undetermined by the beliefs"), "{summary}");
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("undetermined by them (chosen by the tie-break)"));
    assert!(html.contains("<b>Undetermined.</b>"));
    assert!(html.contains("the tie-break (the beliefs leave it undetermined)"));
}

// ---------------------------------------------------------------------------
// Survival templates: `export --with-likelihood` writes a complete model.

/// A two-arm survival spec for `template` with `latency` and the given priors.
fn survival_spec(template: &str, latency: &str, priors: &str, belief: &str) -> String {
    format!(
        r#"title = "survival export (invented)"
[model]
template = "{template}"
latency = "{latency}"
covariates = ["arm"]
[profile.control]
arm = 0
[profile.treated]
arm = 1
{priors}
[[belief]]
{belief}
"#
    )
}

const LOG_SCALE: &str =
    "[prior.log_scale]\nfamily = \"normal\"\nmean = { fit = [1.0, 4.0] }\nsd = 0.3\n";
const SHAPE: &str = "[prior.shape]\nfamily = \"lognormal\"\nmeanlog = 0.1\nsdlog = 0.2\n";
const SURV_BELIEF: &str = "quantity = \"survival_prob\"\nhorizon = 24\nprofile = \"control\"\nquantiles = { \"0.1\" = 0.2, \"0.5\" = 0.35, \"0.9\" = 0.5 }";

/// (golden name, spec): one case per template, latencies and effect kinds mixed.
fn survival_cases() -> Vec<(&'static str, String)> {
    let eff = |name: &str| format!("[prior.{name}]\nfamily = \"normal\"\nmean = -0.3\nsd = 0.2\n");
    vec![
        (
            "mixture-weibull-ph",
            survival_spec(
                "mixture-cure",
                "weibull",
                &[
                    "[prior.cure_logit]\nfamily = \"normal\"\nmean = -1.0\nsd = 0.4\n",
                    LOG_SCALE,
                    SHAPE,
                    &eff("cure_effect_arm"),
                    &eff("hazard_effect_arm"),
                ]
                .concat(),
                SURV_BELIEF,
            ),
        ),
        (
            "promotion-loglogistic-aft",
            survival_spec(
                "promotion-time-cure",
                "loglogistic",
                &[
                    "[prior.log_theta]\nfamily = \"normal\"\nmean = 0.3\nsd = 0.3\n",
                    LOG_SCALE,
                    SHAPE,
                    &eff("theta_effect_arm"),
                    &eff("latency_effect_arm"),
                ]
                .concat(),
                SURV_BELIEF,
            ),
        ),
        (
            "parametric-lognormal-aft",
            survival_spec(
                "parametric-survival",
                "lognormal",
                &[LOG_SCALE, SHAPE, &eff("latency_effect_arm")].concat(),
                SURV_BELIEF,
            ),
        ),
        (
            "mixture-gengamma-aft",
            survival_spec(
                "mixture-cure",
                "gengamma",
                &[
                    "[prior.cure_logit]\nfamily = \"normal\"\nmean = -1.0\nsd = 0.4\n",
                    LOG_SCALE,
                    SHAPE,
                    &eff("latency_effect_arm"),
                ]
                .concat(),
                SURV_BELIEF,
            )
            .replace("\"gengamma\"", "\"gengamma\"\ngengamma_q = -0.5"),
        ),
        (
            "promotion-gengamma-aft",
            survival_spec(
                "promotion-time-cure",
                "gengamma",
                &[
                    "[prior.log_theta]\nfamily = \"normal\"\nmean = 0.3\nsd = 0.3\n",
                    LOG_SCALE,
                    SHAPE,
                    &eff("latency_effect_arm"),
                ]
                .concat(),
                SURV_BELIEF,
            )
            .replace("\"gengamma\"", "\"gengamma\"\ngengamma_q = 0.8"),
        ),
        (
            "mixture-weibull-cure-fraction-beta",
            survival_spec(
                "mixture-cure",
                "weibull",
                &[
                    "[prior.cure_fraction]\nfamily = \"beta\"\nalpha = 4.0\nbeta = 9.0\n",
                    LOG_SCALE,
                    SHAPE,
                    &eff("cure_effect_arm"),
                    &eff("hazard_effect_arm"),
                ]
                .concat(),
                SURV_BELIEF,
            ),
        ),
        (
            "promotion-lognormal-cure-fraction-logitnormal",
            survival_spec(
                "promotion-time-cure",
                "lognormal",
                &[
                    "[prior.cure_fraction]\nfamily = \"logit-normal\"\nmu = -0.8\nsigma = 0.5\n",
                    LOG_SCALE,
                    SHAPE,
                    &eff("theta_effect_arm"),
                    &eff("latency_effect_arm"),
                ]
                .concat(),
                SURV_BELIEF,
            ),
        ),
        (
            "parametric-exponential-ph",
            survival_spec(
                "parametric-survival",
                "exponential",
                &[LOG_SCALE, &eff("hazard_effect_arm")].concat(),
                SURV_BELIEF,
            ),
        ),
    ]
}

/// Fit `spec` on 2,000 draws into a temporary folder.
fn fit_spec(spec: &str) -> (tempfile::TempDir, PathBuf) {
    let d = tempfile::tempdir().unwrap();
    let path = d.path().join("spec.toml");
    std::fs::write(&path, spec).unwrap();
    let out = d.path().join("out");
    ok(&[
        "fit",
        path.to_str().unwrap(),
        "--draws",
        "2000",
        "-q",
        "-o",
        out.to_str().unwrap(),
    ]);
    (d, out)
}

/// Split a complete export into (the prior part, the likelihood part): the
/// likelihood part is the parameterisation comments, the `functions` and
/// `data` blocks (Stan) and the lines from the `likelihood` comment on.
fn split_complete(code: &str, comment: &str) -> (String, String) {
    let (mut prior, mut lik) = (String::new(), String::new());
    let mut in_lik = false;
    let mut block = "";
    for line in code.lines() {
        let t = line.trim();
        if t == "functions {" || t == "data {" {
            block = "lik";
        } else if t.ends_with('{')
            && !t.starts_with("for ")
            && !t.starts_with("if ")
            && !t.starts_with("real ")
            && !t.starts_with("} else")
        {
            block = "";
        }
        if t.starts_with(&format!("{comment} likelihood:")) {
            in_lik = true;
        }
        // Parameterisation comments start the file (a family's note inside a
        // block, e.g. a logit-normal's, belongs to the prior).
        let about = line.starts_with(comment)
            && !t.starts_with(&format!("{comment} Prior exported"))
            && !["fit:", "spec sha256", "seed ", "A fitted prior"]
                .iter()
                .any(|p| t.starts_with(&format!("{comment} {p}")));
        let imports = ["import numpy as np", "import pytensor.tensor as pt"].contains(&t);
        if block == "lik" || in_lik || about || imports {
            if !(in_lik && (t == "}" && line.starts_with('}'))) {
                lik.push_str(line);
                lik.push('\n');
                continue;
            }
            in_lik = false;
        }
        prior.push_str(line);
        prior.push('\n');
        if t == "}" && line == "}" {
            block = "";
        }
    }
    (prior, lik)
}

#[test]
fn survival_exports_with_likelihood_match_golden_files_and_keep_the_prior() {
    // The likelihood block of each template is pinned by a golden file
    // (tests/golden/survival/, written by our own exporter and reviewed against
    // the formulas in templates/survival/code.rs); the prior part of a complete
    // export is the prior-only export line for line, which round-trips through
    // our parsers (`compare`).
    for (name, spec) in survival_cases() {
        let (_d, out) = fit_spec(&spec);
        let json = std::fs::read_to_string(out.join("fit.json")).unwrap();
        let dir = out.to_str().unwrap();
        for (lang, ext, comment) in [("stan", "stan", "//"), ("pymc", "py", "#")] {
            let complete = ok(&["export", dir, "--to", lang, "--with-likelihood"]);
            let prior = export(&out, lang);
            let (prior_part, lik) = split_complete(&complete, comment);
            common::assert_golden(
                &lik,
                &format!("survival/{name}.{ext}"),
                &format!("{name} {lang}: likelihood"),
            );
            let parsed = match lang {
                "stan" => {
                    // The complete program's prior: the prior-only export less its
                    // paste instruction; the likelihood follows the priors in `model`.
                    let strip = |s: &str| -> Vec<String> {
                        s.lines()
                            .filter(|l| !l.trim().is_empty() && !l.starts_with("// Paste"))
                            .map(str::to_string)
                            .collect()
                    };
                    assert_eq!(strip(&prior_part), strip(&prior), "{name} stan prior part");
                    parse_stan(&prior)
                }
                _ => {
                    let body = |s: &str| -> Vec<String> {
                        s.lines()
                            .filter(|l| l.contains(" = pm."))
                            .map(|l| l.trim().to_string())
                            .collect()
                    };
                    assert_eq!(body(&prior_part), body(&prior), "{name} pymc prior part");
                    parse_pymc(&prior_part)
                }
            };
            compare(&json, &parsed, lang).unwrap();
        }
        // brms: the priors, never a likelihood (refused with the reason).
        let o = run(&["export", dir, "--to", "brms", "--with-likelihood"]);
        assert_eq!(o.status.code(), Some(3));
        assert!(String::from_utf8_lossy(&o.stderr).contains("brms has no mixture-cure"));
        let brms = export(&out, "brms");
        compare(&json, &parse_brms(&brms), "brms").unwrap();
    }
}

#[test]
fn brms_survival_export_renames_shape_so_it_cannot_clash() {
    // brms reads a non-linear parameter named `shape` as its own Weibull shape
    // (validate_prior: "do not correspond to any model parameter"); it is
    // written nlShape with a comment naming the parameter.
    let (_, spec) = survival_cases().remove(0);
    let (_d, out) = fit_spec(&spec);
    let brms = export(&out, "brms");
    assert!(brms.contains("nlpar = \"nlShape\""), "{brms}");
    assert!(brms.contains("# nlpar nlShape is the parameter shape"));
    assert!(!brms.contains("nlpar = \"shape\""));
    assert!(brms.contains("nlShape ~ 1"));
}

/// The report's prior-predictive picture: survival bands re-simulated from the
/// folder's spec.toml agree with the fit's own implied draws, are the same on a
/// second render, and the pairwise plots are drawn; without spec.toml the report
/// says why there are no curves.
#[test]
fn survival_bands_agree_with_the_recorded_implied_survival() {
    let d = tempfile::tempdir().unwrap();
    let spec = d.path().join("spec.toml");
    let text = format!(
        "{SPEC}[[belief]]\nquantity = \"survival_prob\"\nhorizon = 24\ndistribution = {{ family = \"beta\", alpha = 12, beta = 18 }}\n"
    );
    std::fs::write(&spec, text).unwrap();
    let out = d.path().join("out");
    ok(&[
        "fit",
        spec.to_str().unwrap(),
        "--draws",
        "2000",
        "-q",
        "-o",
        out.to_str().unwrap(),
    ]);
    let rec = priorsmith::export::record::read(&out.join("fit.json")).unwrap();
    let bands = priorsmith::report::predictive::survival_bands(&out, &rec)
        .unwrap()
        .expect("a mixture-cure folder with spec.toml has survival bands");
    assert_eq!(bands.len(), 1, "one (reference) profile");
    let b = &bands[0];
    let i = b
        .times
        .iter()
        .position(|t| *t == 24.0)
        .expect("the horizon is on the grid");
    // Bands are nested and S(0) = 1.
    for j in 0..b.times.len() {
        for k in 1..b.bands.len() {
            assert!(
                b.bands[k - 1][j] <= b.bands[k][j],
                "bands cross at t = {}",
                b.times[j]
            );
        }
    }
    assert!(b.bands.iter().all(|v| v[0] == 1.0));
    // The pointwise median at the horizon against the implied median of the
    // fit's fresh draws (fit.json, an independent draw set of the same prior).
    // SE of a sample median: sd·√(π/(2n)) with sd ≈ IQR/1.349 (normal
    // approximation, common practice); the difference of two independent
    // medians has the two variances added; tolerance 4 SE.
    let r = &rec.fit.beliefs[2];
    assert_eq!(r.quantity, "survival_prob");
    let implied = r.implied_quantiles[3];
    let sd = (b.bands[4][i] - b.bands[2][i]) / 1.349;
    let n_fit = rec.fit.draws as f64;
    let n_curve = priorsmith::report::predictive::CURVE_DRAWS as f64;
    let se = sd * (std::f64::consts::PI / 2.0 * (1.0 / n_fit + 1.0 / n_curve)).sqrt();
    let diff = (b.bands[3][i] - implied).abs();
    assert!(
        diff <= 4.0 * se,
        "median S(24): bands {} vs fit.json {implied} (4 SE = {})",
        b.bands[3][i],
        4.0 * se
    );
    // The report draws them, with the pairwise plots, and renders the same twice.
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    for id in ["survival", "pair-1-2", "pair-1-3", "pair-2-3"] {
        assert!(html.contains(&format!("id=\"{id}\"")), "{id} missing");
        assert!(out.join("plots").join(format!("{id}.svg")).is_file());
    }
    assert!(html.contains("not their joint behaviour"));
    let svg1 = std::fs::read(out.join("plots/survival.svg")).unwrap();
    ok(&["report", out.to_str().unwrap()]);
    assert_eq!(svg1, std::fs::read(out.join("plots/survival.svg")).unwrap());
    // Without spec.toml: no curves, and a sentence saying why.
    std::fs::remove_file(out.join("spec.toml")).unwrap();
    ok(&["report", out.to_str().unwrap()]);
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("No survival curves"));
    assert!(!html.contains("id=\"survival\""));
}

//! PyMC export: distribution constructors inside a `with pm.Model()` context.
//!
//! Our family → PyMC 5 (PyMC API reference, `pymc.distributions.continuous`):
//! normal(mean, sd) → Normal(mu, sigma); lognormal(meanlog, sdlog) →
//! LogNormal(mu, sigma); gamma(shape, rate) → Gamma(alpha, beta = rate);
//! inverse-gamma(shape, scale) → InverseGamma(alpha, beta = scale); beta →
//! Beta(alpha, beta); logit-normal(mu, sigma) → LogitNormal(mu, sigma);
//! student-t(df, location, scale) → StudentT(nu, mu, sigma); half-normal(scale)
//! → HalfNormal(sigma); half-student-t(df, scale) → HalfStudentT(nu, sigma);
//! half-cauchy(scale) → HalfCauchy(beta); exponential(rate) →
//! Exponential(lam = rate); uniform → Uniform(lower, upper); weibull(shape,
//! scale) → Weibull(alpha = shape, beta = scale); laplace(location, scale) →
//! Laplace(mu, b = scale). PyMC has no log-logistic: log θ ~ Logistic(mu = log
//! scale, s = 1/shape) and θ = exp(log θ) as a Deterministic (see stan.rs for
//! the identity).

use super::{
    check_ident, check_unique, header_lines, num, unsupported, Header, Item, Lang, Scalar,
};
use crate::error::Result;

/// Python keywords and the names the export itself uses.
pub const RESERVED: &[&str] = &[
    "False", "None", "True", "and", "as", "assert", "async", "await", "break", "class", "continue",
    "def", "del", "elif", "else", "except", "finally", "for", "from", "global", "if", "import",
    "in", "is", "lambda", "nonlocal", "not", "or", "pass", "raise", "return", "try", "while",
    "with", "yield", "pm", "model",
];

/// The constructor lines for one scalar prior.
pub fn lines(s: &Scalar) -> Result<Vec<String>> {
    let p = |n: &str| num(s.get(n));
    let name = &s.parameter;
    let call = |cls: &str, args: String| format!("{name} = pm.{cls}(\"{name}\", {args})");
    let one = |l: String| Ok(vec![l]);
    match s.family.name {
        "normal" => one(call("Normal", format!("mu={}, sigma={}", p("mean"), p("sd")))),
        "lognormal" => one(call("LogNormal", format!("mu={}, sigma={}", p("meanlog"), p("sdlog")))),
        "gamma" => one(call("Gamma", format!("alpha={}, beta={}", p("shape"), p("rate")))),
        "inverse-gamma" => one(call(
            "InverseGamma",
            format!("alpha={}, beta={}", p("shape"), p("scale")),
        )),
        "beta" => one(call("Beta", format!("alpha={}, beta={}", p("alpha"), p("beta")))),
        "logit-normal" => one(call("LogitNormal", format!("mu={}, sigma={}", p("mu"), p("sigma")))),
        "student-t" => one(call(
            "StudentT",
            format!("nu={}, mu={}, sigma={}", p("df"), p("location"), p("scale")),
        )),
        "half-normal" => one(call("HalfNormal", format!("sigma={}", p("scale")))),
        "half-student-t" => one(call("HalfStudentT", format!("nu={}, sigma={}", p("df"), p("scale")))),
        "half-cauchy" => one(call("HalfCauchy", format!("beta={}", p("scale")))),
        "exponential" => one(call("Exponential", format!("lam={}", p("rate")))),
        "uniform" => one(call("Uniform", format!("lower={}, upper={}", p("lower"), p("upper")))),
        "weibull" => one(call("Weibull", format!("alpha={}, beta={}", p("shape"), p("scale")))),
        "laplace" => one(call("Laplace", format!("mu={}, b={}", p("location"), p("scale")))),
        "loglogistic" => Ok(vec![
            format!(
                "# {name} ~ loglogistic(shape {}, scale {}): PyMC has none; its log is Logistic(log scale, 1/shape)",
                p("shape"),
                p("scale")
            ),
            format!(
                "{name}_log = pm.Logistic(\"{name}_log\", mu={}, s={})",
                num(s.get("scale").ln()),
                num(1.0 / s.get("shape"))
            ),
            format!("{name} = pm.Deterministic(\"{name}\", pm.math.exp({name}_log))"),
        ]),
        other => Err(unsupported(format!(
            "export to PyMC does not know family \"{other}\" (parameter `{name}`)"
        ))),
    }
}

pub fn render(h: &Header, items: &[Item]) -> Result<String> {
    let mut body = Vec::new();
    let mut names = Vec::new();
    for it in items {
        match it {
            Item::Scalar(s) => {
                check_ident(&s.parameter, Lang::Pymc, RESERVED)?;
                names.push(s.parameter.clone());
                if s.family.name == "loglogistic" {
                    names.push(format!("{}_log", s.parameter));
                }
                let mut ls = lines(s)?;
                if !s.about.is_empty() {
                    if let Some(first) = ls.iter_mut().find(|l| !l.starts_with('#')) {
                        first.push_str(&format!("  # {}", s.about));
                    }
                }
                body.extend(ls);
            }
            Item::Supplied(s) => {
                names.push(s.parameter.clone());
                body.extend(s.lines(Lang::Pymc, "model")?.iter().cloned());
            }
        }
    }
    check_unique(&names, Lang::Pymc)?;
    let mut out = String::new();
    for l in header_lines(h, "PyMC") {
        out.push_str(&format!("# {l}\n"));
    }
    out.push_str("# Paste the lines inside `with` into your own model context.\n");
    out.push_str("import pymc as pm\n\nwith pm.Model() as model:\n");
    for l in body {
        out.push_str(&format!("    {l}\n"));
    }
    Ok(out)
}

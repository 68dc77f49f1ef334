//! Stan export: a `parameters` block with the declarations (and their
//! constraints), a `transformed parameters` block where a family is written on
//! another scale, and a `model` block with the prior statements.
//!
//! Our family → Stan (Stan Functions Reference, "Continuous distributions"):
//! normal(mean, sd) → normal(mu, sigma); lognormal(meanlog, sdlog) →
//! lognormal(mu, sigma); gamma(shape, rate) → gamma(alpha, beta) (beta is a
//! rate); inverse-gamma(shape, scale) → inv_gamma(alpha, beta) (beta is a
//! scale); beta → beta; student-t(df, location, scale) → student_t(nu, mu,
//! sigma); half-normal(scale), half-student-t(df, scale), half-cauchy(scale) →
//! normal(0, scale), student_t(df, 0, scale), cauchy(0, scale) on a
//! `<lower=0>` parameter (the bound truncates; the constant factor 2 does not
//! matter for sampling); exponential(rate) → exponential(beta = rate);
//! uniform(lower, upper) → uniform on a `<lower, upper>` parameter;
//! weibull(shape, scale) → weibull(alpha = shape, sigma = scale);
//! laplace(location, scale) → double_exponential(mu, sigma = scale).
//! Stan has no logit-normal: `p_logit ~ normal(mu, sigma)`, `p = inv_logit(p_logit)`.
//! Log-logistic: log θ ~ logistic(log scale, 1/shape), because
//! F(t) = 1/(1 + (t/scale)^−shape) = logistic(shape·(log t − log scale));
//! so `θ_log ~ logistic(…)`, `θ = exp(θ_log)`. This works in every Stan version
//! (a native `loglogistic` exists only in recent releases).
//! brms writes its prior strings in the same Stan syntax and reuses [`form`].

use super::{
    check_ident, check_unique, header_lines, num, unsupported, Header, Item, Lang, Scalar,
};
use crate::error::Result;

/// How one scalar prior is written in Stan syntax.
#[derive(Debug, Clone)]
pub struct Form {
    /// The variable the distribution is stated for (the parameter, or a helper
    /// `<name>_logit` / `<name>_log` when the family is written on another scale).
    pub sampled: String,
    pub lower: Option<f64>,
    pub upper: Option<f64>,
    /// The distribution call, e.g. `gamma(2, 0.5)`.
    pub dist: String,
    /// When the parameter is a transform of `sampled`: (Stan function, bounds of
    /// the parameter), e.g. ("inv_logit", (Some(0), Some(1))).
    pub derived: Option<(&'static str, Option<f64>, Option<f64>)>,
    pub note: Option<String>,
}

/// Reserved words that cannot name a Stan variable (Stan Reference Manual,
/// "Variable names"; from memory, the common ones).
pub const RESERVED: &[&str] = &[
    "for",
    "in",
    "while",
    "repeat",
    "until",
    "if",
    "then",
    "else",
    "true",
    "false",
    "target",
    "functions",
    "model",
    "data",
    "parameters",
    "quantities",
    "transformed",
    "generated",
    "int",
    "real",
    "complex",
    "vector",
    "row_vector",
    "matrix",
    "array",
    "print",
    "reject",
    "return",
    "break",
    "continue",
    "void",
    "lower",
    "upper",
    "offset",
    "multiplier",
    "profile",
    "tuple",
];

pub fn form(s: &Scalar) -> Result<Form> {
    let p = |n: &str| num(s.get(n));
    let name = s.parameter.clone();
    let plain = |lower: Option<f64>, upper: Option<f64>, dist: String, note: Option<String>| Form {
        sampled: name.clone(),
        lower,
        upper,
        dist,
        derived: None,
        note,
    };
    let pos = Some(0.0);
    Ok(match s.family.name {
        "normal" => plain(
            None,
            None,
            format!("normal({}, {})", p("mean"), p("sd")),
            None,
        ),
        "lognormal" => plain(
            pos,
            None,
            format!("lognormal({}, {})", p("meanlog"), p("sdlog")),
            None,
        ),
        "gamma" => plain(
            pos,
            None,
            format!("gamma({}, {})", p("shape"), p("rate")),
            Some("gamma(shape, rate)".into()),
        ),
        "inverse-gamma" => plain(
            pos,
            None,
            format!("inv_gamma({}, {})", p("shape"), p("scale")),
            Some("inverse-gamma(shape, scale)".into()),
        ),
        "beta" => plain(
            pos,
            Some(1.0),
            format!("beta({}, {})", p("alpha"), p("beta")),
            None,
        ),
        "logit-normal" => Form {
            sampled: format!("{name}_logit"),
            lower: None,
            upper: None,
            dist: format!("normal({}, {})", p("mu"), p("sigma")),
            derived: Some(("inv_logit", Some(0.0), Some(1.0))),
            note: Some(format!(
                "{name} ~ logit-normal({}, {}): Stan has none, so its logit is normal",
                p("mu"),
                p("sigma")
            )),
        },
        "student-t" => plain(
            None,
            None,
            format!("student_t({}, {}, {})", p("df"), p("location"), p("scale")),
            None,
        ),
        "half-normal" => plain(
            pos,
            None,
            format!("normal(0, {})", p("scale")),
            Some(format!(
                "half-normal({}): the <lower=0> bound truncates",
                p("scale")
            )),
        ),
        "half-student-t" => plain(
            pos,
            None,
            format!("student_t({}, 0, {})", p("df"), p("scale")),
            Some(format!(
                "half-student-t({}, {}): the <lower=0> bound truncates",
                p("df"),
                p("scale")
            )),
        ),
        "half-cauchy" => plain(
            pos,
            None,
            format!("cauchy(0, {})", p("scale")),
            Some(format!(
                "half-cauchy({}): the <lower=0> bound truncates",
                p("scale")
            )),
        ),
        "exponential" => plain(
            pos,
            None,
            format!("exponential({})", p("rate")),
            Some("exponential(rate)".into()),
        ),
        "uniform" => plain(
            Some(s.get("lower")),
            Some(s.get("upper")),
            format!("uniform({}, {})", p("lower"), p("upper")),
            None,
        ),
        "weibull" => plain(
            pos,
            None,
            format!("weibull({}, {})", p("shape"), p("scale")),
            Some("weibull(shape, scale)".into()),
        ),
        "laplace" => plain(
            None,
            None,
            format!("double_exponential({}, {})", p("location"), p("scale")),
            Some("laplace(location, scale)".into()),
        ),
        "loglogistic" => Form {
            sampled: format!("{name}_log"),
            lower: None,
            upper: None,
            dist: format!(
                "logistic({}, {})",
                num(s.get("scale").ln()),
                num(1.0 / s.get("shape"))
            ),
            derived: Some(("exp", pos, None)),
            note: Some(format!(
                "{name} ~ loglogistic(shape {}, scale {}): its log is logistic(log scale, 1/shape)",
                p("shape"),
                p("scale")
            )),
        },
        other => {
            return Err(unsupported(format!(
                "export to Stan does not know family \"{other}\" (parameter `{name}`)"
            )))
        }
    })
}

/// `<lower=0, upper=1>` or "".
pub fn bounds(lower: Option<f64>, upper: Option<f64>) -> String {
    match (lower, upper) {
        (None, None) => String::new(),
        (Some(l), None) => format!("<lower={}>", num(l)),
        (None, Some(u)) => format!("<upper={}>", num(u)),
        (Some(l), Some(u)) => format!("<lower={}, upper={}>", num(l), num(u)),
    }
}

pub fn render(h: &Header, items: &[Item]) -> Result<String> {
    let (mut params, mut trans, mut model) = (Vec::new(), Vec::new(), Vec::new());
    let mut names = Vec::new();
    for it in items {
        match it {
            Item::Scalar(s) => {
                check_ident(&s.parameter, Lang::Stan, RESERVED)?;
                let f = form(s)?;
                names.push(f.sampled.clone());
                let about = if s.about.is_empty() {
                    String::new()
                } else {
                    format!("  // {}", s.about)
                };
                match f.derived {
                    None => params.push(format!(
                        "  real{} {};{about}",
                        bounds(f.lower, f.upper),
                        s.parameter
                    )),
                    Some((func, lo, hi)) => {
                        names.push(s.parameter.clone());
                        params.push(format!("  real {};{about}", f.sampled));
                        trans.push(format!(
                            "  real{} {} = {func}({});",
                            bounds(lo, hi),
                            s.parameter,
                            f.sampled
                        ));
                    }
                }
                if let Some(n) = &f.note {
                    model.push(format!("  // {n}"));
                }
                model.push(format!("  {} ~ {};", f.sampled, f.dist));
            }
            Item::Supplied(s) => {
                names.push(s.parameter.clone());
                let ind = |v: &[String]| v.iter().map(|l| format!("  {l}")).collect::<Vec<_>>();
                params.extend(ind(s.lines(Lang::Stan, "parameters")?));
                trans.extend(ind(s.lines(Lang::Stan, "transformed_parameters")?));
                model.extend(ind(s.lines(Lang::Stan, "model")?));
            }
        }
    }
    check_unique(&names, Lang::Stan)?;
    let mut out = String::new();
    for l in header_lines(h, "Stan") {
        out.push_str(&format!("// {l}\n"));
    }
    out.push_str("// Paste each block's lines into the same block of your Stan program.\n");
    let mut block = |name: &str, lines: &[String]| {
        if !lines.is_empty() {
            out.push_str(&format!("{name} {{\n{}\n}}\n", lines.join("\n")));
        }
    };
    block("parameters", &params);
    block("transformed parameters", &trans);
    block("model", &model);
    Ok(out)
}

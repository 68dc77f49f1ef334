//! Stan export: a `parameters` block with the declarations (and their
//! constraints), a `transformed parameters` block where a family is written on
//! another scale, and a `model` block with the prior statements.
//!
//! The family decides how it is written (`FamilyInfo::forms.stan`, a
//! [`crate::dist::forms::StanForm`]: Stan's distribution call in Stan's
//! parameterisation, the declared bounds, and when Stan lacks the family a
//! helper variable on another scale, e.g. `p_logit ~ normal(mu, sigma)`,
//! `p = inv_logit(p_logit)`); this file only renders it. A family that declares
//! no Stan form is a clear error. brms writes its prior strings in the same Stan
//! syntax and reuses [`from_family`] with the family's brms form.

use super::{
    check_ident, check_unique, header_lines, num, unsupported, Header, Item, Lang, Scalar, Sections,
};
use crate::dist::forms::{Args, Form as Declared, StanFn};
use crate::error::{Error, Result};

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

/// The Stan form of a scalar prior, as its family declares it.
pub fn form(s: &Scalar) -> Result<Form> {
    from_family(s, "Stan", &s.family.forms.stan)
}

/// Render a family's declared Stan-syntax form for `lang` (Stan, or brms, whose
/// prior strings are Stan calls); a family without one is a clear error.
pub fn from_family(s: &Scalar, lang: &str, declared: &Declared<StanFn>) -> Result<Form> {
    let write = match declared {
        Declared::Written(write) => write,
        Declared::Absent(why) => return Err(no_form(s, lang, why)),
    };
    let f = write(&Args {
        name: &s.parameter,
        values: &s.params,
        num,
    });
    let dist = f.call(num);
    let (sampled, derived) = match f.helper {
        None => (s.parameter.clone(), None),
        Some(h) => (
            format!("{}_{}", s.parameter, h.suffix),
            Some((h.inverse, h.lower, h.upper)),
        ),
    };
    Ok(Form {
        sampled,
        lower: f.lower,
        upper: f.upper,
        dist,
        derived,
        note: f.note,
    })
}

/// The error for a family that declares no form in `lang`.
pub fn no_form(s: &Scalar, lang: &str, why: &str) -> Error {
    unsupported(format!(
        "export to {lang} does not know family \"{}\" (parameter `{}`): {why}",
        s.family.name, s.parameter
    ))
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
    render_with(h, items, None)
}

/// The prior, and with `likelihood` (the template's Stan sections: `about`,
/// `functions`, `data`, `model`) a complete program: its data names join the
/// identifier checks, its likelihood follows the priors in `model`.
pub fn render_with(h: &Header, items: &[Item], likelihood: Option<&Sections>) -> Result<String> {
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
    let section = |s: &str| -> Vec<String> {
        likelihood
            .and_then(|l| l.get(s))
            .map(|v| v.iter().map(|l| format!("  {l}")).collect())
            .unwrap_or_default()
    };
    if let Some(l) = likelihood {
        names.extend(data_names(l.get("data")));
        names.extend(l.get("locals").into_iter().flatten().cloned());
    }
    check_unique(&names, Lang::Stan)?;
    let mut out = String::new();
    for l in header_lines(h, "Stan") {
        out.push_str(&format!("// {l}\n"));
    }
    match likelihood {
        None => {
            out.push_str("// Paste each block's lines into the same block of your Stan program.\n")
        }
        Some(l) => {
            for a in l.get("about").into_iter().flatten() {
                out.push_str(&format!("// {a}\n"));
            }
            model.push(String::new());
            model.extend(section("model"));
        }
    }
    let mut block = |name: &str, lines: &[String]| {
        if !lines.is_empty() {
            out.push_str(&format!("{name} {{\n{}\n}}\n", lines.join("\n")));
        }
    };
    block("functions", &section("functions"));
    block("data", &section("data"));
    block("parameters", &params);
    block("transformed parameters", &trans);
    block("model", &model);
    Ok(out)
}

/// The variable names a Stan `data` section declares (the word before `;`).
fn data_names(lines: Option<&Vec<String>>) -> Vec<String> {
    lines
        .into_iter()
        .flatten()
        .filter_map(|l| l.split(';').next()?.split_whitespace().last())
        .map(str::to_string)
        .collect()
}

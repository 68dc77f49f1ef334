//! brms export: a `priors <- c(set_prior(...), ...)` specification.
//!
//! brms prior strings are Stan distribution calls: each family declares its brms
//! form (`FamilyInfo::forms.brms`, a Stan-syntax call, rendered by
//! [`super::stan::from_family`]; a family without one is a clear error). Each
//! of our parameters becomes a non-linear parameter (`nlpar`, class "b") of an
//! intercept-only formula
//! (`bf(y ~ f(cureLogit, …), cureLogit ~ 1, nl = TRUE)`); bounds go to `lb` /
//! `ub`, which brms allows for class "b" (brms documentation of `set_prior`).
//! brms rejects non-linear parameter names containing dots or underscores
//! (brms `bf()` validation; its tests expect "not contain dots or underscores"),
//! so `cure_logit` becomes `cureLogit`, and the export says so.
//! A family written on another scale (logit-normal, log-logistic) gets a helper
//! nlpar (`pLogit`) and a comment `p is inv_logit(pLogit): write inv_logit(pLogit) for it in
//! the non-linear formula`.
//! For the regression templates (`linear`, `logistic`, `poisson`) the intercept
//! and the noise sd are brms's own classes `Intercept` and `sigma`, and the
//! coefficients class `b` (code supplied by `templates::regression::code`).

use super::stan::from_family;
use super::{check_ident, check_unique, header_lines, num, Header, Item, Lang};
use crate::error::Result;

/// Reserved words of R (R Language Definition, "Reserved words").
pub const RESERVED: &[&str] = &[
    "if", "else", "repeat", "while", "function", "for", "next", "break", "TRUE", "FALSE", "NULL",
    "Inf", "NaN", "NA", "in",
];

/// `cure_logit` → `cureLogit` (brms forbids `_` and `.` in nlpar names).
pub fn nlpar_name(name: &str) -> String {
    let mut out = String::new();
    let mut up = false;
    for c in name.chars() {
        if c == '_' || c == '.' {
            up = true;
        } else if up {
            out.extend(c.to_uppercase());
            up = false;
        } else {
            out.push(c);
        }
    }
    out
}

pub fn render(h: &Header, items: &[Item]) -> Result<String> {
    let mut calls: Vec<(Vec<String>, String)> = Vec::new();
    let mut names = Vec::new();
    let regression = matches!(h.template.as_str(), "linear" | "logistic" | "poisson");
    for it in items {
        match it {
            Item::Scalar(s) => {
                check_ident(&s.parameter, Lang::Brms, RESERVED)?;
                let f = from_family(s, "brms", &s.family.forms.brms)?;
                let nl = nlpar_name(&f.sampled);
                names.push(nl.clone());
                let mut comments = Vec::new();
                let target = nlpar_name(&s.parameter);
                if !s.about.is_empty() {
                    comments.push(format!("{}: {}", s.parameter, s.about));
                }
                if let Some(n) = &f.note {
                    comments.push(n.clone());
                }
                if let Some((func, _, _)) = f.derived {
                    names.push(target.clone());
                    comments.push(format!(
                        "{} is {func}({nl}): write {func}({nl}) for it in the non-linear formula",
                        s.parameter
                    ));
                } else if nl != s.parameter {
                    comments.push(format!("nlpar {nl} is the parameter {}", s.parameter));
                }
                // The regression templates' intercept and noise sd are brms's own
                // classes: `Intercept` is the intercept of the centred design (brms
                // centres population-level predictors), as ours is; `sigma` has its
                // lower bound built in, so no `lb` is written for it.
                let native = match (regression, s.parameter.as_str(), f.derived) {
                    (true, "intercept", None) => Some("Intercept"),
                    (true, "sigma", None) => Some("sigma"),
                    _ => None,
                };
                if let Some(class) = native {
                    if class == "Intercept" && (f.lower.is_some() || f.upper.is_some()) {
                        comments.push(
                            "brms gives class Intercept no bounds: start the sampler inside them"
                                .into(),
                        );
                    }
                    calls.push((
                        comments,
                        format!("set_prior(\"{}\", class = \"{class}\")", f.dist),
                    ));
                    continue;
                }
                let mut args = format!("\"{}\", class = \"b\", nlpar = \"{nl}\"", f.dist);
                if let Some(l) = f.lower {
                    args.push_str(&format!(", lb = {}", num(l)));
                }
                if let Some(u) = f.upper {
                    args.push_str(&format!(", ub = {}", num(u)));
                }
                calls.push((comments, format!("set_prior({args})")));
            }
            Item::Supplied(s) => {
                names.push(s.parameter.clone());
                let mut comments = Vec::new();
                for l in s.lines(Lang::Brms, "priors")? {
                    match l.strip_prefix('#') {
                        Some(c) => comments.push(c.trim_start().to_string()),
                        None => calls.push((std::mem::take(&mut comments), l.clone())),
                    }
                }
            }
        }
    }
    check_unique(&names, Lang::Brms)?;
    let mut out = String::new();
    for l in header_lines(h, "brms") {
        out.push_str(&format!("# {l}\n"));
    }
    if regression {
        out.push_str(
            "# For brm(y ~ <the design's columns, in design order>, family = <the template's>):\n\
             # brms centres the predictors, as priorsmith did; pass `prior = priors` to brm().\n",
        );
    } else {
        out.push_str(
            "# Each parameter is a non-linear parameter (class \"b\") of an intercept-only formula,\n\
             # e.g. bf(y ~ <your model in these parameters>, cureLogit ~ 1, nl = TRUE);\n\
             # change class / nlpar to match your model. Pass `prior = priors` to brm().\n",
        );
    }
    out.push_str("library(brms)\npriors <- c(\n");
    let n = calls.len();
    for (k, (comments, call)) in calls.into_iter().enumerate() {
        for c in comments {
            out.push_str(&format!("  # {c}\n"));
        }
        out.push_str(&format!("  {call}{}\n", if k + 1 < n { "," } else { "" }));
    }
    out.push_str(")\n");
    Ok(out)
}

#[cfg(test)]
mod tests {
    #[test]
    fn nlpar_names_have_no_underscores() {
        assert_eq!(super::nlpar_name("cure_logit"), "cureLogit");
        assert_eq!(super::nlpar_name("shape"), "shape");
        assert_eq!(
            super::nlpar_name("cure_effect_arm_logit"),
            "cureEffectArmLogit"
        );
    }
}

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
//! A parameter whose brms name is one of brms's distributional parameters
//! (`shape`, `sigma`, `nu`, …; [`DPARS`]) gets the prefix `nl` (`shape` →
//! `nlShape`): brms would read `shape ~ 1` as the family's own shape.
//! A family written on another scale (logit-normal, log-logistic) gets a helper
//! nlpar (`pLogit`) and a comment `p is inv_logit(pLogit): write inv_logit(pLogit) for it in
//! the non-linear formula`.
//! A template can instead name parameters that are brms classes of their own, and
//! say which `brm()` call the priors belong to (`templates::BrmsLayout`, found by
//! the template name recorded in fit.json); its vector priors come as supplied
//! code.

use super::stan::from_family;
use super::{check_ident, check_unique, header_lines, num, Header, Item, Lang};
use crate::error::Result;
use crate::templates::brms_layout;

/// Reserved words of R (R Language Definition, "Reserved words").
pub const RESERVED: &[&str] = &[
    "if", "else", "repeat", "while", "function", "for", "next", "break", "TRUE", "FALSE", "NULL",
    "Inf", "NaN", "NA", "in",
];

/// Names brms gives its own distributional parameters (brms documentation,
/// `brmsformula`, "Parameterization of the response distribution"; from memory:
/// the common ones). A non-linear parameter named like one is read as that
/// distributional parameter: `bf(y ~ …, shape ~ 1, nl = TRUE)` with
/// `family = weibull()` makes `shape` Weibull's own shape, and validate_prior
/// rejects a `nlpar = "shape"` prior ("do not correspond to any model parameter").
pub const DPARS: &[&str] = &[
    "mu", "sigma", "shape", "nu", "phi", "kappa", "beta", "zi", "hu", "zoi", "coi", "disc", "bs",
    "ndt", "bias", "xi", "alpha", "quantile", "theta", "lambda",
];

/// The brms name of a parameter: `cure_logit` → `cureLogit` (brms forbids `_`
/// and `.` in nlpar names), and a name brms keeps for a distributional
/// parameter gets the prefix `nl`: `shape` → `nlShape` ([`DPARS`]).
pub fn brms_name(name: &str) -> String {
    let n = nlpar_name(name);
    if DPARS.contains(&n.as_str()) {
        let mut c = n.chars();
        let first = c
            .next()
            .map(|f| f.to_uppercase().collect::<String>())
            .unwrap_or_default();
        format!("nl{first}{}", c.as_str())
    } else {
        n
    }
}

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
    let layout = brms_layout(&h.template);
    for it in items {
        match it {
            Item::Scalar(s) => {
                check_ident(&s.parameter, Lang::Brms, RESERVED)?;
                // Stated by the template's supplied code (e.g. a random-slope sd
                // with its group and coefficient).
                if layout
                    .code_prefix
                    .is_some_and(|p| s.parameter.starts_with(p))
                {
                    names.push(s.parameter.clone());
                    continue;
                }
                let f = from_family(s, "brms", &s.family.forms.brms)?;
                // A brms class of its own keeps its name; a non-linear parameter
                // must not take a distributional parameter's.
                let rename = if layout.class(&s.parameter).is_some() {
                    nlpar_name
                } else {
                    brms_name
                };
                let nl = rename(&f.sampled);
                names.push(nl.clone());
                let mut comments = Vec::new();
                let target = rename(&s.parameter);
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
                    if nl != nlpar_name(&s.parameter) {
                        comments.push(format!(
                            "(renamed: brms reads `{}` as its own distributional parameter)",
                            s.parameter
                        ));
                    }
                }
                // A parameter the template names as a brms class of its own (a
                // prior on another scale stays a non-linear parameter): no bounds.
                let native = layout.class(&s.parameter).filter(|_| f.derived.is_none());
                if let Some(c) = native {
                    comments.retain(|c| !c.starts_with("nlpar "));
                    if let Some(note) = c.bounds_note {
                        if f.lower.is_some() || f.upper.is_some() {
                            comments.push(note.to_string());
                        }
                    }
                    calls.push((
                        comments,
                        format!("set_prior(\"{}\", class = \"{}\")", f.dist, c.class),
                    ));
                    continue;
                }
                // A single population-level coefficient (covariate-specific prior).
                let coef = layout
                    .coef_prefix
                    .and_then(|p| s.parameter.strip_prefix(p))
                    .filter(|_| f.derived.is_none());
                if let Some(c) = coef {
                    if f.lower.is_some() || f.upper.is_some() {
                        return Err(super::unsupported(format!(
                            "the prior of `{}` ({}) has bounds, and brms takes no bounds on a \
                             single coefficient of class \"b\"; use a family on the real line, \
                             or the Stan or PyMC export",
                            s.parameter, s.family.name
                        )));
                    }
                    comments.retain(|c| !c.starts_with("nlpar "));
                    calls.push((
                        comments,
                        format!("set_prior(\"{}\", class = \"b\", coef = \"{c}\")", f.dist),
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
    for l in layout.usage {
        out.push_str(&format!("# {l}\n"));
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
        // brms's own distributional parameters are renamed (the Weibull `shape` clash).
        assert_eq!(super::brms_name("shape"), "nlShape");
        assert_eq!(super::brms_name("sigma"), "nlSigma");
        assert_eq!(super::brms_name("log_scale"), "logScale");
        assert_eq!(
            super::nlpar_name("cure_effect_arm_logit"),
            "cureEffectArmLogit"
        );
    }
}

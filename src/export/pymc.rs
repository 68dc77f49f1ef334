//! PyMC export: distribution constructors inside a `with pm.Model()` context.
//!
//! The family decides how it is written (`FamilyInfo::forms.pymc`, a
//! [`crate::dist::forms::PymcForm`]: the PyMC 5 class and its keyword arguments
//! in PyMC's parameterisation, and when PyMC lacks the family a helper variable
//! on another scale with the parameter as a `pm.Deterministic`); this file only
//! renders it. A family that declares no PyMC form is a clear error.

use super::stan::no_form;
use super::{check_ident, check_unique, header_lines, num, Header, Item, Lang, Scalar, Sections};
use crate::dist::forms::{Args, Form};
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
    Ok(statement(s)?.0)
}

/// The lines for one scalar prior and the helper variable they declare, if any.
fn statement(s: &Scalar) -> Result<(Vec<String>, Option<String>)> {
    let write = match &s.family.forms.pymc {
        Form::Written(write) => write,
        Form::Absent(why) => return Err(no_form(s, "PyMC", why)),
    };
    let f = write(&Args {
        name: &s.parameter,
        values: &s.params,
        num,
    });
    let name = &s.parameter;
    let kw = f.kwargs_text(num);
    let mut out: Vec<String> = f.note.iter().map(|n| format!("# {n}")).collect();
    let helper = match f.helper {
        None => {
            out.push(format!("{name} = pm.{}(\"{name}\", {kw})", f.class));
            None
        }
        Some((suffix, inverse)) => {
            let h = format!("{name}_{suffix}");
            out.push(format!("{h} = pm.{}(\"{h}\", {kw})", f.class));
            out.push(format!(
                "{name} = pm.Deterministic(\"{name}\", pm.math.{inverse}({h}))"
            ));
            Some(h)
        }
    };
    Ok((out, helper))
}

pub fn render(h: &Header, items: &[Item]) -> Result<String> {
    render_with(h, items, None)
}

/// The prior, and with `likelihood` (the template's PyMC sections: `about`,
/// `args`, `model`) a complete model: a function of the data arrays (`args`)
/// returning the `pm.Model`, its likelihood after the priors.
pub fn render_with(h: &Header, items: &[Item], likelihood: Option<&Sections>) -> Result<String> {
    let mut body = Vec::new();
    let mut names = Vec::new();
    for it in items {
        match it {
            Item::Scalar(s) => {
                check_ident(&s.parameter, Lang::Pymc, RESERVED)?;
                let (mut ls, helper) = statement(s)?;
                names.push(s.parameter.clone());
                names.extend(helper);
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
    let Some(lik) = likelihood else {
        return prior_only(h, &names, body);
    };
    let args: Vec<String> = lik.get("args").cloned().unwrap_or_default();
    for a in &args {
        check_ident(a, Lang::Pymc, RESERVED)?;
    }
    names.extend(args.iter().cloned());
    names.extend(["np", "pt"].map(String::from));
    names.extend(lik.get("locals").into_iter().flatten().cloned());
    check_unique(&names, Lang::Pymc)?;
    let mut out = String::new();
    for l in header_lines(h, "PyMC") {
        out.push_str(&format!("# {l}\n"));
    }
    for a in lik.get("about").into_iter().flatten() {
        out.push_str(&format!("# {a}\n"));
    }
    out.push_str("import numpy as np\nimport pymc as pm\nimport pytensor.tensor as pt\n\n\n");
    out.push_str(&format!("def make_model({}):\n", args.join(", ")));
    out.push_str("    \"\"\"The fitted prior and the right-censored likelihood (see the comments above).\"\"\"\n");
    for a in &args {
        out.push_str(&format!("    {a} = np.asarray({a}, dtype=float)\n"));
    }
    out.push_str("    with pm.Model() as model:\n");
    for l in body.iter().chain(lik.get("model").into_iter().flatten()) {
        out.push_str(&format!("        {l}\n"));
    }
    out.push_str("    return model\n");
    Ok(out)
}

/// The prior alone, inside a `with pm.Model()` context.
fn prior_only(h: &Header, names: &[String], body: Vec<String>) -> Result<String> {
    check_unique(names, Lang::Pymc)?;
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

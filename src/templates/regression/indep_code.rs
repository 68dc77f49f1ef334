//! Export code for independent priors per group of covariates ([`super::indep`]):
//! each group's block is the code of its family for its columns alone
//! ([`super::code`]), its names prefixed `beta_NAME` (`beta_NAME`, `beta_NAME_z`,
//! `beta_NAME_tau`, …), and the full vector `beta` (design order, without the
//! covariates that have priors of their own) is assembled from runs of
//! consecutive columns of one group: Stan slice assignments `beta[a:b] =
//! beta_NAME[c:d]`, PyMC `pm.math.concatenate`.
//!
//! brms: when every group takes normal, student-t or laplace, one
//! `set_prior(…, class = "b", coef = "COLUMN")` per column (native). brms's
//! `horseshoe()` and `R2D2()` apply to the whole class "b": brms 2.18.0
//! refuses them with `coef` ("Prior 'horseshoe(df = 1)' is used in an invalid
//! context", checked with `make_stancode`), so a group under either is refused
//! for brms with that reason; spike-and-slab as for the shared prior.

use super::code::coefficients_about;
use super::coef::Kind;
use super::Regression;
use crate::numerics::format::code as num;
use crate::templates::{Code, PriorStatement};
use std::collections::BTreeMap;

/// Rename the identifiers `beta` and `beta_…` of one group's code to
/// `beta_NAME` and `beta_NAME_…`, leaving keyword arguments (`beta=`) and
/// function calls (Stan's `beta(`) alone.
fn rename(line: &str, name: &str) -> String {
    let c: Vec<char> = line.chars().collect();
    let mut out = String::with_capacity(line.len() + 16);
    let mut i = 0;
    while i < c.len() {
        if c[i].is_ascii_alphanumeric() || c[i] == '_' {
            let st = i;
            while i < c.len() && (c[i].is_ascii_alphanumeric() || c[i] == '_') {
                i += 1;
            }
            let tok: String = c[st..i].iter().collect();
            let next = c[i..].iter().find(|x| !x.is_whitespace());
            let call = next == Some(&'(');
            let kwarg = c.get(i) == Some(&'=');
            if (tok == "beta" || tok.starts_with("beta_")) && !call && !kwarg {
                out.push_str(&format!("beta_{name}{}", &tok[4..]));
            } else {
                out.push_str(&tok);
            }
        } else {
            out.push(c[i]);
            i += 1;
        }
    }
    out
}

/// The coefficients' prior statement with independent priors per group, or
/// `None` for the other forms.
pub(super) fn statement(m: &Regression, h: &[f64]) -> Option<PriorStatement> {
    let c = &m.coef;
    let (ind, gr) = (c.indep.as_ref()?, c.groups.as_ref()?);
    let d = &m.design;
    let p = d.cols();
    let unit = d.stored_as();
    let mut params = Vec::new();
    let mut legend = Vec::new();
    for (a, pr) in ind.priors.iter().enumerate() {
        for (n, i) in pr.names.iter().zip(&pr.idx) {
            params.push((format!("{}.{n}", gr.names[a]), h[*i]));
        }
        legend.push(format!(
            "{} ({}, {} column{})",
            gr.names[a],
            pr.kind.name(),
            gr.cols[a].len(),
            if gr.cols[a].len() == 1 { "" } else { "s" }
        ));
    }
    let mut code: Code = BTreeMap::new();
    let mut refused: BTreeMap<String, String> = BTreeMap::new();
    for (a, pr) in ind.priors.iter().enumerate() {
        let name = &gr.names[a];
        let mut one = pr.clone();
        one.skip = (0..p).map(|j| !gr.cols[a].contains(&j)).collect();
        let cols: Vec<&str> = gr.cols[a].iter().map(|j| d.names[*j].as_str()).collect();
        let about = format!(
            "group {name}: {} coefficient{} per unit of the {unit} design ({})",
            cols.len(),
            if cols.len() == 1 { "" } else { "s" },
            cols.join(", ")
        );
        let gc = coefficients_about(&one, h, d, m.link, m.exposure, Some(&about));
        for lang in ["stan", "pymc"] {
            let Some(secs) = gc.get(lang) else { continue };
            if let Some(why) = secs.get("unsupported") {
                refused
                    .entry(lang.to_string())
                    .or_insert_with(|| format!("group `{name}`: {}", why.join(" ")));
                continue;
            }
            for (sec, lines) in secs {
                code.entry(lang.to_string())
                    .or_default()
                    .entry(sec.clone())
                    .or_default()
                    .extend(lines.iter().map(|l| rename(l, name)));
            }
        }
    }
    // The shared vector in design order, without covariates of their own.
    let shared: Vec<usize> = (0..p)
        .filter(|j| !c.skip.get(*j).copied().unwrap_or(false))
        .collect();
    let ps = shared.len();
    let mut seen = vec![0usize; gr.count()];
    let mut runs: Vec<(usize, usize, usize, usize)> = Vec::new(); // (first, last) in beta, group, position in group
    for (k, j) in shared.iter().enumerate() {
        let g = gr.of[*j];
        match runs.last_mut() {
            Some(r) if r.2 == g => r.1 = k,
            _ => runs.push((k, k, g, seen[g])),
        }
        seen[g] += 1;
    }
    let about_all = format!(
        "{ps} coefficients per unit of the {unit} design priorsmith fitted on, design order{}",
        if ps < p {
            ", without the covariates that have priors of their own"
        } else {
            ""
        }
    );
    let mut stan_t = vec![format!("vector[{ps}] beta;  // {about_all}")];
    let mut pieces = Vec::new();
    for (first, last, g, pos) in &runs {
        let len = last - first + 1;
        let n = &gr.names[*g];
        stan_t.push(format!(
            "beta[{}:{}] = beta_{n}[{}:{}];  // group {n}",
            first + 1,
            last + 1,
            pos + 1,
            pos + len
        ));
        pieces.push(format!("beta_{n}[{pos}:{}]", pos + len));
    }
    let head = format!(
        "independent priors per group of coefficients: {}",
        legend.join(", ")
    );
    if let Some(secs) = code.get_mut("stan") {
        secs.entry("parameters".into())
            .or_default()
            .insert(0, format!("// {head}"));
        secs.entry("transformed_parameters".into())
            .or_default()
            .extend(stan_t);
    }
    if let Some(secs) = code.get_mut("pymc") {
        let model = secs.entry("model".into()).or_default();
        model.insert(0, format!("# {head}"));
        model.push(format!(
            "beta = pm.Deterministic(\"beta\", pm.math.concatenate([{}]))  # {about_all}",
            pieces.join(", ")
        ));
    }
    for (lang, why) in refused {
        code.insert(
            lang,
            BTreeMap::from([("unsupported".to_string(), vec![why])]),
        );
    }
    let brms = brms_lines(m, h);
    code.insert(
        "brms".into(),
        BTreeMap::from([match brms {
            Ok(lines) => ("priors".to_string(), lines),
            Err(why) => ("unsupported".to_string(), vec![why]),
        }]),
    );
    Some(PriorStatement {
        parameter: "coefficients".to_string(),
        family: "coefficients/independent-groups".to_string(),
        params,
        about: format!("{head} (per unit of the {unit} design)"),
        code: Some(code),
    })
}

/// brms: one coefficient-level prior per column when every group takes
/// normal, student-t or laplace; else the reason.
fn brms_lines(m: &Regression, h: &[f64]) -> Result<Vec<String>, String> {
    let c = &m.coef;
    let (Some(ind), Some(gr)) = (c.indep.as_ref(), c.groups.as_ref()) else {
        return Err("no groups".into());
    };
    let d = &m.design;
    let mut out = vec![format!(
        "# class \"b\", one prior per coefficient of the {} design priorsmith fitted on (its groups: {})",
        d.stored_as(),
        gr.names.join(", ")
    )];
    for (a, pr) in ind.priors.iter().enumerate() {
        let name = &gr.names[a];
        let x = |k: usize| num(h[pr.idx[k]]);
        let stmt = match pr.kind {
            Kind::Normal => format!("normal(0, {})", x(0)),
            Kind::StudentT => format!("student_t({}, 0, {})", x(0), x(1)),
            Kind::Laplace => format!("double_exponential(0, {})", x(0)),
            Kind::SpikeSlab => {
                return Err(format!(
                    "group `{name}`: spike-and-slab needs discrete inclusion indicators, which \
                     brms (Stan) cannot sample; use the PyMC export"
                ))
            }
            k => {
                return Err(format!(
                    "group `{name}` takes {}: brms's horseshoe() and R2D2() apply to the whole \
                     class \"b\" and brms 2.18 refuses them for a subset of coefficients (with \
                     `coef`: \"used in an invalid context\"), so a group cannot have its own; \
                     use the Stan or PyMC export",
                    k.name()
                ))
            }
        };
        out.push(format!("# group {name}"));
        for j in &gr.cols[a] {
            out.push(format!(
                "set_prior(\"{stmt}\", class = \"b\", coef = \"{}\")",
                d.names[*j]
            ));
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    #[test]
    fn rename_keeps_keywords_and_calls() {
        let r = |s: &str| super::rename(s, "omics");
        assert_eq!(
            r("beta_r2 ~ beta(2, 3);  // R²"),
            "beta_omics_r2 ~ beta(2, 3);  // R²"
        );
        assert_eq!(
            r("beta_tau = pm.HalfCauchy(\"beta_tau\", beta=0.1)"),
            "beta_omics_tau = pm.HalfCauchy(\"beta_omics_tau\", beta=0.1)"
        );
        assert_eq!(
            r("vector[3] beta = beta_z .* beta_lambda * 2;"),
            "vector[3] beta_omics = beta_omics_z .* beta_omics_lambda * 2;"
        );
        assert_eq!(r("betamax betas"), "betamax betas");
    }
}

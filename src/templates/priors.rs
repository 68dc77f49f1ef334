//! Scalar parameter priors from `[prior.<name>]` tables: a family plus its
//! parameters, each fixed (a number) or free (`{ fit = [lo, hi] }`). Shared by
//! every template. A free hyperparameter's bounds are checked against the
//! family's domain at validation time, so the optimiser never proposes a value
//! the family rejects.

use super::{Hyper, HyperValue, PriorStatement};
use crate::dist::{self, Base, Continuous, FamilyInfo};
use crate::error::{choice_hint, Result};
use crate::input::{key, Ctx, Seg};
use crate::rng;

#[derive(Debug, Clone)]
pub struct ScalarPrior {
    pub param: String,
    pub family: &'static FamilyInfo,
    /// Indices of this prior's parameters in the model's hyperparameter vector.
    pub idx: Vec<usize>,
}

impl ScalarPrior {
    pub fn build(&self, h: &[f64]) -> Result<Box<dyn Continuous>> {
        let vals: Vec<f64> = self.idx.iter().map(|i| h[*i]).collect();
        Ok((self.family.build)(&vals)?)
    }
}

/// The scalar priors of a model and the hyperparameters they own.
#[derive(Debug, Clone, Default)]
pub struct PriorSet {
    pub priors: Vec<ScalarPrior>,
    pub hypers: Vec<Hyper>,
}

impl PriorSet {
    /// Read `[prior.<param>]`; `allowed` restricts the families (empty: any).
    pub fn add(
        &mut self,
        ctx: &Ctx,
        param: &str,
        allowed: &[&str],
        example: &str,
    ) -> Result<usize> {
        self.add_keyed(ctx, param, param, allowed, example, &[])
    }

    /// Read the table `[prior.<table>]` as the prior of parameter `param`
    /// (hyperparameters `<param>.<name>`); `extra` lists keys the caller reads
    /// itself (e.g. `covariates`).
    pub fn add_keyed(
        &mut self,
        ctx: &Ctx,
        table: &str,
        param: &str,
        allowed: &[&str],
        example: &str,
        extra: &[&str],
    ) -> Result<usize> {
        let t = ctx.prior_table(table, example)?;
        let path = [key("prior"), key(table)];
        self.add_from(ctx, &path, table, t, param, allowed, example, extra)
    }

    /// Read the table `t` at `path` (named `[prior.<label>]` in messages) as the
    /// prior of parameter `param` (hyperparameters `<label>.<name>` when `label`
    /// differs from the table name of [`PriorSet::add_keyed`], e.g. a nested
    /// `[prior.cluster_slope_sd.age]`).
    #[allow(clippy::too_many_arguments)]
    pub fn add_from(
        &mut self,
        ctx: &Ctx,
        path: &[Seg],
        table: &str,
        t: &toml::Table,
        param: &str,
        allowed: &[&str],
        example: &str,
        extra: &[&str],
    ) -> Result<usize> {
        let fam_v = t.get("family").ok_or_else(|| {
            ctx.err(path, format!("[prior.{table}] needs `family`"))
                .with_hint(format!("e.g. {example}"))
        })?;
        let mut fp = path.to_vec();
        fp.push(key("family"));
        let name = ctx.string(&fp, fam_v)?;
        let choices: Vec<&str> = if allowed.is_empty() {
            dist::family_names()
        } else {
            allowed.to_vec()
        };
        let family = dist::family(name)
            .filter(|_| choices.contains(&name))
            .ok_or_else(|| {
                // Why a known family is refused: where it puts its mass.
                let why = match dist::family(name) {
                    Some(f) => format!(
                        " (its support is {}, and {param} takes values on {})",
                        support_words(f.support),
                        reach_words(&choices)
                    ),
                    None => String::new(),
                };
                let mut hint = choice_hint(name, &choices);
                if name == "uniform" && choices.contains(&"beta") {
                    hint.push_str(" (a flat prior on (0, 1) is beta with alpha = 1, beta = 1)");
                }
                ctx.err(
                    &fp,
                    format!("family \"{name}\" is not available for {param}{why}"),
                )
                .with_hint(hint)
            })?;
        let mut keys = vec!["family"];
        keys.extend_from_slice(family.params);
        keys.extend_from_slice(extra);
        ctx.check_keys(path, t, &keys)?;
        let mut idx = Vec::new();
        let mut values = Vec::new();
        for p in family.params {
            let mut pp = path.to_vec();
            pp.push(key(p));
            let v = t.get(*p).ok_or_else(|| {
                ctx.err(path, format!("[prior.{table}] ({name}) needs `{p}`"))
                    .with_hint(format!(
                        "{name} takes {}; each is a number or {{ fit = [lower, upper] }}",
                        family.params.join(", ")
                    ))
            })?;
            values.push((pp, ctx.hyper_value(&path_with(path, p), v)?));
        }
        // Check that every free hyperparameter's bounds stay inside the family's domain.
        let rep: Vec<f64> = values
            .iter()
            .map(|(_, v)| Hyper::new(String::new(), v.clone()).default_value())
            .collect();
        for (k, (pp, v)) in values.iter().enumerate() {
            let probe: Vec<f64> = match v {
                HyperValue::Fixed(x) => vec![*x],
                HyperValue::Free { lo, hi, .. } => vec![*lo, *hi],
            };
            for x in probe {
                let mut trial = rep.clone();
                trial[k] = x;
                if let Err(e) = (family.build)(&trial) {
                    if e.param == family.params[k] {
                        return Err(ctx.err(
                            pp,
                            format!(
                                "{name}: `{}` = {x} is outside its domain ({})",
                                e.param, e.reason
                            ),
                        ));
                    }
                }
            }
        }
        for (k, (_, v)) in values.into_iter().enumerate() {
            idx.push(self.hypers.len());
            self.hypers
                .push(Hyper::new(format!("{param}.{}", family.params[k]), v));
        }
        self.priors.push(ScalarPrior {
            param: param.to_string(),
            family,
            idx,
        });
        Ok(self.priors.len() - 1)
    }

    /// A further prior of parameter `param` sharing the hyperparameters of prior
    /// `k` (independent draws, the same family and values: e.g. each covariate of
    /// a list that takes one prior).
    pub fn share(&mut self, k: usize, param: &str) -> usize {
        let mut p = self.priors[k].clone();
        p.param = param.to_string();
        self.priors.push(p);
        self.priors.len() - 1
    }

    /// One base column per prior, of the family's base kind.
    pub fn draw_base(&self, n: usize, plan: &rng::Plan) -> Vec<Vec<f64>> {
        self.draw_base_on(n, plan, |k| k as u64)
    }

    /// As [`PriorSet::draw_base`], prior k on stream `stream(k)` of the plan.
    pub fn draw_base_on(
        &self,
        n: usize,
        plan: &rng::Plan,
        stream: impl Fn(usize) -> u64,
    ) -> Vec<Vec<f64>> {
        self.priors
            .iter()
            .enumerate()
            .map(|(k, p)| match p.family.base {
                Base::Normal => plan.normals(stream(k), n),
                Base::Uniform => plan.uniforms(stream(k), n),
            })
            .collect()
    }

    /// Map base columns to parameter draws at hyperparameters `h`.
    pub fn fill(&self, h: &[f64], base: &[Vec<f64>], out: &mut [Vec<f64>]) -> Result<()> {
        for ((p, b), o) in self.priors.iter().zip(base).zip(out.iter_mut()) {
            let d = p.build(h)?;
            o.resize(b.len(), 0.0);
            d.fill_from_base(b, o);
        }
        Ok(())
    }

    pub fn statements(&self, h: &[f64], about: impl Fn(&str) -> String) -> Vec<PriorStatement> {
        self.priors
            .iter()
            .map(|p| PriorStatement {
                parameter: p.param.clone(),
                family: p.family.name.to_string(),
                params: p
                    .family
                    .params
                    .iter()
                    .zip(&p.idx)
                    .map(|(n, i)| (n.to_string(), h[*i]))
                    .collect(),
                about: about(&p.param),
                code: None,
            })
            .collect()
    }

    /// Mean over priors of ln sd on each family's working scale: the log of θ for
    /// positive families, the logit for (0, 1) families, θ itself otherwise; the sd is
    /// read from the quartiles, (g(Q₃) − g(Q₁))/1.349 (exact for normal, log-normal
    /// and logit-normal; 1.349 is the normal's interquartile range in sd units). On
    /// these scales the spread does not depend on the unit of time or of a rate.
    pub fn spread(&self, h: &[f64]) -> f64 {
        use crate::dist::Support;
        use crate::target::quantiles::Scale;
        let mut s = 0.0;
        let mut n = 0.0;
        for p in &self.priors {
            if let Ok(d) = p.build(h) {
                let g = match p.family.support {
                    Support::Positive => Scale::Log,
                    Support::Unit => Scale::Logit,
                    _ => Scale::Identity,
                };
                let sd = (g.to(d.quantile(0.75)) - g.to(d.quantile(0.25))) / 1.349;
                if sd > 0.0 && sd.is_finite() {
                    s += sd.ln();
                    n += 1.0;
                }
            }
        }
        if n > 0.0 {
            s / n
        } else {
            0.0
        }
    }
}

/// The families whose support lies inside `support` (the support-based rule: a
/// parameter on (0, ∞) takes every family on (0, ∞) or a part of it, a real
/// parameter every family on the real line or an interval the prior sets).
pub fn families_on(support: dist::Support) -> Vec<&'static str> {
    use dist::Support::*;
    dist::names_where(|f| match support {
        Real => f.real_valued(),
        Positive => f.support == Positive,
        Unit => f.support == Unit,
        Interval => f.support == Interval,
    })
}

fn support_words(s: dist::Support) -> &'static str {
    match s {
        dist::Support::Real => "the real line",
        dist::Support::Positive => "(0, ∞)",
        dist::Support::Unit => "(0, 1)",
        dist::Support::Interval => "an interval set by its bounds",
    }
}

/// What the allowed families reach together, in words.
fn reach_words(choices: &[&str]) -> String {
    let mut s: Vec<&str> = choices
        .iter()
        .filter_map(|c| dist::family(c))
        .map(|f| support_words(f.support))
        .collect();
    s.sort_unstable();
    s.dedup();
    s.join(" or ")
}

fn path_with(path: &[Seg], k: &str) -> Vec<Seg> {
    let mut p = path.to_vec();
    p.push(key(k));
    p
}

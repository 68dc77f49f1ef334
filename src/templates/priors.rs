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
        let t = ctx.prior_table(param, example)?;
        let path = [key("prior"), key(param)];
        let fam_v = t.get("family").ok_or_else(|| {
            ctx.err(&path, format!("[prior.{param}] needs `family`"))
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
                ctx.err(
                    &fp,
                    format!("family \"{name}\" is not available for {param}"),
                )
                .with_hint(choice_hint(name, &choices))
            })?;
        let mut keys = vec!["family"];
        keys.extend_from_slice(family.params);
        ctx.check_keys(&path, t, &keys)?;
        let mut idx = Vec::new();
        let mut values = Vec::new();
        for p in family.params {
            let mut pp = path.to_vec();
            pp.push(key(p));
            let v = t.get(*p).ok_or_else(|| {
                ctx.err(&path, format!("[prior.{param}] ({name}) needs `{p}`"))
                    .with_hint(format!(
                        "{name} takes {}; each is a number or {{ fit = [lower, upper] }}",
                        family.params.join(", ")
                    ))
            })?;
            values.push((pp, ctx.hyper_value(&path_with(&path, p), v)?));
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

    /// One base column per prior, of the family's base kind.
    pub fn draw_base(&self, n: usize, plan: &rng::Plan) -> Vec<Vec<f64>> {
        self.priors
            .iter()
            .enumerate()
            .map(|(k, p)| match p.family.base {
                Base::Normal => plan.normals(k as u64, n),
                Base::Uniform => plan.uniforms(k as u64, n),
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

fn path_with(path: &[Seg], k: &str) -> Vec<Seg> {
    let mut p = path.to_vec();
    p.push(key(k));
    p
}

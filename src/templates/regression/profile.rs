//! Profiles and contrasts: a named `[profile.NAME]` table (design-column values in
//! the design's own units; a column not named takes its design mean) or a
//! `contrast = "NAME"` / `"NAME:DELTA"`, resolved to raw covariate vectors and the
//! sparse linear form a with η − α = aᵀβ on the design as stored (centred, and
//! standardised when the design is).

use super::Regression;
use crate::error::{choice_hint, Result};
use crate::input::{key, Ctx, Seg};

/// A sparse linear form: (column, coefficient) pairs.
pub(super) type Form = Vec<(usize, f64)>;
/// A request's profiles (the lookup key), its linear form and its label.
pub(super) type Keyed = (Vec<Vec<f64>>, Form, String);

impl Regression {
    fn unit(&self, j: usize) -> f64 {
        1.0 / self.design.stored_scale(j)
    }

    /// A named profile: raw covariate values (design means where not given) and
    /// its sparse linear form.
    pub(super) fn profile(&self, ctx: &Ctx, path: &[Seg], name: &str) -> Result<(Vec<f64>, Form)> {
        let mut x = self.design.raw_means.clone();
        if name == "reference" {
            return Ok((x, Vec::new()));
        }
        let t = ctx.profile_table(path, name)?;
        let mut form = Vec::new();
        for (k, v) in t {
            let pp = [key("profile"), key(name), key(k)];
            let j = self.design.column(k).ok_or_else(|| {
                let names: Vec<&str> = self.design.names.iter().map(String::as_str).collect();
                let hint = if names.len() <= 30 {
                    choice_hint(k, &names)
                } else {
                    match crate::error::nearest(k, names.iter().copied()) {
                        Some(n) => format!("did you mean `{n}`?"),
                        None => format!(
                            "the design has columns {} … {}",
                            names[0],
                            names[names.len() - 1]
                        ),
                    }
                };
                ctx.err(
                    &pp,
                    format!("profile \"{name}\" names `{k}`, which is not a column of the design"),
                )
                .with_hint(hint)
            })?;
            let val = ctx.num(&pp, v)?;
            x[j] = val;
            form.push((j, (val - self.design.raw_means[j]) * self.unit(j)));
        }
        form.sort_by_key(|f| f.0);
        Ok((x, form))
    }

    /// Parse `contrast = "NAME"` or `"NAME:DELTA"`.
    pub(super) fn contrast(&self, ctx: &Ctx, path: &[Seg], c: &str) -> Result<Keyed> {
        let (name, delta) = match c.split_once(':') {
            Some((n, d)) => {
                let d: f64 = d
                    .trim()
                    .parse()
                    .ok()
                    .filter(|d: &f64| d.is_finite() && *d != 0.0)
                    .ok_or_else(|| {
                        ctx.err(
                            path,
                            format!("contrast \"{c}\": `{d}` is not a non-zero number"),
                        )
                        .with_hint(
                            "write \"NAME\" (one unit higher) or \"NAME:DELTA\", e.g. \"age:10\"",
                        )
                    })?;
                (n.trim(), d)
            }
            None => (c.trim(), 1.0),
        };
        let j = self.design.column(name).ok_or_else(|| {
            let names: Vec<&str> = self.design.names.iter().map(String::as_str).collect();
            ctx.err(
                path,
                format!("contrast \"{c}\": `{name}` is not a column of the design"),
            )
            .with_hint(match crate::error::nearest(name, names.iter().copied()) {
                Some(n) => format!("did you mean `{n}`?"),
                None => "write \"NAME\" or \"NAME:DELTA\" with NAME a design column".to_string(),
            })
        })?;
        let base = self.design.raw_means.clone();
        let mut hi = base.clone();
        hi[j] += delta;
        let label = if delta == 1.0 {
            format!("{name} +1")
        } else {
            format!("{name} {delta:+}")
        };
        Ok((vec![hi, base], vec![(j, delta * self.unit(j))], label))
    }
}

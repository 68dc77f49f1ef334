//! Requests of the regression templates: validating a belief's quantity and its
//! options against the template's quantity table (pure: the model is not
//! changed), and, once every belief is validated, the [`Needs`] of all requests
//! together — which design products the base draws compute.

use super::profile::Form;
use super::quantity::RegQuantity;
use super::Regression;
use crate::error::Result;
use crate::input::raw::RawBelief;
use crate::input::{key, Ctx, Seg};
use crate::templates::quantity::lookup;
use crate::templates::{At, Detail, Request};

/// What a regression request resolved: its quantity and, at a profile or for a
/// contrast, the sparse linear form a with η − α = aᵀβ.
#[derive(Debug)]
pub(super) struct RegDetail {
    pub(super) quantity: RegQuantity,
    pub(super) form: Option<Form>,
    /// The group of `r2_share` ([`super::groups`]).
    pub(super) group: Option<usize>,
}

/// What the beliefs ask for beyond the always-computed products.
#[derive(Debug, Clone, Default)]
pub(super) struct Needs {
    /// The linear predictor at every design row.
    pub(super) rows: bool,
    /// The design quadratic form βᵀSβ.
    pub(super) q: bool,
    /// The shrinkage terms of `effective_nonzero`.
    pub(super) eff: bool,
    /// The profiles of each distinct linear form (the key a request finds its
    /// form by) and the forms, in the same order: first request first.
    pub(super) keys: Vec<Vec<Vec<f64>>>,
    pub(super) forms: Vec<Form>,
    /// Index in `forms` of the first cross form c_k of the own covariates
    /// (one per own covariate, when `q` is needed).
    pub(super) cross: usize,
}

impl Needs {
    /// What the requests need together.
    pub(super) fn of(requests: &[&Request], model: &Regression) -> Result<Self> {
        let mut needs = Needs::default();
        for r in requests {
            let d = r.detail.get::<RegDetail>()?;
            if let Some(form) = &d.form {
                if !needs.keys.contains(&r.profiles) {
                    needs.keys.push(r.profiles.clone());
                    needs.forms.push(form.clone());
                }
            }
            needs.rows |= d.quantity.needs_rows(model.link);
            needs.q |= d.quantity.needs_quadratic();
            needs.eff |= d.quantity.needs_shrinkage();
        }
        // The cross terms of the design variance with covariate-specific priors:
        // dense forms after the profiles' ([`super::own`]).
        needs.cross = needs.forms.len();
        if needs.q && !model.own.is_empty() {
            needs
                .forms
                .extend(super::own::cross_forms(&model.design, &model.own));
        }
        Ok(needs)
    }

    /// The index of the linear form of `profiles`.
    pub(super) fn form_of(&self, profiles: &[Vec<f64>]) -> Option<usize> {
        self.keys.iter().position(|k| k == profiles)
    }
}

fn sub(path: &[Seg], k: &str) -> Vec<Seg> {
    let mut p = path.to_vec();
    p.push(key(k));
    p
}

impl Regression {
    /// Validate a belief's quantity and options ([`crate::templates::Model::request`]).
    pub(super) fn resolve(
        &self,
        ctx: &Ctx,
        path: &[Seg],
        quantity: &str,
        raw: &RawBelief,
    ) -> Result<Request> {
        let def = lookup(self.quantities, quantity).ok_or_else(|| {
            ctx.err(
                &sub(path, "quantity"),
                format!("unknown quantity \"{quantity}\""),
            )
        })?;
        if raw.horizon.is_some() {
            return Err(ctx.err(
                &sub(path, "horizon"),
                format!("{quantity} takes no horizon"),
            ));
        }
        if raw.profiles.is_some() {
            return Err(ctx
                .err(
                    &sub(path, "profiles"),
                    format!("{quantity} takes no `profiles`"),
                )
                .with_hint("use `profile = \"NAME\"`, or `contrast` for odds_ratio / rate_ratio"));
        }
        if raw.profile.is_some() && def.at != At::Profile {
            return Err(ctx.err(
                &sub(path, "profile"),
                format!("{quantity} is a design-level quantity and takes no `profile`"),
            ));
        }
        if raw.contrast.is_some() && def.at != At::Contrast {
            return Err(ctx.err(
                &sub(path, "contrast"),
                format!("{quantity} takes no `contrast` (only odds_ratio, rate_ratio and slope_spread do)"),
            ));
        }
        let group = self.group_of(ctx, path, def.kind, raw)?;
        if self.coef.groups.is_some() && def.kind.needs_rows(self.link) {
            return Err(ctx
                .err(
                    &sub(path, "quantity"),
                    format!("{quantity} is not available with coefficient groups"),
                )
                .with_hint("it needs the linear predictor at every design row; use r2_marginal, r2_share, signal_sd or quantities at a profile"));
        }
        let mut label = super::multilevel::label(def.kind, self.link)
            .unwrap_or(quantity)
            .to_string();
        // With random slopes the ICC and the median ratio are those of the
        // reference profile, where the slope part vanishes ([`super::multilevel`]).
        if !self.slopes.is_empty()
            && matches!(def.kind, RegQuantity::Icc | RegQuantity::MedianRatio)
        {
            label.push_str(" at the reference profile");
        }
        let (profiles, names, form) = match def.at {
            At::Profile => {
                let name = raw
                    .profile
                    .clone()
                    .unwrap_or_else(|| "reference".to_string());
                let (x, form) = self.profile(ctx, &sub(path, "profile"), &name)?;
                if name != "reference" {
                    label.push_str(&format!(" ({name})"));
                }
                (vec![x], vec![name], Some(form))
            }
            At::Contrast => {
                let c = raw.contrast.as_deref().ok_or_else(|| {
                    ctx.err(path, format!("{quantity} needs `contrast`"))
                        .with_hint(
                        "contrast = \"NAME\" (covariate NAME one unit higher) or \"NAME:DELTA\"",
                    )
                })?;
                let (key, form, l) = self.contrast(ctx, &sub(path, "contrast"), c)?;
                if def.kind == RegQuantity::SlopeSpread
                    && !form
                        .first()
                        .is_some_and(|(j, _)| self.slopes.iter().any(|s| s.col == *j))
                {
                    let with: Vec<&str> = self.slopes.iter().map(|s| s.name.as_str()).collect();
                    return Err(ctx
                        .err(
                            &sub(path, "contrast"),
                            format!("slope_spread: the covariate of contrast \"{c}\" has no random slope"),
                        )
                        .with_hint(if with.is_empty() {
                            format!(
                                "add [prior.{}.COLUMN] for a random slope",
                                super::multilevel::SLOPE_TABLE
                            )
                        } else {
                            format!("covariates with a random slope: {}", with.join(", "))
                        }));
                }
                label.push_str(&format!(" ({l})"));
                (key, vec![l, "design mean".to_string()], Some(form))
            }
            At::Design | At::TwoProfiles => (Vec::new(), Vec::new(), None),
        };
        if let (Some(k), Some(gr)) = (group, &self.coef.groups) {
            label.push_str(&format!(" ({})", gr.names[k]));
        }
        Ok(Request {
            quantity: quantity.to_string(),
            detail: Detail::new(RegDetail {
                quantity: def.kind,
                form,
                group,
            }),
            horizon: None,
            profiles,
            profile_names: names,
            support: def.support,
            allows_inf: def.allows_inf,
            label,
            unit: None,
        })
    }
}

impl Regression {
    /// The group of an `r2_share` belief; `group` on any other quantity is refused.
    fn group_of(
        &self,
        ctx: &Ctx,
        path: &[Seg],
        kind: RegQuantity,
        raw: &RawBelief,
    ) -> Result<Option<usize>> {
        let gp = sub(path, "group");
        if kind != RegQuantity::R2Share && kind != RegQuantity::R2Marginal {
            return match &raw.group {
                Some(_) => Err(ctx.err(&gp, "only r2_share and r2_marginal take `group`")),
                None => Ok(None),
            };
        }
        if kind == RegQuantity::R2Marginal && raw.group.is_none() {
            return Ok(None);
        }
        let Some(gr) = &self.coef.groups else {
            let what = if kind == RegQuantity::R2Share {
                "r2_share needs groups of covariates"
            } else {
                "r2_marginal takes `group` only with groups of covariates"
            };
            return Err(ctx
                .err(&sub(path, "quantity"), what)
                .with_hint("[prior.coefficients.NAME] tables (independent priors per group), or family = \"r2d2\" with [prior.coefficients.groups.NAME] tables (one joint prior)"));
        };
        let name = raw.group.as_deref().ok_or_else(|| {
            ctx.err(path, "r2_share needs `group`")
                .with_hint(format!("one of: {}", gr.names.join(", ")))
        })?;
        match gr.names.iter().position(|n| n == name) {
            Some(k) => Ok(Some(k)),
            None => Err(ctx
                .err(&gp, format!("no coefficient group \"{name}\""))
                .with_hint(format!("one of: {}", gr.names.join(", ")))),
        }
    }
}

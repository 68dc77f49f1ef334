//! Validation of a survival belief's request (quantity, profile or profiles,
//! horizon) and its readable label, shared by every survival template, and the
//! two-profile treatment-effect contrast ([`contrast`]) the simulators share.

use super::*;

/// Whether a hazard ratio between two covariate vectors is the same at every t.
pub(crate) type ConstantRatio<'a> = dyn Fn(SurvQuantity, &[f64], &[f64]) -> bool + 'a;

/// What [`request_in`] reads from a survival model: its registry entry, quantity
/// table, covariates, time unit and cure form (for the labels).
pub(crate) struct Frame<'a> {
    pub info: &'static TemplateInfo,
    pub table: &'static [QuantityDef<SurvQuantity>],
    pub covariates: &'a [String],
    pub time_unit: &'a str,
    pub cure_kind: Cure,
}

/// Validate a survival belief's request (quantity, profile or profiles,
/// horizon), shared by every survival template; `constant(q, a, b)` says
/// whether hazard ratio `q` between covariate vectors a and b is the same at
/// every t (then it needs no horizon).
pub(crate) fn request_in(
    frame: &Frame,
    ctx: &Ctx,
    path: &[Seg],
    quantity: &str,
    raw: &RawBelief,
    constant: &ConstantRatio<'_>,
) -> Result<Request> {
    let sub = |k: &str| {
        let mut p = path.to_vec();
        p.push(key(k));
        p
    };
    let def = lookup(frame.table, quantity).ok_or_else(|| {
        ctx.err(&sub("quantity"), format!("unknown quantity \"{quantity}\""))
            .with_hint(choice_hint(quantity, &frame.info.quantity_names()))
    })?;
    let q = def.kind;
    if frame.cure_kind == Cure::None && q.is_cure() {
        return Err(ctx.err(
            &sub("quantity"),
            format!("{quantity} is fixed at 0 when [model] cure = false"),
        ));
    }
    if raw.contrast.is_some() {
        return Err(ctx.err(
            &sub("contrast"),
            format!(
                "{} quantities take no `contrast`; use `profiles = [a, b]` to compare two profiles",
                frame.info.name
            ),
        ));
    }
    if raw.group.is_some() {
        return Err(ctx.err(
            &sub("group"),
            format!(
                "{} quantities take no `group` (only r2_share of the regression templates does)",
                frame.info.name
            ),
        ));
    }
    let (profiles, names) = if def.at == At::TwoProfiles {
        let ps = raw
            .profiles
            .as_ref()
            .filter(|p| p.len() == 2)
            .ok_or_else(|| {
                ctx.err(
                    path,
                    format!("{quantity} needs `profiles = [\"a\", \"b\"]` (two profile names)"),
                )
            })?;
        if raw.profile.is_some() {
            return Err(ctx.err(
                &sub("profile"),
                format!("{quantity} takes `profiles`, not `profile`"),
            ));
        }
        (
            vec![
                ctx.profile(&sub("profiles"), &ps[0], frame.covariates)?,
                ctx.profile(&sub("profiles"), &ps[1], frame.covariates)?,
            ],
            ps.clone(),
        )
    } else {
        if raw.profiles.is_some() {
            return Err(ctx.err(
                &sub("profiles"),
                format!("{quantity} takes one `profile`, not `profiles`"),
            ));
        }
        let name = raw
            .profile
            .clone()
            .unwrap_or_else(|| "reference".to_string());
        (
            vec![ctx.profile(&sub("profile"), &name, frame.covariates)?],
            vec![name],
        )
    };
    // Hazard ratios take a horizon unless the ratio is the same at every t.
    let constant = q.is_hazard_ratio() && constant(q, &profiles[0], &profiles[1]);
    let horizon = match (&raw.horizon, def.horizon) {
        (Some(v), true) => Some(horizon(ctx, &sub("horizon"), v, frame.time_unit)?),
        (None, true) if constant => None,
        (None, true) => {
            let why = if q.is_hazard_ratio() {
                " (the ratio of cumulative hazards at the horizon: in this model the hazard \
                 ratio changes with time)"
            } else {
                ""
            };
            return Err(ctx
                .err(path, format!("{quantity} needs `horizon`{why}"))
                .with_hint(format!("e.g. horizon = 36  # {}", frame.time_unit)));
        }
        (Some(_), false) => {
            return Err(ctx.err(&sub("horizon"), format!("{quantity} takes no horizon")))
        }
        (None, false) => None,
    };
    let unit = q.in_time_unit().then(|| frame.time_unit.to_string());
    let label = label(frame, q, quantity, horizon, &names);
    Ok(Request {
        quantity: quantity.to_string(),
        detail: Detail::new(Asked {
            q,
            constant: q.is_hazard_ratio() && horizon.is_none(),
        }),
        horizon,
        profiles,
        profile_names: names,
        support: def.support,
        allows_inf: def.allows_inf,
        label,
        unit,
    })
}

/// horizon `v` (> 0, in `unit`).
fn horizon(ctx: &Ctx, path: &[Seg], v: &toml::Value, unit: &str) -> Result<f64> {
    let h = ctx.num(path, v)?;
    if h <= 0.0 {
        return Err(ctx.err(path, format!("horizon {h} must be > 0 ({unit})")));
    }
    Ok(h)
}

/// A treatment-effect quantity `q` of one draw between profiles a (0) and b
/// (1), shared by every survival template: `one(q', p)` is the template's
/// one-profile quantity q' ([`SurvQuantity::per_profile`]) at profile p, and
/// `ln_h(p)` the ln of a hazard ratio's numerator (p = 0) or denominator (p = 1).
/// Hazard ratios are exp(ln_h(0) − ln_h(1)); `median_ratio` and `rmst_ratio`
/// the ratio, every other comparison the difference of the one-profile values.
#[inline]
pub(crate) fn contrast(
    q: SurvQuantity,
    one: impl Fn(SurvQuantity, usize) -> f64,
    ln_h: impl Fn(usize) -> f64,
) -> f64 {
    use SurvQuantity::*;
    match q {
        HazardRatio | LatencyHazardRatio => (ln_h(0) - ln_h(1)).exp(),
        MedianRatio | RmstRatio => {
            let pq = q.per_profile().unwrap_or(q);
            one(pq, 0) / one(pq, 1)
        }
        _ => {
            let pq = q.per_profile().unwrap_or(q);
            one(pq, 0) - one(pq, 1)
        }
    }
}

/// A readable label: the quantity, its horizon and profiles.
fn label(
    frame: &Frame,
    q: SurvQuantity,
    quantity: &str,
    horizon: Option<f64>,
    names: &[String],
) -> String {
    use SurvQuantity::*;
    let unit = &frame.time_unit;
    let at = |h: Option<f64>| h.map_or(String::new(), |h| format!(" at {h} {unit}"));
    let two = || format!("{} vs {}", names[0], names[1]);
    let cum = if horizon.is_some() {
        "; ratio of cumulative hazards"
    } else {
        ""
    };
    match q {
        HazardRatio => {
            let whose = if frame.cure_kind == Cure::None {
                ""
            } else {
                ", population"
            };
            format!("hazard ratio{} ({}{whose}{cum})", at(horizon), two())
        }
        LatencyHazardRatio => format!(
            "hazard ratio{} ({}, latency: among the uncured{cum})",
            at(horizon),
            two()
        ),
        SurvivalDifference => format!(
            "survival difference{} ({} − {})",
            at(horizon),
            names[0],
            names[1]
        ),
        RmstDifference => format!(
            "RMST difference to {} {unit} ({} − {})",
            horizon.unwrap_or(f64::NAN),
            names[0],
            names[1]
        ),
        RmstRatio => format!(
            "RMST ratio to {} {unit} ({} / {})",
            horizon.unwrap_or(f64::NAN),
            names[0],
            names[1]
        ),
        MedianRatio => {
            let whose = if frame.cure_kind == Cure::None {
                ""
            } else {
                ", among the uncured"
            };
            format!("median ratio ({} / {}{whose})", names[0], names[1])
        }
        _ => {
            // The labels the mixture-cure template always wrote.
            let mut label = quantity.to_string();
            if let Some(h) = horizon {
                label.push_str(&format!(" at {h} {unit}"));
            }
            if names != ["reference"] {
                label.push_str(&format!(" ({})", names.join(" vs ")));
            }
            label
        }
    }
}

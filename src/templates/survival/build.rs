//! Reading a survival template's `[model]` table and its `[prior.*]` tables
//! into a [`Survival`] model: the latency, the cure form, covariates and their
//! effects (on the cure part, on the time scale or on the hazard).

use super::*;

/// The table of a prior on the cured fraction itself (instead of its logit or
/// of log θ).
pub(crate) const CURE_FRACTION: &str = "cure_fraction";

/// `[model]` table of a survival template, read into a model. `cure_option`:
/// whether the template takes `cure = true | false` (the mixture cure, where
/// `false` is parametric survival kept for older belief files).
pub(crate) fn build(
    ctx: &Ctx,
    info: &'static TemplateInfo,
    table: &'static [QuantityDef<SurvQuantity>],
    kind: Cure,
) -> Result<Box<dyn Model>> {
    let m = ctx.model();
    let mp = |k: &str| [key("model"), key(k)];
    let keys: Vec<&str> = info.options.iter().map(|o| o.0).collect();
    ctx.check_keys(&[key("model")], m, &keys)?;
    let latency = match m.get("latency") {
        None => Latency::Weibull,
        Some(v) => {
            let name = ctx.string(&mp("latency"), v)?;
            Latency::from_name(name).ok_or_else(|| {
                ctx.err(&mp("latency"), format!("unknown latency \"{name}\""))
                    .with_hint(choice_hint(name, &LATENCIES))
            })?
        }
    };
    let latency = match (latency, m.get("gengamma_q")) {
        (Latency::GenGamma(_), None) => {
            return Err(ctx
                .err(
                    &mp("latency"),
                    "latency = \"gengamma\" needs [model] gengamma_q (Prentice's Q)",
                )
                .with_hint(format!(
                    "add e.g. gengamma_q = 0.5 (Q = 1: Weibull, Q → 0: log-normal; |Q| ≤ {})",
                    latency::GG_Q_MAX
                )))
        }
        (Latency::GenGamma(_), Some(v)) => {
            let q = match v {
                toml::Value::Float(x) => *x,
                toml::Value::Integer(i) => *i as f64,
                _ => {
                    return Err(ctx.err(&mp("gengamma_q"), format!("expected a number, found {v}")))
                }
            };
            if q.is_nan() || q.abs() > latency::GG_Q_MAX {
                return Err(ctx
                    .err(
                        &mp("gengamma_q"),
                        format!("gengamma_q = {v} is outside [-{0}, {0}]", latency::GG_Q_MAX),
                    )
                    .with_hint(
                        "beyond |Q| = 3 the incomplete gamma of shape Q⁻² is slow and inaccurate",
                    ));
            }
            Latency::GenGamma(q)
        }
        (l, Some(_)) => {
            return Err(ctx
                .err(
                    &mp("gengamma_q"),
                    format!("gengamma_q given but latency = \"{}\"", l.name()),
                )
                .with_hint("remove gengamma_q, or set latency = \"gengamma\""))
        }
        (l, None) => l,
    };
    let time_unit = match m.get("time_unit") {
        Some(v) => ctx.string(&mp("time_unit"), v)?.to_string(),
        None => "months".to_string(),
    };
    let kind = match (kind, m.get("cure")) {
        (k, None) => k,
        (Cure::Mixture, Some(toml::Value::Boolean(b))) => {
            if *b {
                Cure::Mixture
            } else {
                Cure::None
            }
        }
        (_, Some(v)) => {
            return Err(ctx.err(&mp("cure"), format!("expected true or false, found {v}")))
        }
    };
    let covariates: Vec<String> = match m.get("covariates") {
        None => Vec::new(),
        Some(toml::Value::Array(a)) => a
            .iter()
            .enumerate()
            .map(|(i, v)| {
                let mut p = mp("covariates").to_vec();
                p.push(Seg::Index(i));
                ctx.string(&p, v).map(str::to_string)
            })
            .collect::<Result<_>>()?,
        Some(v) => {
            return Err(ctx.err(
                &mp("covariates"),
                format!("expected a list of names, found {v}"),
            ))
        }
    };
    for (i, c) in covariates.iter().enumerate() {
        let mut p = mp("covariates").to_vec();
        p.push(Seg::Index(i));
        if c.trim().is_empty() {
            return Err(ctx
                .err(&p, format!("covariate {} has an empty name \"{c}\"", i + 1))
                .with_hint("name each covariate, e.g. covariates = [\"arm\"]"));
        }
        if covariates[..i].contains(c) {
            return Err(ctx
                .err(
                    &p,
                    format!("covariate `{c}` is listed twice (its effect would count twice)"),
                )
                .with_hint("list each covariate once"));
        }
    }
    // Every [profile.NAME] table, used by a belief or not, names declared
    // covariates only.
    for name in ctx.raw.profile.keys() {
        ctx.profile(&[key("profile"), key(name)], name, &covariates)?;
    }
    let mut priors = PriorSet::default();
    let real = crate::dist::names_where(|f| f.real_valued());
    let (cure_param, cure_effect) = match kind {
        Cure::PromotionTime => ("log_theta", "theta_effect"),
        _ => ("cure_logit", "cure_effect"),
    };
    let (cure, cure_on_fraction) = match kind {
        Cure::Mixture | Cure::PromotionTime => {
            let (eta_example, eta_about) = match kind {
                Cure::PromotionTime => (
                    "family = \"normal\"\n  mean = { fit = [-3.0, 3.0] }\n  sd = { fit = [0.05, 2.0] }",
                    "log_theta = ln(−ln cure_fraction)",
                ),
                _ => (
                    "family = \"normal\"\n  mean = { fit = [-4.0, 4.0] }\n  sd = { fit = [0.05, 2.5] }",
                    "cure_logit = logit(cure_fraction)",
                ),
            };
            if ctx.has_prior(CURE_FRACTION) {
                if ctx.has_prior(cure_param) {
                    // Mark both used so this message is the one reported.
                    let _ = ctx.prior_table(cure_param, "");
                    let _ = ctx.prior_table(CURE_FRACTION, "");
                    return Err(ctx
                        .err(
                            &[key("prior"), key(CURE_FRACTION)],
                            format!(
                                "[prior.{CURE_FRACTION}] and [prior.{cure_param}] both given: \
                                 they are two scales of one parameter ({eta_about})"
                            ),
                        )
                        .with_hint(format!(
                            "give one: [prior.{CURE_FRACTION}] (a family on (0, 1), e.g. beta) \
                             or [prior.{cure_param}] (a family on the real line)"
                        )));
                }
                let k = priors.add(
                    ctx,
                    CURE_FRACTION,
                    &crate::templates::priors::families_on(crate::dist::Support::Unit),
                    "family = \"beta\"\n  alpha = { fit = [0.5, 60.0] }\n  beta = { fit = [0.5, 60.0] }",
                )?;
                (Some(k), true)
            } else {
                (
                    Some(priors.add(ctx, cure_param, &real, eta_example)?),
                    false,
                )
            }
        }
        Cure::None => {
            for table in ["cure_logit", CURE_FRACTION] {
                if !ctx.has_prior(table) {
                    continue;
                }
                // Mark it used so the message below is the precise one.
                let _ = ctx.prior_table(table, "");
                let (msg, hint) = if info.name == "mixture-cure" {
                    (
                        format!("[prior.{table}] given but [model] cure = false"),
                        "remove the table, or set cure = true",
                    )
                } else {
                    (
                        format!(
                            "[prior.{table}] given but parametric survival has no cured fraction"
                        ),
                        "remove the table, or use template = \"mixture-cure\"",
                    )
                };
                return Err(ctx.err(&[key("prior"), key(table)], msg).with_hint(hint));
            }
            (None, false)
        }
    };
    let log_scale = priors.add(
        ctx,
        "log_scale",
        &real,
        "family = \"normal\"\n  mean = { fit = [0.0, 5.0] }\n  sd = { fit = [0.05, 2.0] }",
    )?;
    let shape = if latency == Latency::Exponential {
        if ctx.has_prior("shape") {
            let _ = ctx.prior_table("shape", "");
            return Err(ctx
                .err(
                    &[key("prior"), key("shape")],
                    "exponential latency has no shape parameter",
                )
                .with_hint("remove [prior.shape], or choose latency = \"weibull\""));
        }
        None
    } else {
        Some(priors.add(
            ctx,
            "shape",
            // The support rule (every family on (0, ∞): half-Cauchy, half-t and
            // log-logistic too), and the families offered by role (uniform).
            &crate::dist::names_where(|f| {
                f.support == crate::dist::Support::Positive
                    || f.suits(crate::dist::Role::LatencyShape)
            }),
            "family = \"lognormal\"\n  meanlog = { fit = [-1.0, 1.0] }\n  sdlog = 0.25",
        )?)
    };
    let mut cure_effects = Vec::new();
    let mut latency_effects = Vec::new();
    for c in &covariates {
        let ce = format!("{cure_effect}_{c}");
        let le = format!("latency_effect_{c}");
        let he = format!("hazard_effect_{c}");
        let has_ce = ctx.has_prior(&ce) && kind != Cure::None;
        if !has_ce && !ctx.has_prior(&le) && !ctx.has_prior(&he) {
            let mut hint = String::new();
            if kind != Cure::None {
                hint.push_str(&format!("[prior.{ce}] (effect on {cure_param}), "));
            }
            hint.push_str(&format!(
                "[prior.{le}] (log time ratio, on log_scale) or [prior.{he}] (log hazard ratio; \
                 Weibull and exponential latencies)"
            ));
            return Err(ctx
                .err(
                    &mp("covariates"),
                    format!("covariate `{c}` has no effect prior"),
                )
                .with_hint(format!("add {hint}")));
        }
        cure_effects.push(if has_ce {
            Some(priors.add(ctx, &ce, &real, "")?)
        } else {
            None
        });
        let effect = match (ctx.has_prior(&le), ctx.has_prior(&he)) {
            (true, true) => {
                let _ = ctx.prior_table(&he, "");
                return Err(ctx
                    .err(
                        &[key("prior"), key(&he)],
                        format!("covariate `{c}` has both [prior.{le}] and [prior.{he}]"),
                    )
                    .with_hint(
                        "give one: a Weibull AFT effect β is the PH effect −k·β, so the two \
                         would describe the same thing twice",
                    ));
            }
            (true, false) => Some((priors.add(ctx, &le, &real, "")?, Effect::Aft)),
            (false, true) => {
                if !latency.is_ph() {
                    let _ = ctx.prior_table(&he, "");
                    return Err(ctx
                        .err(
                            &[key("prior"), key(&he)],
                            format!(
                                "a hazard effect needs a proportional-hazards latency; \
                                 {} is not one",
                                latency.name()
                            ),
                        )
                        .with_hint(format!(
                            "use [prior.{le}] (log time ratio), or latency = \"weibull\""
                        )));
                }
                Some((priors.add(ctx, &he, &real, "")?, Effect::Ph))
            }
            (false, false) => None,
        };
        latency_effects.push(effect);
    }
    Ok(Box::new(Survival {
        info,
        table,
        cure_kind: kind,
        latency,
        time_unit,
        covariates,
        priors,
        cure,
        cure_on_fraction,
        log_scale,
        shape,
        cure_effects,
        latency_effects,
        gl: crate::numerics::gauss_legendre(32),
    }))
}

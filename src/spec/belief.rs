//! Validation of one `[[belief]]` table into a [`Belief`]: the quantity request
//! (checked by the template), the believed distribution (exactly one of
//! `distribution`, `quantiles`, `histogram`, `experts`, `historical`), atoms and
//! weight. `historical = { data = "file.csv", summary = "plateau", discount = 0.5 }`
//! (or `{ events = 12, total = 40, discount = 0.5 }`) builds the belief from
//! historical data through [`crate::history::belief`].

use super::raw::{RawAtom, RawBelief, RawHistogram};
use super::{key, Belief, Ctx, Seg};
use crate::dist::{self, Atom, Dist, Mixed};
use crate::error::{choice_hint, Result};
use crate::target::quantiles::{fit_family, validate as validate_quantiles, QuantileSpline, Scale};
use crate::target::{linear_pool, Histogram, Target};
use crate::templates::{Model, TemplateInfo};
use std::sync::Arc;

fn sub(path: &[Seg], k: &str) -> Vec<Seg> {
    let mut p = path.to_vec();
    p.push(key(k));
    p
}

/// A parametric distribution from `{ family = "...", <params> }`.
pub fn distribution(ctx: &Ctx, path: &[Seg], t: &toml::Table) -> Result<Dist> {
    let fam_v = t.get("family").ok_or_else(|| {
        ctx.err(path, "missing `family`")
            .with_hint(format!("families: {}", dist::family_names().join(", ")))
    })?;
    let name = ctx.string(&sub(path, "family"), fam_v)?;
    let info = dist::family(name).ok_or_else(|| {
        ctx.err(&sub(path, "family"), format!("unknown family \"{name}\""))
            .with_hint(choice_hint(name, &dist::family_names()))
    })?;
    let mut allowed = vec!["family"];
    allowed.extend_from_slice(info.params);
    ctx.check_keys(path, t, &allowed)?;
    let mut vals = Vec::new();
    for p in info.params {
        let v = t.get(*p).ok_or_else(|| {
            ctx.err(path, format!("family {name} needs `{p}`"))
                .with_hint(format!("{name} takes: {}", info.params.join(", ")))
        })?;
        vals.push(ctx.num(&sub(path, p), v)?);
    }
    (info.build)(&vals)
        .map(Arc::from)
        .map_err(|e| ctx.err(&sub(path, e.param), e.to_string()))
}

fn histogram(ctx: &Ctx, path: &[Seg], h: &RawHistogram) -> Result<Dist> {
    let edges = h
        .edges
        .iter()
        .enumerate()
        .map(|(i, v)| {
            let mut p = sub(path, "edges");
            p.push(Seg::Index(i));
            ctx.num(&p, v)
        })
        .collect::<Result<Vec<_>>>()?;
    let probs = h
        .probs
        .iter()
        .enumerate()
        .map(|(i, v)| {
            let mut p = sub(path, "probs");
            p.push(Seg::Index(i));
            ctx.num(&p, v)
        })
        .collect::<Result<Vec<_>>>()?;
    Histogram::new(edges, probs)
        .map(|h| Arc::new(h) as Dist)
        .map_err(|m| ctx.err(path, m))
}

fn quantiles(
    ctx: &Ctx,
    path: &[Seg],
    q: &toml::Table,
    family: Option<&str>,
    scale: Scale,
) -> Result<(Dist, String)> {
    let mut pts = Vec::new();
    for (k, v) in q {
        let kp = sub(path, k);
        let p: f64 = k.trim().parse().map_err(|_| {
            ctx.err(&kp, format!("quantile key \"{k}\" is not a probability"))
                .with_hint("write quantiles as { \"0.1\" = value, \"0.5\" = value, … }")
        })?;
        pts.push((p, ctx.num(&kp, v)?));
    }
    let pts = validate_quantiles(pts, scale).map_err(|m| ctx.err(path, m))?;
    match family {
        None | Some("interpolate") => Ok((
            Arc::new(QuantileSpline::new(&pts, scale)),
            format!("{} quantiles (monotone interpolation)", pts.len()),
        )),
        Some(f) => {
            let mut fpath = path.to_vec();
            fpath.pop();
            fpath.push(key("quantile_family"));
            let info = dist::family(f).ok_or_else(|| {
                let mut names = dist::family_names();
                names.push("interpolate");
                ctx.err(&fpath, format!("unknown family \"{f}\""))
                    .with_hint(choice_hint(f, &names))
            })?;
            let (d, worst) = fit_family(info, &pts).map_err(|m| ctx.err(&fpath, m))?;
            if worst > 0.05 {
                return Err(ctx
                    .err(
                        &fpath,
                        format!(
                            "family {f} cannot pass near these quantiles (largest CDF miss {worst:.3})"
                        ),
                    )
                    .with_hint("choose another family, or leave quantile_family out to interpolate"));
            }
            Ok((
                Arc::from(d),
                format!(
                    "{} quantiles (fitted {f}, largest CDF miss {worst:.1e})",
                    pts.len()
                ),
            ))
        }
    }
}

fn atoms(
    ctx: &Ctx,
    path: &[Seg],
    raw: &[RawAtom],
    allow_inf: bool,
    scale: Scale,
) -> Result<Vec<Atom>> {
    let mut out = Vec::new();
    for (i, a) in raw.iter().enumerate() {
        let mut p = sub(path, "atoms");
        p.push(Seg::Index(i));
        let at = ctx.num_ext(&sub(&p, "at"), &a.at)?;
        let mass = ctx.num(&sub(&p, "mass"), &a.mass)?;
        if !(mass > 0.0 && mass < 1.0) {
            return Err(ctx.err(
                &sub(&p, "mass"),
                format!("atom mass {mass} must lie strictly between 0 and 1"),
            ));
        }
        if at == f64::INFINITY && !allow_inf {
            return Err(ctx.err(
                &sub(&p, "at"),
                "this quantity is never infinite: an atom at inf is not allowed",
            ));
        }
        let (lo, hi) = scale.domain();
        if at.is_finite() && (at < lo || at > hi) || at == f64::NEG_INFINITY {
            return Err(ctx.err(
                &sub(&p, "at"),
                format!("atom at {at} lies outside the quantity's range [{lo}, {hi}]"),
            ));
        }
        out.push(Atom { at, mass });
    }
    let total: f64 = out.iter().map(|a| a.mass).sum();
    if total >= 1.0 {
        return Err(ctx
            .err(
                &sub(path, "atoms"),
                format!("atom masses sum to {total}; they must sum below 1"),
            )
            .with_hint("the continuous part of the belief takes the remaining mass"));
    }
    Ok(out)
}

struct Parts<'a> {
    distribution: Option<&'a toml::Table>,
    quantiles: Option<&'a toml::Table>,
    quantile_family: Option<&'a str>,
    histogram: Option<&'a RawHistogram>,
    atoms: Option<&'a [RawAtom]>,
}

fn stated(
    ctx: &Ctx,
    path: &[Seg],
    p: &Parts,
    allow_inf: bool,
    scale: Scale,
) -> Result<(Mixed, String)> {
    let given: Vec<&str> = [
        p.distribution.map(|_| "distribution"),
        p.quantiles.map(|_| "quantiles"),
        p.histogram.map(|_| "histogram"),
    ]
    .into_iter()
    .flatten()
    .collect();
    if given.len() > 1 {
        return Err(ctx.err(
            path,
            format!(
                "give one of distribution, quantiles, histogram; found {}",
                given.join(" and ")
            ),
        ));
    }
    let (cont, how): (Dist, String) = if let Some(t) = p.distribution {
        let d = distribution(ctx, &sub(path, "distribution"), t)?;
        let how = format!("{} distribution", d.family());
        (d, how)
    } else if let Some(q) = p.quantiles {
        quantiles(ctx, &sub(path, "quantiles"), q, p.quantile_family, scale)?
    } else if let Some(h) = p.histogram {
        (
            histogram(ctx, &sub(path, "histogram"), h)?,
            "histogram".to_string(),
        )
    } else {
        return Err(ctx
            .err(path, "no belief given")
            .with_hint("add one of `distribution = {…}`, `quantiles = {…}`, `histogram = {…}` or `experts = [...]`"));
    };
    if p.quantile_family.is_some() && p.quantiles.is_none() {
        return Err(ctx.err(
            &sub(path, "quantile_family"),
            "quantile_family applies only to `quantiles`",
        ));
    }
    let atoms = atoms(ctx, path, p.atoms.unwrap_or(&[]), allow_inf, scale)?;
    let how = if atoms.is_empty() {
        how
    } else {
        format!("{how} + {} atom(s)", atoms.len())
    };
    Mixed::new(atoms, Some(cont))
        .map(|m| (m, how))
        .map_err(|m| ctx.err(path, m))
}

/// A belief from `historical = { … }` for the quantity of `request`.
fn historical(
    ctx: &Ctx,
    path: &[Seg],
    t: &toml::Table,
    request: &crate::templates::Request,
) -> Result<(Mixed, String)> {
    use crate::history::belief::{Discount, HistBelief, Shape, Summary, SUMMARIES};
    ctx.check_keys(
        path,
        t,
        &[
            "data", "arm", "summary", "horizon", "discount", "extra_sd", "events", "total",
        ],
    )?;
    let weight = match t.get("discount") {
        Some(v) => ctx.num(&sub(path, "discount"), v)?,
        None => {
            return Err(ctx
                .err(path, "missing `discount`")
                .with_hint("a weight in (0, 1] on the historical patients, e.g. discount = 0.5; 1 borrows them in full"))
        }
    };
    let extra = match t.get("extra_sd") {
        Some(v) => ctx.num(&sub(path, "extra_sd"), v)?,
        None => 0.0,
    };
    let d = Discount::new(weight, extra).map_err(|m| {
        let k = if m.starts_with("discount") {
            "discount"
        } else {
            "extra_sd"
        };
        ctx.err(&sub(path, k), m)
    })?;
    let unit = request.support == crate::dist::Support::Unit;
    let q = request.quantity.as_str();
    let hb = match (t.get("data"), t.get("events"), t.get("total")) {
        (Some(dv), None, None) => {
            let file = ctx.resolve(ctx.string(&sub(path, "data"), dv)?);
            let arm = match t.get("arm") {
                Some(v) => Some(ctx.string(&sub(path, "arm"), v)?),
                None => None,
            };
            let sv = t.get("summary").ok_or_else(|| {
                ctx.err(path, "missing `summary`")
                    .with_hint(format!("one of {}", SUMMARIES.join(", ")))
            })?;
            let sname = ctx.string(&sub(path, "summary"), sv)?;
            let summary = Summary::parse(sname).ok_or_else(|| {
                ctx.err(
                    &sub(path, "summary"),
                    format!("unknown summary \"{sname}\""),
                )
                .with_hint(choice_hint(sname, &SUMMARIES))
            })?;
            let fits = match summary {
                Summary::SurvivalProb => q == "survival_prob" || q == "event_prob",
                Summary::Plateau => q == "cure_fraction",
                Summary::Median => q == "median_survival",
                Summary::Binary => unit,
            };
            if !fits {
                return Err(ctx
                    .err(&sub(path, "summary"), format!("summary {sname} is not evidence about {q}"))
                    .with_hint("survival_prob → survival_prob or event_prob; plateau → cure_fraction; median → median_survival"));
            }
            let horizon = match t.get("horizon") {
                Some(v) => {
                    let h = ctx.num(&sub(path, "horizon"), v)?;
                    if let Some(bh) = request.horizon {
                        if bh != h {
                            return Err(ctx.err(
                                &sub(path, "horizon"),
                                format!("horizon {h} differs from the belief's horizon {bh}"),
                            ));
                        }
                    }
                    Some(h)
                }
                None => request.horizon,
            };
            let obs = crate::history::read_csv(&file, arm)?;
            let km = crate::history::km::KaplanMeier::new(&obs);
            HistBelief::from_km(&km, summary, horizon, d)
                .map_err(|m| ctx.err(path, format!("{}: {m}", file.display())))?
        }
        (None, Some(ev), Some(tv)) => {
            if !unit {
                return Err(ctx.err(
                    path,
                    format!("events/total give a probability; {q} is not one"),
                ));
            }
            let e = ctx.count(&sub(path, "events"), ev)?;
            let n = ctx.count(&sub(path, "total"), tv)?;
            HistBelief::from_binary(e, n, request.horizon, d).map_err(|m| ctx.err(path, m))?
        }
        _ => return Err(ctx
            .err(
                path,
                "give either `data` (with `summary`) or `events` and `total`",
            )
            .with_hint(
                "historical = { data = \"control.csv\", summary = \"plateau\", discount = 0.5 }",
            )),
    };
    let mut hb = hb;
    // Survival at the horizon as a belief about the event probability: swap a and b.
    if q == "event_prob" && hb.summary == Summary::SurvivalProb {
        if let Shape::Beta { alpha, beta } = hb.shape {
            hb.shape = Shape::Beta {
                alpha: beta,
                beta: alpha,
            };
        }
    }
    let dist = hb.dist().map_err(|m| ctx.err(path, m))?;
    let how = format!(
        "historical data ({}; discount {}{}) → {} distribution",
        hb.source,
        d.weight,
        if d.extra_sd > 0.0 {
            format!(", extra sd {}", d.extra_sd)
        } else {
            String::new()
        },
        dist.family()
    );
    Mixed::new(vec![], Some(dist))
        .map(|m| (m, how))
        .map_err(|m| ctx.err(path, m))
}

pub fn validate(
    ctx: &Ctx,
    model: &dyn Model,
    info: &TemplateInfo,
    i: usize,
    rb: &RawBelief,
) -> Result<Belief> {
    let path = vec![key("belief"), Seg::Index(i)];
    let qname = rb.quantity.as_deref().ok_or_else(|| {
        ctx.err(&path, "missing `quantity`").with_hint(format!(
            "{} offers: {}",
            info.name,
            info.quantity_names().join(", ")
        ))
    })?;
    if !info.quantity_names().contains(&qname) {
        return Err(ctx
            .err(
                &sub(&path, "quantity"),
                format!("template {} has no quantity \"{qname}\"", info.name),
            )
            .with_hint(choice_hint(qname, &info.quantity_names())));
    }
    let request = model.request(ctx, &path, qname, rb)?;
    let scale = Scale::for_support(request.support);
    let weight = match &rb.weight {
        Some(v) => ctx.positive(&sub(&path, "weight"), v)?,
        None => 1.0,
    };
    let (dist, stated_as) = if let Some(h) = &rb.historical {
        let others = rb.distribution.is_some()
            || rb.quantiles.is_some()
            || rb.histogram.is_some()
            || rb.experts.is_some()
            || rb.atoms.is_some();
        if others {
            return Err(ctx.err(
                &sub(&path, "historical"),
                "give `historical` alone, without distribution, quantiles, histogram, experts or atoms",
            ));
        }
        historical(ctx, &sub(&path, "historical"), h, &request)?
    } else if let Some(experts) = &rb.experts {
        if rb.distribution.is_some() || rb.quantiles.is_some() || rb.histogram.is_some() {
            return Err(ctx.err(
                &sub(&path, "experts"),
                "give either `experts` or a single belief, not both",
            ));
        }
        if experts.is_empty() {
            return Err(ctx.err(&sub(&path, "experts"), "`experts` is empty"));
        }
        if experts.len() > crate::limits::MAX_EXPERTS {
            let mut at = sub(&path, "experts");
            at.push(Seg::Index(crate::limits::MAX_EXPERTS));
            return Err(ctx.err(
                &at,
                format!(
                    "{} experts: a pool takes at most {}",
                    experts.len(),
                    crate::limits::MAX_EXPERTS
                ),
            ));
        }
        let mut parts = Vec::new();
        let mut stated_total = 0.0;
        for (e, ex) in experts.iter().enumerate() {
            let mut ep = sub(&path, "experts");
            ep.push(Seg::Index(e));
            let w = match &ex.weight {
                Some(v) => ctx.positive(&sub(&ep, "weight"), v)?,
                None => 1.0,
            };
            let (m, _) = stated(
                ctx,
                &ep,
                &Parts {
                    distribution: ex.distribution.as_ref(),
                    quantiles: ex.quantiles.as_ref(),
                    quantile_family: ex.quantile_family.as_deref(),
                    histogram: ex.histogram.as_ref(),
                    atoms: ex.atoms.as_deref(),
                },
                request.allows_inf,
                scale,
            )?;
            stated_total += w;
            parts.push((w, m));
        }
        let mut pooled = linear_pool(parts).map_err(|m| ctx.err(&sub(&path, "experts"), m))?;
        if let Some(a) = &rb.atoms {
            // Atoms beside a pool apply to the pooled belief as a whole.
            let extra = atoms(ctx, &path, a, request.allows_inf, scale)?;
            let keep = 1.0 - extra.iter().map(|a| a.mass).sum::<f64>();
            let mut all: Vec<Atom> = pooled
                .atoms
                .iter()
                .map(|a| Atom {
                    at: a.at,
                    mass: a.mass * keep,
                })
                .collect();
            for a in extra {
                match all.iter_mut().find(|b| b.at == a.at) {
                    Some(b) => b.mass += a.mass,
                    None => all.push(a),
                }
            }
            pooled = Mixed::new(all, pooled.cont).map_err(|m| ctx.err(&sub(&path, "atoms"), m))?;
        }
        // Say so where the stated weights were rescaled.
        let normalised = if (stated_total - 1.0_f64).abs() > 1e-9 {
            ", weights normalised to sum to 1"
        } else {
            ""
        };
        (
            pooled,
            format!("linear pool of {} experts{normalised}", experts.len()),
        )
    } else {
        stated(
            ctx,
            &path,
            &Parts {
                distribution: rb.distribution.as_ref(),
                quantiles: rb.quantiles.as_ref(),
                quantile_family: rb.quantile_family.as_deref(),
                histogram: rb.histogram.as_ref(),
                atoms: rb.atoms.as_deref(),
            },
            request.allows_inf,
            scale,
        )?
    };
    // A continuous part must live inside the quantity's range.
    if let Some(c) = &dist.cont {
        let (lo, hi) = c.support();
        let (dlo, dhi) = scale.domain();
        if lo < dlo || hi > dhi {
            return Err(ctx
                .err(&path, format!(
                    "the belief's support [{lo}, {hi}] extends beyond the range of {qname}, ({dlo}, {dhi})"
                ))
                .with_hint(match scale {
                    Scale::Logit => "use a family on (0, 1) such as beta or logit-normal",
                    Scale::Log => "use a positive family such as lognormal or gamma",
                    Scale::Identity => "",
                }));
        }
    }
    let label = rb.label.clone().unwrap_or_else(|| request.label.clone());
    Ok(Belief {
        label,
        request,
        target: Target::new(dist),
        weight,
        stated_as,
    })
}

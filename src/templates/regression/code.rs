//! Export code for the regression templates' own prior statements: the coefficient
//! vector under each coefficient prior of [`super::coef`], and the noise prior when
//! it is an inverse-gamma on the variance σ². The code is stored in fit.json
//! (`PriorStatement::code`) and pasted by `crate::export`.
//!
//! The coefficients are a vector `beta` of length P (the number of design columns,
//! written as a number), per unit of the standardised or centred design the fit
//! used. The parameterisation is exactly the one [`super::coef`] simulates:
//! * normal(s): β_j ~ N(0, s²); student-t(ν, s): β_j ~ t_ν(0, s); laplace(b):
//!   β_j ~ Laplace(0, b) (Stan `double_exponential`, PyMC `Laplace(b=)`).
//! * horseshoe(τ0): β_j = z_j λ_j τ, z_j ~ N(0, 1), λ_j ~ C⁺(0, 1),
//!   τ ~ C⁺(0, τ0) or τ = τ0 (`global = "fixed"`); written non-centred.
//! * regularised horseshoe(τ0, s, ν) (Piironen & Vehtari 2017, EJS 11, eq. 2.8):
//!   c² ~ Inv-Gamma(ν/2, νs²/2), λ̃_j = √(c²λ_j²/(c² + τ²λ_j²)), β_j = z_j λ̃_j τ.
//! * r2d2(a, b, a_π), normal kernel: R² ~ Beta(a, b), φ ~ Dirichlet(a_π, …, a_π),
//!   β_j = z_j √(ρ R²/(1 − R²) φ_j) / s_j, with s_j the design sd of column j
//!   (0 for a constant column, whose coefficient is then 0, as in the simulator)
//!   and ρ the reference residual variance: σ² (linear), 1/(p̄(1 − p̄)) with
//!   p̄ = logistic(intercept) (logistic), e^(−intercept)/exposure (Poisson).
//! * r2d2 with groups of covariates ([`super::groups`]): R² ~ Beta(a, b),
//!   group shares φ ~ Dirichlet(A_1, …, A_G), within group g ψ ~ Dirichlet(c, …, c)
//!   over its p_g columns (no ψ for a one-column group), β_j = z_j √(ρ R²/(1 − R²)
//!   φ_g ψ_j) / s_j; the per-column share φ_g ψ_j is `beta_share`, assembled in
//!   design order from runs of consecutive columns of one group (Stan slice
//!   assignments, PyMC `pm.math.concatenate`). brms refuses it: its `R2D2()` has
//!   one flat Dirichlet over all components (each coefficient one), equal to ours
//!   only when every A_g = p_g·c, and one `R2D2()` per group would give each
//!   group an R² of its own, not a share of one joint R².
//! * spike-and-slab(π, s) (Mitchell & Beauchamp 1988, JASA 83): β_j = δ_j s z_j,
//!   δ_j ~ Bernoulli(π): PyMC only (Stan cannot sample discrete parameters, brms
//!   neither); the others refuse with a reason.
//!
//! brms: `normal`, `student-t`, `laplace` as `class = "b"` priors. The
//! regularised horseshoe with a half-Cauchy global scale as brms's
//! `horseshoe(df = 1, scale_global = τ0, df_global = 1, scale_slab = s,
//! df_slab = ν, autoscale = FALSE)`: brms's local scales are Student-t(df) =
//! C⁺(0, 1) at df = 1, its global scale Student-t⁺(df_global, 0, scale_global)
//! (multiplied by σ when autoscale = TRUE, which we switch off), and its slab a
//! Student-t(df_slab, 0, scale_slab) slab, i.e. c² ~ Inv-Gamma(ν/2, νs²/2)
//! (brms documentation of `horseshoe`, brms 2.19+; the slab form from memory of
//! brms's generated Stan code). R2D2 as brms's `R2D2(mean_R2 = a/(a + b),
//! prec_R2 = a + b, cons_D2 = a_π, autoscale = TRUE)` only for the linear
//! template on a standardised design (every s_j² = 1): brms's autoscale multiplies
//! the scales by σ (our ρ = σ²) and brms does not divide by the design sds (brms
//! documentation of `R2D2`: "does not account for scale differences"). Every
//! other case — the plain horseshoe (brms always has a finite slab), a fixed
//! global scale, R2D2 under a logit or log link or an unstandardised design,
//! spike-and-slab — is refused with the reason, never written approximately.
//!
//! An inverse-gamma(α, β) on σ²: Stan declares `sigma2 ~ inv_gamma(α, β)` and
//! `sigma = sqrt(sigma2)` (transformed parameter); PyMC `sigma2 =
//! InverseGamma(alpha, beta)` and `sigma` a Deterministic. brms states priors on
//! σ only, so the brms export refuses it.
//!
//! The scalar parameters in brms ([`BRMS`]): the intercept and the noise sd are
//! brms's own classes. `Intercept` is the intercept of the centred design (brms
//! centres population-level predictors), as ours is, and takes no bounds;
//! `sigma` has its lower bound built in, so no `lb` is written for it.

use super::coef::{CoefPrior, Kind};
use super::Link;
use crate::design::Design;
use crate::numerics::format::code as num;
use crate::templates::{BrmsClass, BrmsLayout, Code};
use std::collections::BTreeMap;

/// The regression templates in brms: `brm(y ~ <design columns>, family = …)`.
pub static BRMS: BrmsLayout = BrmsLayout {
    usage: &[
        "For brm(y ~ <the design's columns, in design order>, family = <the template's>):",
        "brms centres the predictors, as priorsmith did; pass `prior = priors` to brm().",
    ],
    classes: &[
        BrmsClass {
            parameter: "intercept",
            class: "Intercept",
            bounds_note: Some(
                "brms gives class Intercept no bounds: start the sampler inside them",
            ),
        },
        BrmsClass {
            parameter: "sigma",
            class: "sigma",
            bounds_note: None,
        },
    ],
    coef_prefix: Some("b_"),
    code_prefix: None,
};

fn section(code: &mut Code, lang: &str, sec: &str, lines: Vec<String>) {
    code.entry(lang.to_string())
        .or_default()
        .insert(sec.to_string(), lines);
}

fn refuse(code: &mut Code, lang: &str, why: String) {
    section(code, lang, "unsupported", vec![why]);
}

/// Why brms cannot take a horseshoe or R2D2 with covariate-specific priors.
const OWN_SPECIAL: &str = "brms's horseshoe() and R2D2() apply to the whole class \"b\" and brms \
    allows no prior on a single coefficient beside them, while here some covariates have priors of \
    their own; use the Stan or PyMC export";

/// Code for `sigma` under an inverse-gamma(shape, scale) prior on σ².
pub fn sigma_variance(shape: f64, scale: f64) -> Code {
    let (a, b) = (num(shape), num(scale));
    let mut code = BTreeMap::new();
    section(
        &mut code,
        "stan",
        "parameters",
        vec!["real<lower=0> sigma2;  // noise variance σ²".into()],
    );
    section(
        &mut code,
        "stan",
        "transformed_parameters",
        vec!["real<lower=0> sigma = sqrt(sigma2);  // noise sd".into()],
    );
    section(
        &mut code,
        "stan",
        "model",
        vec![
            "// inverse-gamma(shape, scale) on the variance σ², not on σ".into(),
            format!("sigma2 ~ inv_gamma({a}, {b});"),
        ],
    );
    section(
        &mut code,
        "pymc",
        "model",
        vec![
            "# inverse-gamma(shape, scale) on the variance σ², not on σ".into(),
            format!("sigma2 = pm.InverseGamma(\"sigma2\", alpha={a}, beta={b})"),
            "sigma = pm.Deterministic(\"sigma\", pm.math.sqrt(sigma2))".into(),
        ],
    );
    refuse(
        &mut code,
        "brms",
        format!(
            "the prior is inverse-gamma({a}, {b}) on the noise variance σ², and brms states \
             priors on sigma only; use a half-normal, half-student-t or exponential prior on \
             sigma, or the Stan export"
        ),
    );
    code
}

/// The multilevel templates in brms: the random intercept is `(1 | group)` and its
/// sd brms's class "sd" (lower bound 0 built in).
pub static BRMS_MULTILEVEL: BrmsLayout = BrmsLayout {
    usage: &[
        "For brm(y ~ <the design's columns, in design order> + (1 | <grouping factor>), family = <the template's>):",
        "brms centres the predictors, as priorsmith did; pass `prior = priors` to brm().",
    ],
    classes: &[
        BrmsClass {
            parameter: "intercept",
            class: "Intercept",
            bounds_note: Some(
                "brms gives class Intercept no bounds: start the sampler inside them",
            ),
        },
        BrmsClass {
            parameter: "sigma",
            class: "sigma",
            bounds_note: None,
        },
        BrmsClass {
            parameter: "cluster_sd",
            class: "sd",
            bounds_note: None,
        },
    ],
    coef_prefix: Some("b_"),
    code_prefix: Some("slope_sd_"),
};

/// Code for the clusters' random intercepts u_j = σ_u·z_j, z_j ~ N(0, 1)
/// (non-centred), J clusters; σ_u is the scalar prior `cluster_sd`. brms states
/// them in the formula, `(1 | group)`, with nothing to add to the priors.
pub fn cluster_effects(cl: &crate::design::Clusters) -> crate::templates::PriorStatement {
    let j = cl.count();
    let g = &cl.name;
    let mut code = BTreeMap::new();
    section(
        &mut code,
        "stan",
        "parameters",
        vec![format!(
            "vector[{j}] u_z;  // standardised random intercepts, one per {g}"
        )],
    );
    section(
        &mut code,
        "stan",
        "transformed_parameters",
        vec![format!(
            "vector[{j}] u = cluster_sd * u_z;  // random intercepts u_j ~ N(0, cluster_sd²); add u[{g}[i]] to row i's linear predictor"
        )],
    );
    section(
        &mut code,
        "stan",
        "model",
        vec!["u_z ~ std_normal();".into()],
    );
    section(
        &mut code,
        "pymc",
        "model",
        vec![
            format!("u_z = pm.Normal(\"u_z\", mu=0, sigma=1, shape={j})  # one per {g}"),
            format!("u = pm.Deterministic(\"u\", cluster_sd * u_z)  # add u[{g}_idx] to the linear predictor"),
        ],
    );
    section(
        &mut code,
        "brms",
        "priors",
        vec![format!(
            "# the random intercepts are the formula term (1 | {g}); their sd is class \"sd\" above"
        )],
    );
    crate::templates::PriorStatement {
        parameter: "cluster_effects".into(),
        family: String::new(),
        params: Vec::new(),
        about: format!("random intercepts of the {j} clusters ({g})"),
        code: Some(code),
    }
}

/// Code for the clusters' random slopes v_kj = σ_{v,k}·z_kj, z_kj ~ N(0, 1)
/// (non-centred), independent of the intercepts and of each other; σ_{v,k} is
/// the scalar prior `slope_sd_NAME`, per unit of NAME as given in the design file,
/// so row i's linear predictor gains v_k[g[i]]·(x_ik − x̄_k) with x̄_k the
/// design mean (the raw, unstandardised value). brms: the formula term
/// `(1 + NAME || g)` (uncorrelated intercept and slopes) and each sd as
/// `set_prior(…, class = "sd", group = "g", coef = "NAME")`; `stmts` holds the
/// slope sds' fitted statements, whose brms form is written here (the brms
/// export skips the `slope_sd_` scalars, [`BRMS_MULTILEVEL`]).
pub fn cluster_slopes(
    cl: &crate::design::Clusters,
    slopes: &[super::multilevel::Slope],
    d: &Design,
    stmts: &[crate::templates::PriorStatement],
) -> crate::templates::PriorStatement {
    let j = cl.count();
    let g = &cl.name;
    let mut code = BTreeMap::new();
    let (mut par, mut tr, mut model, mut py) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    let names: Vec<&str> = slopes.iter().map(|s| s.name.as_str()).collect();
    let mut brms = vec![format!(
        "# random slopes: write the group term as (1 + {} || {g}) (uncorrelated intercept and slopes) in place of (1 | {g}); each slope sd is per unit of its covariate as given in the design file",
        names.join(" + ")
    )];
    let mut brms_ok = true;
    for sl in slopes {
        let n = &sl.name;
        let m = num(d.raw_means[sl.col]);
        par.push(format!(
            "vector[{j}] v_z_{n};  // standardised random slopes of {n}, one per {g}"
        ));
        tr.push(format!(
            "vector[{j}] v_{n} = slope_sd_{n} * v_z_{n};  // random slopes of {n} ~ N(0, slope_sd_{n}²) per unit as given; add v_{n}[{g}[i]] * ({n}[i] - {m}) to row i's linear predictor"
        ));
        model.push(format!("v_z_{n} ~ std_normal();"));
        py.push(format!(
            "v_z_{n} = pm.Normal(\"v_z_{n}\", mu=0, sigma=1, shape={j})  # one per {g}"
        ));
        py.push(format!(
            "v_{n} = pm.Deterministic(\"v_{n}\", slope_sd_{n} * v_z_{n})  # add v_{n}[{g}_idx] * ({n} - {m}) to the linear predictor"
        ));
        let st = stmts
            .iter()
            .find(|s| s.parameter == format!("slope_sd_{n}"));
        let form = st.and_then(|st| {
            let family = crate::dist::family(&st.family)?;
            let sc = crate::export::Scalar {
                parameter: st.parameter.clone(),
                family,
                params: st.params.iter().map(|p| p.1).collect(),
                about: String::new(),
            };
            crate::export::stan::from_family(&sc, "brms", &family.forms.brms).ok()
        });
        match form {
            // brms's class "sd" has its lower bound 0 built in; a family written
            // on another scale (a helper variable) has no brms form here.
            Some(f) if f.derived.is_none() && f.upper.is_none() => brms.push(format!(
                "set_prior(\"{}\", class = \"sd\", group = \"{g}\", coef = \"{n}\")",
                f.dist
            )),
            _ => brms_ok = false,
        }
    }
    section(&mut code, "stan", "parameters", par);
    section(&mut code, "stan", "transformed_parameters", tr);
    section(&mut code, "stan", "model", model);
    section(&mut code, "pymc", "model", py);
    if brms_ok {
        section(&mut code, "brms", "priors", brms);
    } else {
        refuse(
            &mut code,
            "brms",
            "a random-slope sd's family has no direct brms form on class \"sd\" (it is written \
             on another scale or has an upper bound); use the Stan or PyMC export"
                .to_string(),
        );
    }
    crate::templates::PriorStatement {
        parameter: "cluster_slopes".into(),
        family: String::new(),
        params: Vec::new(),
        about: format!(
            "random slopes of {} over the {j} clusters ({g}), independent of the intercepts",
            names.join(", ")
        ),
        code: Some(code),
    }
}

/// Code for the coefficient vector at hyperparameters `h`.
pub fn coefficients(c: &CoefPrior, h: &[f64], d: &Design, link: Link, exposure: f64) -> Code {
    coefficients_about(c, h, d, link, exposure, None)
}

/// [`coefficients`], with the comment naming the vector given (`about`).
pub(super) fn coefficients_about(
    c: &CoefPrior,
    h: &[f64],
    d: &Design,
    link: Link,
    exposure: f64,
    about_given: Option<&str>,
) -> Code {
    // Columns with covariate-specific priors are not in the shared vector.
    let shared: Vec<usize> = (0..d.cols())
        .filter(|j| !c.skip.get(*j).copied().unwrap_or(false))
        .collect();
    let own = shared.len() < d.cols();
    let p = shared.len();
    let x = |j: usize| h[c.idx[j]];
    let unit = d.stored_as();
    let cols = match p {
        0 => String::new(),
        1 => format!(", column {}", d.names[shared[0]]),
        _ => format!(
            ", columns {} … {}",
            d.names[shared[0]],
            d.names[shared[p - 1]]
        ),
    };
    let without = if own {
        ", without the covariates that have priors of their own"
    } else {
        ""
    };
    let about = match about_given {
        Some(a) => a.to_string(),
        None => format!(
            "{p} coefficients per unit of the {unit} design priorsmith fitted on (in design order{cols}{without})"
        ),
    };
    let mut code = BTreeMap::new();
    if let Some(gr) = &c.groups {
        grouped_r2d2(&mut code, c, gr, h, d, link, exposure, &about);
        return code;
    }
    let stan_decl = format!("vector[{p}] beta;  // {about}");
    let pymc_note = format!("# beta: {about}");
    let mut stan_p = Vec::new();
    let mut stan_t = Vec::new();
    let mut stan_m = Vec::new();
    let mut py = vec![pymc_note];
    // Horseshoe family: global τ, as an expression, and its declarations.
    let tau = |stan_p: &mut Vec<String>, stan_m: &mut Vec<String>, py: &mut Vec<String>| {
        let t0 = num(x(0));
        if c.global_fixed {
            t0
        } else {
            stan_p.push("real<lower=0> beta_tau;  // global scale".into());
            stan_m.push(format!("beta_tau ~ cauchy(0, {t0});  // half-Cauchy"));
            py.push(format!("beta_tau = pm.HalfCauchy(\"beta_tau\", beta={t0})"));
            "beta_tau".into()
        }
    };
    let hs_locals = |stan_p: &mut Vec<String>, stan_m: &mut Vec<String>, py: &mut Vec<String>| {
        stan_p.push(format!("vector[{p}] beta_z;"));
        stan_p.push(format!(
            "vector<lower=0>[{p}] beta_lambda;  // local scales"
        ));
        stan_m.push("beta_z ~ std_normal();".into());
        stan_m.push("beta_lambda ~ cauchy(0, 1);  // half-Cauchy".into());
        py.push(format!(
            "beta_z = pm.Normal(\"beta_z\", mu=0, sigma=1, shape={p})"
        ));
        py.push(format!(
            "beta_lambda = pm.HalfCauchy(\"beta_lambda\", beta=1, shape={p})"
        ));
    };
    let brms: Result<Vec<String>, String> = match c.kind {
        Kind::Normal | Kind::StudentT | Kind::Laplace => {
            let (sd, pd, bd) = match c.kind {
                Kind::Normal => (
                    format!("normal(0, {})", num(x(0))),
                    format!("pm.Normal(\"beta\", mu=0, sigma={}, shape={p})", num(x(0))),
                    format!("normal(0, {})", num(x(0))),
                ),
                Kind::StudentT => (
                    format!("student_t({}, 0, {})", num(x(0)), num(x(1))),
                    format!(
                        "pm.StudentT(\"beta\", nu={}, mu=0, sigma={}, shape={p})",
                        num(x(0)),
                        num(x(1))
                    ),
                    format!("student_t({}, 0, {})", num(x(0)), num(x(1))),
                ),
                _ => (
                    format!("double_exponential(0, {})", num(x(0))),
                    format!("pm.Laplace(\"beta\", mu=0, b={}, shape={p})", num(x(0))),
                    format!("double_exponential(0, {})", num(x(0))),
                ),
            };
            stan_p.push(stan_decl);
            stan_m.push(format!("beta ~ {sd};"));
            py.push(format!("beta = {pd}"));
            Ok(vec![format!("set_prior(\"{bd}\", class = \"b\")")])
        }
        Kind::Horseshoe => {
            hs_locals(&mut stan_p, &mut stan_m, &mut py);
            let t = tau(&mut stan_p, &mut stan_m, &mut py);
            stan_t.push(format!(
                "vector[{p}] beta = beta_z .* beta_lambda * {t};  // {about}"
            ));
            py.push(format!(
                "beta = pm.Deterministic(\"beta\", beta_z * beta_lambda * {t})"
            ));
            Err(
                "brms's horseshoe() always has a finite slab (scale_slab), and this horseshoe has \
                 none; use family = \"regularised-horseshoe\" for a brms prior, or the Stan export"
                    .into(),
            )
        }
        Kind::RegHorseshoe => {
            hs_locals(&mut stan_p, &mut stan_m, &mut py);
            let t = tau(&mut stan_p, &mut stan_m, &mut py);
            let (s, nu) = (x(1), x(2));
            let (ig_a, ig_b) = (num(0.5 * nu), num(0.5 * nu * s * s));
            stan_p.push("real<lower=0> beta_c2;  // slab variance c²".into());
            stan_m.push(format!(
                "beta_c2 ~ inv_gamma({ig_a}, {ig_b});  // slab scale {}, slab df {}",
                num(s),
                num(nu)
            ));
            stan_t.push(format!(
                "vector[{p}] beta = beta_z .* sqrt(beta_c2 * square(beta_lambda) ./ (beta_c2 + square({t}) * square(beta_lambda))) * {t};  // {about}"
            ));
            py.push(format!(
                "beta_c2 = pm.InverseGamma(\"beta_c2\", alpha={ig_a}, beta={ig_b})  # slab variance c²: slab scale {}, slab df {}",
                num(s),
                num(nu)
            ));
            py.push(format!(
                "beta = pm.Deterministic(\"beta\", beta_z * pm.math.sqrt(beta_c2 * beta_lambda**2 / (beta_c2 + {t}**2 * beta_lambda**2)) * {t})"
            ));
            if own {
                Err(OWN_SPECIAL.into())
            } else if c.global_fixed {
                Err(
                    "brms's horseshoe() always puts a Student-t prior on the global scale; \
                     this one is fixed (global = \"fixed\"); use the Stan export"
                        .into(),
                )
            } else {
                Ok(vec![
                    "# brms's regularised horseshoe with priorsmith's parameterisation: local df 1, global df 1".into(),
                    "# (half-Cauchy), autoscale = FALSE so that brms does not multiply scale_global by sigma".into(),
                    format!(
                        "set_prior(horseshoe(df = 1, scale_global = {}, df_global = 1, scale_slab = {}, df_slab = {}, autoscale = FALSE), class = \"b\")",
                        num(x(0)),
                        num(s),
                        num(nu)
                    ),
                ])
            }
        }
        Kind::R2d2 => {
            let (a, b, conc) = (num(x(0)), num(x(1)), num(c.shape));
            let inv_sd = inv_sds(d, &shared);
            let (rho_stan, rho_py) = reference_variance(link, exposure);
            stan_p.push(format!("vector[{p}] beta_z;"));
            stan_p.push("real<lower=0, upper=1> beta_r2;  // R²".into());
            stan_p.push(format!("simplex[{p}] beta_phi;  // variance shares"));
            stan_m.push("beta_z ~ std_normal();".into());
            stan_m.push(format!("beta_r2 ~ beta({a}, {b});"));
            stan_m.push(format!("beta_phi ~ dirichlet(rep_vector({conc}, {p}));"));
            stan_t.push(format!(
                "// reference residual variance {rho_stan}; the last factor is 1 / design sd of each column"
            ));
            stan_t.push(format!(
                "vector[{p}] beta = beta_z .* sqrt({rho_stan} * beta_r2 / (1 - beta_r2) * beta_phi) .* [{inv_sd}]';  // {about}"
            ));
            py.push(format!(
                "beta_z = pm.Normal(\"beta_z\", mu=0, sigma=1, shape={p})"
            ));
            py.push(format!(
                "beta_r2 = pm.Beta(\"beta_r2\", alpha={a}, beta={b})"
            ));
            py.push(format!(
                "beta_phi = pm.Dirichlet(\"beta_phi\", a=[{conc}] * {p})"
            ));
            py.push(format!(
                "# reference residual variance {rho_py}; the last factor is 1 / design sd of each column"
            ));
            py.push(format!(
                "beta = pm.Deterministic(\"beta\", beta_z * pm.math.sqrt({rho_py} * beta_r2 / (1 - beta_r2) * beta_phi) * [{inv_sd}])"
            ));
            let unit_var = d.var.iter().all(|v| (v - 1.0).abs() < 1e-9);
            if own {
                Err(OWN_SPECIAL.into())
            } else if link != Link::Identity {
                Err(
                    "brms's R2D2() scales by sigma (or by 1 without one), while priorsmith's \
                     scales by the reference residual variance of the logit / log link, which \
                     depends on the intercept; use the Stan or PyMC export"
                        .into(),
                )
            } else if !unit_var {
                Err(
                    "priorsmith's R2D2 divides each coefficient's scale by its design sd and \
                     brms's R2D2() does not; they agree only on a standardised design \
                     (standardise = true); use the Stan or PyMC export"
                        .into(),
                )
            } else {
                let (av, bv) = (x(0), x(1));
                Ok(vec![
                    "# brms's R2D2 (normal kernel) with autoscale = TRUE multiplies the scales by sigma,".into(),
                    "# as priorsmith does (reference variance σ²); exact on this standardised design only:".into(),
                    "# give brm() the same standardised covariates.".into(),
                    format!(
                        "set_prior(R2D2(mean_R2 = {}, prec_R2 = {}, cons_D2 = {conc}, autoscale = TRUE), class = \"b\")",
                        num(av / (av + bv)),
                        num(av + bv)
                    ),
                ])
            }
        }
        Kind::SpikeSlab => {
            let (pi, s) = (num(x(0)), num(x(1)));
            py.push(format!(
                "beta_delta = pm.Bernoulli(\"beta_delta\", p={pi}, shape={p})  # inclusion"
            ));
            py.push(format!(
                "beta_slab = pm.Normal(\"beta_slab\", mu=0, sigma={s}, shape={p})"
            ));
            py.push("beta = pm.Deterministic(\"beta\", beta_delta * beta_slab)".into());
            refuse(
                &mut code,
                "stan",
                "spike-and-slab needs discrete inclusion indicators, which Stan cannot sample; \
                 use the PyMC export"
                    .into(),
            );
            Err(
                "spike-and-slab needs discrete inclusion indicators, which brms (Stan) \
                        cannot sample; use the PyMC export"
                    .into(),
            )
        }
    };
    if c.kind != Kind::SpikeSlab {
        section(&mut code, "stan", "parameters", stan_p);
        section(&mut code, "stan", "transformed_parameters", stan_t);
        section(&mut code, "stan", "model", stan_m);
    }
    section(&mut code, "pymc", "model", py);
    match brms {
        Ok(mut lines) => {
            lines.insert(
                0,
                format!(
                    "# class \"b\": the {p} coefficients of the {unit} design priorsmith fitted on"
                ),
            );
            section(&mut code, "brms", "priors", lines)
        }
        Err(why) => refuse(&mut code, "brms", why),
    }
    code
}

/// 1 / design sd of each of `cols` (0 for a constant column), comma-separated.
fn inv_sds(d: &Design, cols: &[usize]) -> String {
    let v: Vec<String> = cols
        .iter()
        .map(|j| d.var[*j])
        .map(|v| {
            if v > 0.0 {
                num(1.0 / v.sqrt())
            } else {
                "0".into()
            }
        })
        .collect();
    v.join(", ")
}

/// R2D2's reference residual variance ρ as a Stan and as a PyMC expression.
fn reference_variance(link: Link, exposure: f64) -> (String, String) {
    match link {
        Link::Identity => ("square(sigma)".to_string(), "sigma**2".to_string()),
        Link::Logit => (
            "1 / (inv_logit(intercept) * inv_logit(-intercept))".to_string(),
            "1 / (pm.math.sigmoid(intercept) * pm.math.sigmoid(-intercept))".to_string(),
        ),
        Link::Log => (
            format!("exp(-intercept) / {}", num(exposure)),
            format!("pm.math.exp(-intercept) / {}", num(exposure)),
        ),
    }
}

/// Runs of consecutive design columns in one group: (first column, last
/// column, group, position of the first column within its group), 0-based.
fn group_runs(gr: &super::groups::Grouping) -> Vec<(usize, usize, usize, usize)> {
    let mut runs: Vec<(usize, usize, usize, usize)> = Vec::new();
    let mut seen = vec![0usize; gr.count()];
    for (j, g) in gr.of.iter().enumerate() {
        match runs.last_mut() {
            Some(r) if r.2 == *g && r.1 + 1 == j => r.1 = j,
            _ => runs.push((j, j, *g, seen[*g])),
        }
        seen[*g] += 1;
    }
    runs
}

/// R2D2 with groups of covariates ([`super::groups`]), exactly as simulated:
/// R² ~ Beta(a, b), W = R²/(1 − R²), group shares φ ~ Dirichlet(A_1, …, A_G),
/// within group g the split ψ_g ~ Dirichlet(c, …, c) over its p_g columns (none
/// for a one-column group, whose split is 1), and β_j = z_j √(ρ W φ_g ψ_j) / s_j,
/// z_j ~ N(0, 1). The per-column share φ_g ψ_j (`beta_share`) is assembled in
/// design order from runs of consecutive columns of one group. brms is refused.
#[allow(clippy::too_many_arguments)]
fn grouped_r2d2(
    code: &mut Code,
    c: &CoefPrior,
    gr: &super::groups::Grouping,
    h: &[f64],
    d: &Design,
    link: Link,
    exposure: f64,
    about: &str,
) {
    let p = d.cols();
    let g = gr.count();
    let (a, b, conc) = (num(h[c.idx[0]]), num(h[c.idx[1]]), num(c.shape));
    let weights: Vec<String> = gr.idx.iter().map(|i| num(h[*i])).collect();
    let all: Vec<usize> = (0..p).collect();
    let inv_sd = inv_sds(d, &all);
    let (rho_stan, rho_py) = reference_variance(link, exposure);
    let legend: Vec<String> = gr
        .names
        .iter()
        .enumerate()
        .map(|(k, n)| {
            let m = gr.cols[k].len();
            format!(
                "{} {n} ({m} column{})",
                k + 1,
                if m == 1 { "" } else { "s" }
            )
        })
        .collect();
    let legend = legend.join(", ");
    let psi = |k: usize| format!("beta_psi_g{}", k + 1);
    let param = [
        "// grouped R2D2 (normal kernel): R² ~ Beta(a, b), W = R²/(1 − R²), group shares".to_string(),
        "// φ ~ Dirichlet(A_1, …, A_G), within group g ψ ~ Dirichlet(c, …, c) over its columns,".to_string(),
        "// β_j = z_j √(ρ W φ_g ψ_j) / s_j with ρ the reference residual variance, s_j the design sd".to_string(),
    ];
    let mut stan_p: Vec<String> = param.to_vec();
    let mut stan_m = Vec::new();
    let mut stan_t = Vec::new();
    stan_p.push(format!("vector[{p}] beta_z;"));
    stan_p.push("real<lower=0, upper=1> beta_r2;  // R²".into());
    stan_p.push(format!(
        "simplex[{g}] beta_phi;  // group shares φ_g: {legend}"
    ));
    stan_m.push("beta_z ~ std_normal();".into());
    stan_m.push(format!("beta_r2 ~ beta({a}, {b});"));
    stan_m.push(format!(
        "beta_phi ~ dirichlet([{}]');  // group weights A_g",
        weights.join(", ")
    ));
    let mut py: Vec<String> = param.iter().map(|l| l.replacen("//", "#", 1)).collect();
    py.push(format!("# beta: {about}"));
    py.push(format!(
        "beta_z = pm.Normal(\"beta_z\", mu=0, sigma=1, shape={p})"
    ));
    py.push(format!(
        "beta_r2 = pm.Beta(\"beta_r2\", alpha={a}, beta={b})"
    ));
    py.push(format!(
        "beta_phi = pm.Dirichlet(\"beta_phi\", a=[{}])  # group shares φ_g: {legend}",
        weights.join(", ")
    ));
    for (k, cols) in gr.cols.iter().enumerate() {
        let pg = cols.len();
        if pg < 2 {
            continue;
        }
        let n = &gr.names[k];
        stan_p.push(format!(
            "simplex[{pg}] {};  // split within group {n}",
            psi(k)
        ));
        stan_m.push(format!("{} ~ dirichlet(rep_vector({conc}, {pg}));", psi(k)));
        py.push(format!(
            "{0} = pm.Dirichlet(\"{0}\", a=[{conc}] * {pg})  # split within group {n}",
            psi(k)
        ));
    }
    stan_t.push(format!(
        "vector[{p}] beta_share;  // φ_g ψ_j of each column, design order"
    ));
    stan_t.push(format!("vector[{p}] beta;  // {about}"));
    let mut pieces = Vec::new();
    for (first, last, k, pos) in group_runs(gr) {
        let len = last - first + 1;
        let (stan_rhs, py_rhs) = if gr.cols[k].len() < 2 {
            (
                format!("beta_phi[{0}:{0}]", k + 1),
                format!("beta_phi[{}:{}]", k, k + 1),
            )
        } else {
            (
                format!(
                    "beta_phi[{}] * {}[{}:{}]",
                    k + 1,
                    psi(k),
                    pos + 1,
                    pos + len
                ),
                format!("beta_phi[{k}] * {}[{pos}:{}]", psi(k), pos + len),
            )
        };
        stan_t.push(format!(
            "beta_share[{}:{}] = {stan_rhs};  // group {}",
            first + 1,
            last + 1,
            gr.names[k]
        ));
        pieces.push(py_rhs);
    }
    stan_t.push(format!(
        "// reference residual variance {rho_stan}; the last factor is 1 / design sd of each column"
    ));
    stan_t.push(format!(
        "beta = beta_z .* sqrt({rho_stan} * beta_r2 / (1 - beta_r2) * beta_share) .* [{inv_sd}]';"
    ));
    py.push(format!(
        "beta_share = pm.Deterministic(\"beta_share\", pm.math.concatenate([{}]))  # φ_g ψ_j of each column, design order",
        pieces.join(", ")
    ));
    py.push(format!(
        "# reference residual variance {rho_py}; the last factor is 1 / design sd of each column"
    ));
    py.push(format!(
        "beta = pm.Deterministic(\"beta\", beta_z * pm.math.sqrt({rho_py} * beta_r2 / (1 - beta_r2) * beta_share) * [{inv_sd}])"
    ));
    section(code, "stan", "parameters", stan_p);
    section(code, "stan", "transformed_parameters", stan_t);
    section(code, "stan", "model", stan_m);
    section(code, "pymc", "model", py);
    refuse(
        code,
        "brms",
        "brms's R2D2() puts one flat Dirichlet over all its components (each coefficient of \
         class \"b\" is one), with no level for groups of coefficients; one R2D2() term per \
         group would give each group an R² of its own, not a share of one joint R². The \
         grouped prior equals the flat one only when every group's weight A_g equals its \
         column count times the concentration (then fit without groups, or use the Stan or \
         PyMC export)"
            .into(),
    );
}

# brms custom families for priorsmith's cure templates with a Weibull latency.
#
# The likelihood is priorsmith's own parameterisation (docs/survival.md):
#   latency      S_u(t) = exp(-(t / lambda)^k), lambda = exp(log_scale), k = shape
#   mixture cure S(t) = pi + (1 - pi) S_u(t), pi = inv_logit(cure_logit)
#   promotion    S(t) = exp(-theta (1 - S_u(t))), theta = exp(log_theta)
# with right censoring: an event contributes log f(t), a censored time log S(t).
# The exported priors (`priorsmith export FIT --to brms`) name the non-linear
# parameters cureLogit (or logTheta), logScale and nlShape; the formulas below use
# exactly those names, so `prior = priors` needs no editing. Covariates go on the
# non-linear parameters (e.g. `cureLogit ~ 1 + arm`), with priors of your own for
# their coefficients.
#
# Usage (data: `time` > 0, `event` 1 = event, 0 = censored):
#   source("cure-families.R"); source("priors.R")   # the brms export
#   fit <- brm(cure_formula_mixture, data = d, family = cure_family_mixture,
#              stanvars = cure_stanvars, prior = priors)
# Prior-only check: add `sample_prior = "only"`.
# A fitted prior is a proposal: the responsible statistician reviews it, checks it
# for prior-data conflict and sensitivity, and uses it within the applicable
# regulatory guidance and local practice.
library(brms)

cure_family_mixture <- custom_family(
  "priorsmith_mixcure_weibull",
  dpars = c("mu", "lscale", "kshape"),
  links = c("identity", "identity", "identity"),
  type = "real", vars = "vint1[n]"
)
cure_family_promotion <- custom_family(
  "priorsmith_promotion_weibull",
  dpars = c("mu", "lscale", "kshape"),
  links = c("identity", "identity", "identity"),
  type = "real", vars = "vint1[n]"
)

cure_stanvars <- stanvar(block = "functions", scode = "
  // Weibull latency in priorsmith's parameterisation: S_u = exp(-(t / exp(ls))^k).
  real priorsmith_weibull_logf(real t, real ls, real k) {
    return log(k) - ls + (k - 1) * (log(t) - ls) - pow(t / exp(ls), k);
  }
  // Mixture cure: mu = cure_logit (logit of the cured fraction).
  real priorsmith_mixcure_weibull_lpdf(real t, real mu, real lscale, real kshape, int event) {
    real su = exp(-pow(t / exp(lscale), kshape));
    if (event == 1)
      return log1m_inv_logit(mu) + priorsmith_weibull_logf(t, lscale, kshape);
    return log_sum_exp(log_inv_logit(mu), log1m_inv_logit(mu) + log(su));
  }
  // Promotion-time cure: mu = log_theta; cured fraction exp(-theta).
  real priorsmith_promotion_weibull_lpdf(real t, real mu, real lscale, real kshape, int event) {
    real cdf = -expm1(-pow(t / exp(lscale), kshape));
    if (event == 1)
      return mu + priorsmith_weibull_logf(t, lscale, kshape) - exp(mu) * cdf;
    return -exp(mu) * cdf;
  }
")

cure_formula_mixture <- bf(
  time | vint(event) ~ cureLogit,
  nlf(lscale ~ logScale), nlf(kshape ~ nlShape),
  cureLogit ~ 1, logScale ~ 1, nlShape ~ 1,
  nl = TRUE
)
cure_formula_promotion <- bf(
  time | vint(event) ~ logTheta,
  nlf(lscale ~ logScale), nlf(kshape ~ nlShape),
  logTheta ~ 1, logScale ~ 1, nlShape ~ 1,
  nl = TRUE
)

# With a prior on the cured fraction itself ([prior.cure_fraction]; the brms
# export bounds cureFraction by lb = 0, ub = 1): the same families, mu written
# from it, logit(pi) for the mixture cure and log(theta) = log(-log(pi)) for the
# promotion-time cure. A logit-normal prior comes as cureFractionLogit (normal,
# unbounded): there, write cureFractionLogit for logit(cureFraction) and
# log(-log_inv_logit(cureFractionLogit)) for log(-log(cureFraction)), and
# cureFractionLogit ~ 1 for cureFraction ~ 1.
cure_formula_mixture_fraction <- bf(
  time | vint(event) ~ logit(cureFraction),
  nlf(lscale ~ logScale), nlf(kshape ~ nlShape),
  cureFraction ~ 1, logScale ~ 1, nlShape ~ 1,
  nl = TRUE
)
cure_formula_promotion_fraction <- bf(
  time | vint(event) ~ log(-log(cureFraction)),
  nlf(lscale ~ logScale), nlf(kshape ~ nlShape),
  cureFraction ~ 1, logScale ~ 1, nlShape ~ 1,
  nl = TRUE
)

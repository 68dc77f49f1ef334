library(brms)
priors <- c(
  # intercept: linear predictor at the design mean in a typical cluster (u = 0)
  set_prior("normal(0.1, 0.3)", class = "Intercept"),
  # sigma: noise sd σ
  # half-normal(0.8): the <lower=0> bound truncates
  set_prior("normal(0, 0.8)", class = "sigma"),
  # cluster_sd: sd σ_u of the clusters' random intercepts u_j ~ N(0, σ_u²) (linear-predictor scale)
  # half-normal(0.5): the <lower=0> bound truncates
  set_prior("normal(0, 0.5)", class = "sd"),
  # class "b": the 4 coefficients of the standardised design priorsmith fitted on
  set_prior("normal(0, 0.224358)", class = "b"),
  # random slopes: write the group term as (1 + x2 || cluster) (uncorrelated intercept and slopes) in place of (1 | cluster); each slope sd is per unit of its covariate as given in the design file
  set_prior("normal(0, 0.25)", class = "sd", group = "cluster", coef = "x2")
)

// Likelihood in priorsmith's parameterisation (promotion-time-cure template).
// Promotion-time cure: S(t) = exp(-theta F(t)), F = 1 - S_u, theta = exp(eta), cured fraction exp(-theta)
// eta = log(-log(cure_fraction)) + theta_effect_arm * arm
// log-normal latency: S_u(t) = 1 - Phi(shape * (log t - log lambda)) (sdlog = 1/shape), lambda = exp(log_scale + latency effects - hazard effects / shape), in months.
// Stan's and brms's built-in survival families are parameterised otherwise: keep these expressions.
// Data: N patients, time = follow-up in months (> 0), event = 1 (event) or 0 (right-censored), arm coded as in the belief file's profiles (reference profile = 0).
functions {
  // ln S_u(t) and ln f_u(t) of the latency, ls = ln lambda.
  real latency_log_surv(real t, real ls, real shape) {
    return std_normal_lccdf(shape * (log(t) - ls));
  }
  real latency_log_dens(real t, real ls, real shape) {
    return std_normal_lpdf(shape * (log(t) - ls)) + log(shape) - log(t);
  }
}
data {
  int<lower=0> N;  // patients
  vector<lower=0>[N] time;  // follow-up, in months
  array[N] int<lower=0, upper=1> event;  // 1 = event, 0 = right-censored
  vector[N] arm;  // covariate arm, coded as in the profiles
}
  // likelihood: right-censored survival
  for (n in 1:N) {
    real ls = log_scale + latency_effect_arm * arm[n];
    real eta = log(-log(cure_fraction)) + theta_effect_arm * arm[n];
    // ln S = -theta F = theta * expm1(ln S_u)
    target += exp(eta) * expm1(latency_log_surv(time[n], ls, shape));
    if (event[n] == 1) {
      target += eta + latency_log_dens(time[n], ls, shape);
    }
  }

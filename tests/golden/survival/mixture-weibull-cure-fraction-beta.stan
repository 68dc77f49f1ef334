// Likelihood in priorsmith's parameterisation (mixture-cure template).
// Mixture cure: S(t) = pi + (1 - pi) S_u(t), pi = inv_logit(eta)
// eta = logit(cure_fraction) + cure_effect_arm * arm
// Weibull latency: S_u(t) = exp(-(t/lambda)^shape), lambda = exp(log_scale + latency effects - hazard effects / shape), in months.
// Stan's and brms's built-in survival families are parameterised otherwise: keep these expressions.
// Data: N patients, time = follow-up in months (> 0), event = 1 (event) or 0 (right-censored), arm coded as in the belief file's profiles (reference profile = 0).
functions {
  // ln S_u(t) and ln f_u(t) of the latency, ls = ln lambda.
  real latency_log_surv(real t, real ls, real shape) {
    return -exp(shape * (log(t) - ls));
  }
  real latency_log_dens(real t, real ls, real shape) {
    real z = shape * (log(t) - ls);
    return log(shape) - log(t) + z - exp(z);
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
    real ls = log_scale - hazard_effect_arm * arm[n] / shape;
    real eta = logit(cure_fraction) + cure_effect_arm * arm[n];
    if (event[n] == 1) {
      target += log1m_inv_logit(eta) + latency_log_dens(time[n], ls, shape);
    } else {
      target += log_sum_exp(log_inv_logit(eta), log1m_inv_logit(eta) + latency_log_surv(time[n], ls, shape));
    }
  }

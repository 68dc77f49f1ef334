// Likelihood in priorsmith's parameterisation (mixture-cure template).
// Mixture cure: S(t) = pi + (1 - pi) S_u(t), pi = inv_logit(eta)
// eta = cure_logit
// generalised gamma latency (Prentice 1974), Q = -0.5, sigma = 1/shape, mu = log lambda: a = 1/Q^2, u = a exp(Q shape (log t - log lambda)), S_u(t) = gamma_p(a, u), lambda = exp(log_scale + latency effects - hazard effects / shape), in months.
// Stan's and brms's built-in survival families are parameterised otherwise: keep these expressions.
// Data: N patients, time = follow-up in months (> 0), event = 1 (event) or 0 (right-censored), arm coded as in the belief file's profiles (reference profile = 0).
functions {
  // ln S_u(t) and ln f_u(t) of the latency, ls = ln lambda.
  real latency_log_surv(real t, real ls, real shape) {
    real Q = -0.5;
    real a = inv_square(Q);
    real lu = log(a) + Q * shape * (log(t) - ls);
    return log(gamma_p(a, exp(lu)));
  }
  real latency_log_dens(real t, real ls, real shape) {
    real Q = -0.5;
    real a = inv_square(Q);
    real lu = log(a) + Q * shape * (log(t) - ls);
    return log(abs(Q)) + log(shape) - log(t) + a * lu - exp(lu) - lgamma(a);
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
    real eta = cure_logit;
    if (event[n] == 1) {
      target += log1m_inv_logit(eta) + latency_log_dens(time[n], ls, shape);
    } else {
      target += log_sum_exp(log_inv_logit(eta), log1m_inv_logit(eta) + latency_log_surv(time[n], ls, shape));
    }
  }

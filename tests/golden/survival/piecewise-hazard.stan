// Likelihood in priorsmith's parameterisation (piecewise-hazard template).
// Piecewise exponential: hazard h_j = exp(log_hazard[j]) on [cut_j, cut_j+1), cuts = 0, 6, 12, 24 months, the last interval open-ended.
// log_hazard[1] = log_hazard_1, log_hazard[j+1] = log_hazard[j] + hazard_walk_sd * log_hazard_z[j] (random walk).
// S(t) = exp(-exp(lp) * sum_j h_j * (time spent in interval j before t)), lp = hazard_effect_arm * arm.
// Data: N patients, time = follow-up in months (> 0), event = 1 (event) or 0 (right-censored), arm coded as in the belief file's profiles (reference profile = 0).
functions {
  // H_0(t) = sum_j h_j * (time spent in [cut[j], cut[j+1]) before t), the last interval open-ended.
  real pw_cum_hazard(real t, vector hazard, vector cut) {
    int J = num_elements(cut);
    real H = 0;
    for (j in 1:J) {
      real end = j < J ? cut[j + 1] : positive_infinity();
      if (t <= cut[j]) break;
      H += hazard[j] * (fmin(t, end) - cut[j]);
    }
    return H;
  }
  // ln h_0(t): the log hazard of the interval holding t (cut[j] <= t < cut[j+1]).
  real pw_log_hazard(real t, vector log_hazard, vector cut) {
    int J = num_elements(cut);
    int j = 1;
    while (j < J && t >= cut[j + 1]) j += 1;
    return log_hazard[j];
  }
}
data {
  int<lower=0> N;  // patients
  vector<lower=0>[N] time;  // follow-up, in months
  array[N] int<lower=0, upper=1> event;  // 1 = event, 0 = right-censored
  vector[N] arm;  // covariate arm, coded as in the profiles
}
parameters {
  real log_hazard_1;  // log hazard of the first interval [0, 6) months (events per unit of time)
  real<lower=0> hazard_walk_sd;  // sd of the random walk on the log hazards
  real hazard_effect_arm;  // log hazard ratio per unit of arm (every interval)
  vector[3] log_hazard_z;  // standardised steps of the random walk on the log hazards
}
transformed parameters {
  vector[4] log_hazard = cumulative_sum(append_row(log_hazard_1, hazard_walk_sd * log_hazard_z));  // ln h_j on interval j
}
model {
  // log_hazard[j+1] - log_hazard[j] ~ normal(0, hazard_walk_sd), non-centred
  log_hazard_z ~ std_normal();

  // likelihood: right-censored piecewise exponential
  {
    vector[4] cut = [0.0, 6.0, 12.0, 24.0]';  // interval starts, in months
    vector[4] hazard = exp(log_hazard);
    for (n in 1:N) {
      real lp = hazard_effect_arm * arm[n];
      target += -exp(lp) * pw_cum_hazard(time[n], hazard, cut);
      if (event[n] == 1) {
        target += lp + pw_log_hazard(time[n], log_hazard, cut);
      }
    }
  }
}

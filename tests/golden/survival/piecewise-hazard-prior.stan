// Paste each block's lines into the same block of your Stan program.
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
}

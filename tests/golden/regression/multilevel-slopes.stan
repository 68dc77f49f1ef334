parameters {
  real intercept;  // linear predictor at the design mean in a typical cluster (u = 0)
  real<lower=0> sigma;  // noise sd σ
  real<lower=0> cluster_sd;  // sd σ_u of the clusters' random intercepts u_j ~ N(0, σ_u²) (linear-predictor scale)
  real<lower=0> slope_sd_x2;  // sd σ_v of the clusters' random slopes of `x2` (v_j ~ N(0, σ_v²), per unit as given in the design file, independent of u_j)
  vector[4] beta;  // 4 coefficients per unit of the standardised design priorsmith fitted on (in design order, columns x1 … x4)
  vector[8] u_z;  // standardised random intercepts, one per cluster
  vector[8] v_z_x2;  // standardised random slopes of x2, one per cluster
}
transformed parameters {
  vector[8] u = cluster_sd * u_z;  // random intercepts u_j ~ N(0, cluster_sd²); add u[cluster[i]] to row i's linear predictor
  vector[8] v_x2 = slope_sd_x2 * v_z_x2;  // random slopes of x2 ~ N(0, slope_sd_x2²) per unit as given; add v_x2[cluster[i]] * (x2[i] - 0.101428) to row i's linear predictor
}
model {
  intercept ~ normal(0.1, 0.3);
  // half-normal(0.8): the <lower=0> bound truncates
  sigma ~ normal(0, 0.8);
  // half-normal(0.5): the <lower=0> bound truncates
  cluster_sd ~ normal(0, 0.5);
  // half-normal(0.25): the <lower=0> bound truncates
  slope_sd_x2 ~ normal(0, 0.25);
  beta ~ normal(0, 0.224358);
  u_z ~ std_normal();
  v_z_x2 ~ std_normal();
}

parameters {
  real intercept;  // linear predictor at the design mean
  real<lower=0> sigma;  // noise sd σ
  // grouped R2D2 (normal kernel): R² ~ Beta(a, b), W = R²/(1 − R²), group shares
  // φ ~ Dirichlet(A_1, …, A_G), within group g ψ ~ Dirichlet(c, …, c) over its columns,
  // β_j = z_j √(ρ W φ_g ψ_j) / s_j with ρ the reference residual variance, s_j the design sd
  vector[4] beta_z;
  real<lower=0, upper=1> beta_r2;  // R²
  simplex[3] beta_phi;  // group shares φ_g: 1 clinical (2 columns), 2 lab (1 column), 3 omics (1 column)
  simplex[2] beta_psi_g1;  // split within group clinical
}
transformed parameters {
  vector[4] beta_share;  // φ_g ψ_j of each column, design order
  vector[4] beta;  // 4 coefficients per unit of the centred design priorsmith fitted on (in design order, columns x1 … x4)
  beta_share[1:1] = beta_phi[1] * beta_psi_g1[1:1];  // group clinical
  beta_share[2:2] = beta_phi[2:2];  // group lab
  beta_share[3:3] = beta_phi[1] * beta_psi_g1[2:2];  // group clinical
  beta_share[4:4] = beta_phi[3:3];  // group omics
  // reference residual variance square(sigma); the last factor is 1 / design sd of each column
  beta = beta_z .* sqrt(square(sigma) * beta_r2 / (1 - beta_r2) * beta_share) .* [0.760329, 0.473347, 0.621745, 7.43343]';
}
model {
  intercept ~ normal(0.1, 0.3);
  // half-normal(0.8): the <lower=0> bound truncates
  sigma ~ normal(0, 0.8);
  beta_z ~ std_normal();
  beta_r2 ~ beta(2, 3);
  beta_phi ~ dirichlet([3.03867, 1.2, 0.835151]');  // group weights A_g
  beta_psi_g1 ~ dirichlet(rep_vector(0.5, 2));
}

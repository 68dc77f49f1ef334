parameters {
  real intercept;  // linear predictor at the design mean
  real<lower=0> sigma;  // noise sd σ
  // independent priors per group of coefficients: clinical (regularised-horseshoe, 2 columns), lab (r2d2, 1 column), omics (normal, 1 column)
  vector[2] beta_clinical_z;
  vector<lower=0>[2] beta_clinical_lambda;  // local scales
  real<lower=0> beta_clinical_tau;  // global scale
  real<lower=0> beta_clinical_c2;  // slab variance c²
  vector[1] beta_lab_z;
  real<lower=0, upper=1> beta_lab_r2;  // R²
  simplex[1] beta_lab_phi;  // variance shares
  vector[1] beta_omics;  // group omics: 1 coefficient per unit of the centred design (x4)
}
transformed parameters {
  vector[2] beta_clinical = beta_clinical_z .* sqrt(beta_clinical_c2 * square(beta_clinical_lambda) ./ (beta_clinical_c2 + square(beta_clinical_tau) * square(beta_clinical_lambda))) * beta_clinical_tau;  // group clinical: 2 coefficients per unit of the centred design (x1, x3)
  // reference residual variance square(sigma); the last factor is 1 / design sd of each column
  vector[1] beta_lab = beta_lab_z .* sqrt(square(sigma) * beta_lab_r2 / (1 - beta_lab_r2) * beta_lab_phi) .* [0.473347]';  // group lab: 1 coefficient per unit of the centred design (x2)
  vector[4] beta;  // 4 coefficients per unit of the centred design priorsmith fitted on, design order
  beta[1:1] = beta_clinical[1:1];  // group clinical
  beta[2:2] = beta_lab[1:1];  // group lab
  beta[3:3] = beta_clinical[2:2];  // group clinical
  beta[4:4] = beta_omics[1:1];  // group omics
}
model {
  intercept ~ normal(0.1, 0.3);
  // half-normal(0.8): the <lower=0> bound truncates
  sigma ~ normal(0, 0.8);
  beta_clinical_z ~ std_normal();
  beta_clinical_lambda ~ cauchy(0, 1);  // half-Cauchy
  beta_clinical_tau ~ cauchy(0, 0.0415631);  // half-Cauchy
  beta_clinical_c2 ~ inv_gamma(2, 2);  // slab scale 1, slab df 4
  beta_lab_z ~ std_normal();
  beta_lab_r2 ~ beta(2, 3);
  beta_lab_phi ~ dirichlet(rep_vector(0.5, 1));
  beta_omics ~ normal(0, 0.0445589);
}

import pymc as pm

with pm.Model() as model:
    intercept = pm.Normal("intercept", mu=0.1, sigma=0.3)  # linear predictor at the design mean
    sigma = pm.HalfNormal("sigma", sigma=0.8)  # noise sd σ
    # grouped R2D2 (normal kernel): R² ~ Beta(a, b), W = R²/(1 − R²), group shares
    # φ ~ Dirichlet(A_1, …, A_G), within group g ψ ~ Dirichlet(c, …, c) over its columns,
    # β_j = z_j √(ρ W φ_g ψ_j) / s_j with ρ the reference residual variance, s_j the design sd
    # beta: 4 coefficients per unit of the centred design priorsmith fitted on (in design order, columns x1 … x4)
    beta_z = pm.Normal("beta_z", mu=0, sigma=1, shape=4)
    beta_r2 = pm.Beta("beta_r2", alpha=2, beta=3)
    beta_phi = pm.Dirichlet("beta_phi", a=[3.03867, 1.2, 0.835151])  # group shares φ_g: 1 clinical (2 columns), 2 lab (1 column), 3 omics (1 column)
    beta_psi_g1 = pm.Dirichlet("beta_psi_g1", a=[0.5] * 2)  # split within group clinical
    beta_share = pm.Deterministic("beta_share", pm.math.concatenate([beta_phi[0] * beta_psi_g1[0:1], beta_phi[1:2], beta_phi[0] * beta_psi_g1[1:2], beta_phi[2:3]]))  # φ_g ψ_j of each column, design order
    # reference residual variance sigma**2; the last factor is 1 / design sd of each column
    beta = pm.Deterministic("beta", beta_z * pm.math.sqrt(sigma**2 * beta_r2 / (1 - beta_r2) * beta_share) * [0.760329, 0.473347, 0.621745, 7.43343])

import pymc as pm

with pm.Model() as model:
    intercept = pm.Normal("intercept", mu=0.1, sigma=0.3)  # linear predictor at the design mean
    sigma = pm.HalfNormal("sigma", sigma=0.8)  # noise sd σ
    # independent priors per group of coefficients: clinical (regularised-horseshoe, 2 columns), lab (r2d2, 1 column), omics (normal, 1 column)
    # beta_clinical: group clinical: 2 coefficients per unit of the centred design (x1, x3)
    beta_clinical_z = pm.Normal("beta_clinical_z", mu=0, sigma=1, shape=2)
    beta_clinical_lambda = pm.HalfCauchy("beta_clinical_lambda", beta=1, shape=2)
    beta_clinical_tau = pm.HalfCauchy("beta_clinical_tau", beta=0.0415631)
    beta_clinical_c2 = pm.InverseGamma("beta_clinical_c2", alpha=2, beta=2)  # slab variance c²: slab scale 1, slab df 4
    beta_clinical = pm.Deterministic("beta_clinical", beta_clinical_z * pm.math.sqrt(beta_clinical_c2 * beta_clinical_lambda**2 / (beta_clinical_c2 + beta_clinical_tau**2 * beta_clinical_lambda**2)) * beta_clinical_tau)
    # beta_lab: group lab: 1 coefficient per unit of the centred design (x2)
    beta_lab_z = pm.Normal("beta_lab_z", mu=0, sigma=1, shape=1)
    beta_lab_r2 = pm.Beta("beta_lab_r2", alpha=2, beta=3)
    beta_lab_phi = pm.Dirichlet("beta_lab_phi", a=[0.5] * 1)
    # reference residual variance sigma**2; the last factor is 1 / design sd of each column
    beta_lab = pm.Deterministic("beta_lab", beta_lab_z * pm.math.sqrt(sigma**2 * beta_lab_r2 / (1 - beta_lab_r2) * beta_lab_phi) * [0.473347])
    # beta_omics: group omics: 1 coefficient per unit of the centred design (x4)
    beta_omics = pm.Normal("beta_omics", mu=0, sigma=0.0445589, shape=1)
    beta = pm.Deterministic("beta", pm.math.concatenate([beta_clinical[0:1], beta_lab[0:1], beta_clinical[1:2], beta_omics[0:1]]))  # 4 coefficients per unit of the centred design priorsmith fitted on, design order

import pymc as pm

with pm.Model() as model:
    intercept = pm.Normal("intercept", mu=0.1, sigma=0.3)  # linear predictor at the design mean in a typical cluster (u = 0)
    sigma = pm.HalfNormal("sigma", sigma=0.8)  # noise sd σ
    cluster_sd = pm.HalfNormal("cluster_sd", sigma=0.5)  # sd σ_u of the clusters' random intercepts u_j ~ N(0, σ_u²) (linear-predictor scale)
    slope_sd_x2 = pm.HalfNormal("slope_sd_x2", sigma=0.25)  # sd σ_v of the clusters' random slopes of `x2` (v_j ~ N(0, σ_v²), per unit as given in the design file, independent of u_j)
    # beta: 4 coefficients per unit of the standardised design priorsmith fitted on (in design order, columns x1 … x4)
    beta = pm.Normal("beta", mu=0, sigma=0.224358, shape=4)
    u_z = pm.Normal("u_z", mu=0, sigma=1, shape=8)  # one per cluster
    u = pm.Deterministic("u", cluster_sd * u_z)  # add u[cluster_idx] to the linear predictor
    v_z_x2 = pm.Normal("v_z_x2", mu=0, sigma=1, shape=8)  # one per cluster
    v_x2 = pm.Deterministic("v_x2", slope_sd_x2 * v_z_x2)  # add v_x2[cluster_idx] * (x2 - 0.101428) to the linear predictor

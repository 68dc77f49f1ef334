# Likelihood in priorsmith's parameterisation (promotion-time-cure template).
# Promotion-time cure: S(t) = exp(-theta F(t)), F = 1 - S_u, theta = exp(eta), cured fraction exp(-theta)
# eta = log(-log(cure_fraction)) + theta_effect_arm * arm
# log-normal latency: S_u(t) = 1 - Phi(shape * (log t - log lambda)) (sdlog = 1/shape), lambda = exp(log_scale + latency effects - hazard effects / shape), in months.
# Stan's and brms's built-in survival families are parameterised otherwise: keep these expressions.
# Data: N patients, time = follow-up in months (> 0), event = 1 (event) or 0 (right-censored), arm coded as in the belief file's profiles (reference profile = 0).
import numpy as np
import pytensor.tensor as pt
        # likelihood: right-censored survival
        ls = log_scale + latency_effect_arm * arm
        z = shape * (pt.log(time) - ls)
        log_surv = pm.logcdf(pm.Normal.dist(0.0, 1.0), -z)
        log_dens = pm.logp(pm.Normal.dist(0.0, 1.0), z) + pt.log(shape) - pt.log(time)
        eta = pt.log(-pt.log(cure_fraction)) + theta_effect_arm * arm
        loglik = pt.exp(eta) * pt.expm1(log_surv) + event * (eta + log_dens)
        pm.Potential("loglik", pt.sum(loglik))
    return model

# Likelihood in priorsmith's parameterisation (parametric-survival template).
# Parametric survival: S(t) = S_u(t)
# exponential latency: S_u(t) = exp(-t/lambda), lambda = exp(log_scale + latency effects - hazard effects), in months.
# Stan's and brms's built-in survival families are parameterised otherwise: keep these expressions.
# Data: N patients, time = follow-up in months (> 0), event = 1 (event) or 0 (right-censored), arm coded as in the belief file's profiles (reference profile = 0).
import numpy as np
import pytensor.tensor as pt
        # likelihood: right-censored survival
        ls = log_scale - hazard_effect_arm * arm
        z = 1.0 * (pt.log(time) - ls)
        log_surv = -pt.exp(z)
        log_dens = pt.log(1.0) - pt.log(time) + z - pt.exp(z)
        loglik = pt.switch(pt.eq(event, 1), log_dens, log_surv)
        pm.Potential("loglik", pt.sum(loglik))
    return model

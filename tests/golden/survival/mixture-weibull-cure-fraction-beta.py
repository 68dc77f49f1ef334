# Likelihood in priorsmith's parameterisation (mixture-cure template).
# Mixture cure: S(t) = pi + (1 - pi) S_u(t), pi = inv_logit(eta)
# eta = logit(cure_fraction) + cure_effect_arm * arm
# Weibull latency: S_u(t) = exp(-(t/lambda)^shape), lambda = exp(log_scale + latency effects - hazard effects / shape), in months.
# Stan's and brms's built-in survival families are parameterised otherwise: keep these expressions.
# Data: N patients, time = follow-up in months (> 0), event = 1 (event) or 0 (right-censored), arm coded as in the belief file's profiles (reference profile = 0).
import numpy as np
import pytensor.tensor as pt
        # likelihood: right-censored survival
        ls = log_scale - hazard_effect_arm * arm / shape
        z = shape * (pt.log(time) - ls)
        log_surv = -pt.exp(z)
        log_dens = pt.log(shape) - pt.log(time) + z - pt.exp(z)
        eta = pt.log(cure_fraction) - pt.log1p(-cure_fraction) + cure_effect_arm * arm
        log_cure, log_uncured = -pt.log1pexp(-eta), -pt.log1pexp(eta)
        loglik = pt.switch(pt.eq(event, 1), log_uncured + log_dens, pt.logaddexp(log_cure, log_uncured + log_surv))
        pm.Potential("loglik", pt.sum(loglik))
    return model

# Likelihood in priorsmith's parameterisation (promotion-time-cure template).
# Promotion-time cure: S(t) = exp(-theta F(t)), F = 1 - S_u, theta = exp(eta), cured fraction exp(-theta)
# eta = log_theta
# generalised gamma latency (Prentice 1974), Q = 0.8, sigma = 1/shape, mu = log lambda: a = 1/Q^2, u = a exp(Q shape (log t - log lambda)), S_u(t) = gamma_q(a, u), lambda = exp(log_scale + latency effects - hazard effects / shape), in months.
# Stan's and brms's built-in survival families are parameterised otherwise: keep these expressions.
# Data: N patients, time = follow-up in months (> 0), event = 1 (event) or 0 (right-censored), arm coded as in the belief file's profiles (reference profile = 0).
import numpy as np
import pytensor.tensor as pt
        # likelihood: right-censored survival
        ls = log_scale + latency_effect_arm * arm
        z = shape * (pt.log(time) - ls)
        gg_q = 0.8
        gg_a = 1.0 / gg_q**2
        log_u = pt.log(gg_a) + gg_q * z
        log_surv = pt.log(pt.gammaincc(gg_a, pt.exp(log_u)))
        log_dens = pt.log(abs(gg_q)) + pt.log(shape) - pt.log(time) + gg_a * log_u - pt.exp(log_u) - pt.gammaln(gg_a)
        eta = log_theta
        loglik = pt.exp(eta) * pt.expm1(log_surv) + event * (eta + log_dens)
        pm.Potential("loglik", pt.sum(loglik))
    return model

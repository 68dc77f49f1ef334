# Likelihood in priorsmith's parameterisation (piecewise-hazard template).
# Piecewise exponential: hazard h_j = exp(log_hazard[j]) on [cut_j, cut_j+1), cuts = 0, 6, 12, 24 months, the last interval open-ended.
# log_hazard[1] = log_hazard_1, log_hazard[j+1] = log_hazard[j] + hazard_walk_sd * log_hazard_z[j] (random walk).
# S(t) = exp(-exp(lp) * sum_j h_j * (time spent in interval j before t)), lp = hazard_effect_arm * arm.
# Data: N patients, time = follow-up in months (> 0), event = 1 (event) or 0 (right-censored), arm coded as in the belief file's profiles (reference profile = 0).
import numpy as np
import pymc as pm
import pytensor.tensor as pt


def make_model(time, event, arm):
    """The fitted prior and the right-censored likelihood (see the comments above)."""
    time = np.asarray(time, dtype=float)
    event = np.asarray(event, dtype=float)
    arm = np.asarray(arm, dtype=float)
    with pm.Model() as model:
        log_hazard_z = pm.Normal("log_hazard_z", mu=0, sigma=1, shape=3)  # standardised steps of the random walk
        log_hazard = pm.Deterministic("log_hazard", pm.math.concatenate([pm.math.stack([log_hazard_1]), log_hazard_1 + pm.math.cumsum(hazard_walk_sd * log_hazard_z)]))  # ln h_j on interval j
        # likelihood: right-censored piecewise exponential
        cut = np.array([0.0, 6.0, 12.0, 24.0])  # interval starts, in months
        cut_end = np.append(cut[1:], np.inf)
        # time spent in each interval before time (N x J), and the interval holding time
        exposure = np.clip(time[:, None], cut[None, :], cut_end[None, :]) - cut[None, :]
        holding = np.searchsorted(cut, time, side="right") - 1
        lp = hazard_effect_arm * arm
        loglik = -pt.exp(lp) * pt.dot(exposure, pt.exp(log_hazard)) + event * (lp + log_hazard[holding])
        pm.Potential("loglik", pt.sum(loglik))
    return model

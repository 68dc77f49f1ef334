# Paste the lines inside `with` into your own model context.
import pymc as pm

with pm.Model() as model:
    log_hazard_z = pm.Normal("log_hazard_z", mu=0, sigma=1, shape=3)  # standardised steps of the random walk
    log_hazard = pm.Deterministic("log_hazard", pm.math.concatenate([pm.math.stack([log_hazard_1]), log_hazard_1 + pm.math.cumsum(hazard_walk_sd * log_hazard_z)]))  # ln h_j on interval j

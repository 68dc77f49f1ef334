#!/usr/bin/env python3
"""Write the invented covariates of demo-data/multicentre/ (no real patient or centre).

2,000 patients in 30 centres of unequal size (about 20 to 130 patients), 20
covariates: age (years), sex (0/1), prior admissions in the last year (count),
diabetes and chronic kidney disease (0/1), and 15 standardised biomarkers, the
first five mildly correlated with age. Only the covariates are invented (no
outcome: priors are chosen before data). numpy's PCG64 generator with a fixed
seed, so the file is reproducible:

    python3 scripts/make-multicentre-demo.py
"""
import numpy as np

rng = np.random.default_rng(20261203)
n, centres = 2000, 30
weights = rng.gamma(4.0, 1.0, centres)
sizes = np.maximum(20, np.round(weights / weights.sum() * n)).astype(int)
sizes[-1] += n - sizes.sum()
centre = np.repeat([f"C{j + 1:02d}" for j in range(centres)], sizes)
age = np.clip(rng.normal(68, 12, n), 18, 99).round()
sex = (rng.random(n) < 0.47).astype(int)
prior_admissions = rng.poisson(0.8, n)
diabetes = (rng.random(n) < 0.22).astype(int)
ckd = (rng.random(n) < 0.15 + 0.004 * (age - 68)).astype(int)
bio = rng.normal(0, 1, (n, 15))
bio[:, :5] += 0.3 * ((age - 68) / 12)[:, None]
with open("demo-data/multicentre/patients.csv", "w") as f:
    f.write("centre,age,sex,prior_admissions,diabetes,ckd,"
            + ",".join(f"bm{k + 1}" for k in range(15)) + "\n")
    for i in range(n):
        row = [centre[i], f"{age[i]:.0f}", str(sex[i]), str(prior_admissions[i]),
               str(diabetes[i]), str(ckd[i])] + [f"{x:.3f}" for x in bio[i]]
        f.write(",".join(row) + "\n")
print(n, "rows,", centres, "centres, sizes", sizes.min(), "to", sizes.max())

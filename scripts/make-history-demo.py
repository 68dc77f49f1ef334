#!/usr/bin/env python3
"""Write the invented data of demo-data/history/ (no real trial or patient).

A mixture-cure model (Berkson & Gage 1952): a fraction pi is cured; the others
relapse at Weibull(shape k, scale lam) months. Uniform accrual over `accrual`
months and analysis `extra` months after the last entry give administrative
censoring. numpy's PCG64 generator with fixed seeds, so the files are reproducible:

    python3 scripts/make-history-demo.py
"""
import numpy as np


def trial(seed, n, pi, lam, k, accrual, extra):
    rng = np.random.default_rng(seed)
    cured = rng.random(n) < pi
    t = lam * rng.weibull(k, n)
    t[cured] = np.inf
    follow = accrual + extra - rng.uniform(0, accrual, n)
    time = np.minimum(t, follow)
    event = (t <= follow).astype(int)
    return time, event


def write(path, rows, note):
    with open(path, "w") as f:
        f.write(f"# INVENTED data for the priorsmith demo ({note}); written by scripts/make-history-demo.py\n")
        f.write("time,event,arm\n")
        for time, event, arm in rows:
            f.write(f"{time:.2f},{event},{arm}\n")


# Historical trial: control arm (cure 35 %, latency scale 14 months, shape 1.4) and an
# experimental arm, so the --arm selection is exercised.
tc, ec = trial(20261, 150, 0.35, 14.0, 1.4, 36.0, 30.0)
tx, ex = trial(20262, 150, 0.45, 16.0, 1.4, 36.0, 30.0)
write("demo-data/history/historical.csv",
      [(a, b, "control") for a, b in zip(tc, ec)] + [(a, b, "experimental") for a, b in zip(tx, ex)],
      "historical two-arm trial")
# New trial resembling the historical control arm, and one that does not (cure 15 %, faster relapse).
tn, en = trial(20263, 90, 0.35, 14.0, 1.4, 24.0, 18.0)
write("demo-data/history/new-trial.csv", [(a, b, "control") for a, b in zip(tn, en)],
      "new trial like the historical control")
tf, ef = trial(20264, 90, 0.15, 9.0, 1.4, 24.0, 18.0)
write("demo-data/history/new-trial-conflict.csv", [(a, b, "control") for a, b in zip(tf, ef)],
      "new trial unlike the historical control")

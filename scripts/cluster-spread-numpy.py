# Independent check of the logistic-multilevel `cluster_spread` quantity (the
# 5–95 % range of cluster event risk): a NumPy simulation of 10^7 clusters and the
# SciPy closed form. Used by src/templates/regression/tests_multilevel.rs
# (numpy 2.4.6, scipy 1.17.1). Run: python3 scripts/cluster-spread-numpy.py
import numpy as np, scipy
from scipy.special import expit
from scipy.stats import norm
a, s = -2.2, 0.6
rng = np.random.default_rng(2026)
u = rng.normal(0.0, s, 10_000_000)
r = expit(a + u)
q = np.quantile(r, [0.05, 0.95])
est = q[1] - q[0]
boots = []
b = np.random.default_rng(7)
for _ in range(200):
    idx = b.integers(0, r.size, r.size // 10)
    qq = np.quantile(r[idx], [0.05, 0.95]); boots.append(qq[1] - qq[0])
se = np.std(boots) / np.sqrt(10)
exact = expit(a + s * norm.ppf(0.95)) - expit(a + s * norm.ppf(0.05))
print(np.__version__, scipy.__version__, repr(est), se, repr(exact))

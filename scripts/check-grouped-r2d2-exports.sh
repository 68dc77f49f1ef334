#!/usr/bin/env bash
# Opt-in check of the grouped R2D2 PyMC and Stan exports with PyMC and Stan
# themselves (not part of `cargo test`; tests/export_regression.rs interprets
# the code in Rust).
#
# Fits an invented 40 x 4 linear design under R2D2 with three groups (x1 and x3;
# x2 alone; x4), exports the prior to PyMC and Stan, draws PyMC's with pm.draw
# and, when pystan is importable, Stan's with NUTS (pystan 3; the program has no
# data; every 5th draw of 4 chains kept, so that the draws are close to
# independent — common practice) and compares each with priorsmith's own draws (draws.csv): the groups' shares
# (the sum of beta_share over a group's columns against r2_share), the sd of the
# linear predictor over the design rows and the in-sample R² var(Xβ)/(var + σ²).
# Check: at priorsmith's q_p, p = 0.1 … 0.9, the two empirical CDFs agree within
# 4·sqrt(F(1 − F)(1/n1 + 1/n2)) (two-sample binomial error); the two-sample KS
# p-value (scipy.stats.ks_2samp) is printed beside it.
#
# Usage: scripts/check-grouped-r2d2-exports.sh   (PYTHON: an interpreter with
#   pymc and scipy, optionally pystan; PRIORSMITH_BIN: the binary, default target/release/priorsmith)
set -euo pipefail
cd "$(dirname "$0")/.."
PY=${PYTHON:-python3}
if ! "$PY" -c "import pymc, scipy" >/dev/null 2>&1; then
  echo "SKIP check-grouped-r2d2-exports: pymc and scipy are not importable by $PY"
  exit 0
fi
BIN=$(realpath "${PRIORSMITH_BIN:-target/release/priorsmith}")
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT
"$PY" - "$WORK" <<'PYEOF'
import math, sys
w = sys.argv[1]
with open(f"{w}/x.csv", "w") as f:
    f.write("x1,x2,x3,x4\n")
    for r in range(40):
        f.write(f"{math.sin(1.3*r+0.2)+0.1*r},{3*math.cos(0.7*r)},{((r*7)%11)*0.5},{0.2*math.sin(0.31*r*r)}\n")
PYEOF
cat > "$WORK/s.toml" <<'EOF'
title = "grouped R2D2 PyMC check (invented data)"
[model]
template = "linear"
[design]
file = "x.csv"
standardise = false
[simulation]
draws = 20000
seed = 5
[prior.intercept]
family = "normal"
mean = 0.1
sd = 0.3
[prior.sigma]
family = "half-normal"
scale = 0.8
[prior.coefficients]
family = "r2d2"
a = 2.0
b = 3.0
concentration = 0.5
[prior.coefficients.groups.clinical]
covariates = ["x1", "x3"]
weight = { fit = [0.3, 30.0] }
[prior.coefficients.groups.lab]
covariates = ["x2"]
weight = 1.2
[prior.coefficients.groups.omics]
covariates = "rest"
weight = { fit = [0.3, 30.0] }
[[belief]]
quantity = "signal_sd"
quantiles = { "0.25" = 0.2, "0.5" = 0.5, "0.75" = 1.0 }
[[belief]]
quantity = "r2"
quantiles = { "0.25" = 0.15, "0.5" = 0.35, "0.75" = 0.6 }
[[belief]]
quantity = "r2_share"
group = "clinical"
distribution = { family = "beta", alpha = 3, beta = 2 }
[[belief]]
quantity = "r2_share"
group = "omics"
distribution = { family = "beta", alpha = 0.8, beta = 4 }
EOF
(cd "$WORK" && "$BIN" fit s.toml -o out -q && "$BIN" export out --to pymc --out model.py -q && "$BIN" export out --to stan --out model.stan -q)
# In the temporary folder: httpstan builds the model under ./build.
(cd "$WORK" && "$PY" - "$WORK") <<'PYEOF'
import csv, math, sys
import numpy as np
import pymc as pm
from scipy import stats
w = sys.argv[1]
ns = {}
exec(open(f"{w}/model.py").read(), ns)
model = ns["model"]
n = 20000
x = np.loadtxt(f"{w}/x.csv", delimiter=",", skiprows=1)
xc = x - x.mean(axis=0)
rows = list(csv.DictReader(open(f"{w}/out/draws.csv")))
bad = 0


def check(label, share, beta, sigma):
    global bad
    v = np.mean((xc @ beta.T) ** 2, axis=0)
    code = {
        "r2_share (clinical)": share[:, 0] + share[:, 2],
        "r2_share (omics)": share[:, 3],
        "signal_sd": np.sqrt(v),
        "r2": v / (v + sigma ** 2),
    }
    n1 = len(sigma)
    print(f"{label}: {n1} draws against priorsmith's {len(rows)}")
    for name, c in code.items():
        ours = np.sort(np.array([float(r[name]) for r in rows]))
        n2 = len(ours)
        worst = 0.0
        for p in [0.1, 0.25, 0.5, 0.75, 0.9]:
            q = ours[min(int(p * n2), n2 - 1)]
            f1, f2 = np.mean(c <= q), np.mean(ours <= q)
            f = (f1 * n1 + f2 * n2) / (n1 + n2)
            z = (f1 - f2) / math.sqrt(f * (1 - f) * (1 / n1 + 1 / n2))
            worst = max(worst, abs(z))
            if abs(z) > 4:
                bad += 1
                print(f"  FAIL {name}: at q_{p} = {q:.4f} F_code = {f1:.4f} F_priorsmith = {f2:.4f} z = {z:.1f}")
        ks = stats.ks_2samp(c, ours)
        print(f"  {name:<22} max |z| = {worst:.2f}  KS D = {ks.statistic:.4f} p = {ks.pvalue:.3f}")


share, beta, sigma = pm.draw([model["beta_share"], model["beta"], model["sigma"]], draws=n, random_seed=7)
check(f"PyMC {pm.__version__}, numpy {np.__version__}, scipy {__import__('scipy').__version__}", share, beta, sigma)
try:
    import stan
except ImportError:
    stan = None
    print("Stan: pystan not importable, skipped")
if stan is not None:
    post = stan.build(open(f"{w}/model.stan").read(), data={}, random_seed=3)
    fit = post.sample(num_chains=4, num_samples=25000, num_warmup=1000)
    keep = slice(None, None, 5)
    check(
        f"Stan (pystan {stan.__version__}, NUTS, every 5th draw)",
        fit["beta_share"].T[keep],
        fit["beta"].T[keep],
        fit["sigma"].ravel()[keep],
    )
if bad:
    sys.exit(f"check-grouped-r2d2-exports: {bad} checks failed")
print("check-grouped-r2d2-exports: the exports agree within 4 standard errors")
PYEOF

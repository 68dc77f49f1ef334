#!/usr/bin/env bash
# Opt-in check of the PyMC hand-off (python/priorsmith/pymc.py), not run by CI:
# builds the Python package into a venv with PyMC 5 from PyPI, fits the demo
# scenarios (invented data) with the command line and with Python, creates the
# fitted priors as PyMC random variables with `Fit.to_pymc()` inside a
# `pm.Model()`, draws from them with `pm.draw` and compares the drawn quantiles
# with the exact quantiles of the command line's fitted prior (fit.json's
# families and parameters through scipy.stats, installed with PyMC).
# Tolerance: 4 Monte Carlo standard errors of a sample quantile,
# sqrt(p(1-p)/n) / f(q) (the asymptotic variance of a sample quantile).
#
#   scripts/check-pymc-handoff.sh            # venv under a fresh temp folder
#   PYMC_VENV=/tmp/venv-pymc scripts/check-pymc-handoff.sh   # reuse a venv
set -euo pipefail
cd "$(dirname "$0")/.."
venv="${PYMC_VENV:-$(mktemp -d)/venv}"
[ -x "$venv/bin/python" ] || python3 -m venv "$venv"
"$venv/bin/pip" install -q --disable-pip-version-check pymc maturin numpy
cargo build --release --quiet
wheel="$(mktemp -d)"
(cd python && "$venv/bin/maturin" build --release -q -i "$venv/bin/python" --out "$wheel")
"$venv/bin/pip" install -q --disable-pip-version-check --force-reinstall --no-deps "$wheel"/priorsmith-*.whl
out="$(mktemp -d)"
for s in relapse-free-cure two-arm-cure two-arm-hazard-ratio wide-design-r2; do
  target/release/priorsmith fit "demo-data/$s.toml" --out "$out/$s" --quiet
done
cd "$out" && "$venv/bin/python" - "$OLDPWD" "$out" <<'PY'
import json, math, pathlib, sys
import numpy as np
import pymc as pm
import scipy
from scipy import stats
import priorsmith

repo, out = map(pathlib.Path, sys.argv[1:3])
N = 40_000
PROBS = [0.05, 0.25, 0.5, 0.75, 0.95]
print(f"pymc {pm.__version__}, scipy {scipy.__version__}, numpy {np.__version__}; {N} draws per prior")


def reference(family, p):
    """The fitted family as a scipy.stats distribution (our parameterisation)."""
    if family == "normal":
        return stats.norm(loc=p["mean"], scale=p["sd"])
    if family == "lognormal":
        return stats.lognorm(s=p["sdlog"], scale=math.exp(p["meanlog"]))
    if family == "half-normal":
        return stats.halfnorm(scale=p["scale"])
    if family == "gamma":
        return stats.gamma(a=p["shape"], scale=1 / p["rate"])
    raise SystemExit(f"no scipy reference written for family {family}")


worst = 0.0
checked = 0
failures = []
for name in ["relapse-free-cure", "two-arm-cure", "two-arm-hazard-ratio", "wide-design-r2"]:
    rec = json.loads((out / name / "fit.json").read_text())
    fit = priorsmith.fit(repo / "demo-data" / f"{name}.toml")
    assert fit.hyperparameters == rec["hyperparameters"], name
    with pm.Model() as model:
        rvs = fit.to_pymc()
    export = fit.export(to="pymc")
    for v in rvs:
        assert f'"{v}"' in export, (name, v)  # named as in the PyMC export
    targets = []
    for p in rec["prior"]:
        params = dict(p["params"])
        if p.get("code"):
            # R2D2 coefficients (the template's own PyMC lines): the R² share
            # `<name>_r2` has a Beta(a, b) prior.
            r2 = next(v for v in rvs if v.endswith("_r2"))
            targets.append((r2, stats.beta(params["a"], params["b"])))
        else:
            targets.append((p["parameter"], reference(p["family"], params)))
    draws = pm.draw([rvs[t] for t, _ in targets], draws=N, random_seed=20240601)
    for (t, ref), d in zip(targets, draws):
        d = np.asarray(d)
        for q in PROBS:
            x = ref.ppf(q)
            se = math.sqrt(q * (1 - q) / N) / ref.pdf(x)
            z = (np.quantile(d, q) - x) / se
            worst = max(worst, abs(z))
            checked += 1
            if abs(z) > 4:
                failures.append(f"{name} {t} q{q}: drawn {np.quantile(d, q):.6g}, fitted {x:.6g}, z = {z:.2f}")
    print(f"{name}: {len(rvs)} variables ({', '.join(rvs)}); quantiles of {len(targets)} priors checked")
print(f"{checked} quantiles, largest |z| = {worst:.2f} (limit 4)")
for f in failures:
    print("FAIL", f)
sys.exit(1 if failures else 0)
PY
echo "check-pymc-handoff: ok"

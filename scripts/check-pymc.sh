#!/usr/bin/env bash
# Opt-in check of the PyMC export with PyMC itself (not part of `cargo test`).
#
# Exports tests/fixtures/all-families-fit.json (every family we have) to PyMC
# code and to JSON, runs the PyMC code, draws each prior with pm.draw, and checks
# that the fraction of draws below each of priorsmith's quantiles q_p is p within
# 4 binomial standard errors, 4·sqrt(p(1−p)/n) — a distribution-free check.
#
# Usage: scripts/check-pymc.sh [--install]
#   Uses `python3` (or $PYTHON) if it can import pymc. With --install, creates a
#   venv in ${PYMC_VENV:-/tmp/priorsmith-pymc-venv} and runs `pip install pymc`
#   (about 40 s). Without PyMC and without --install it prints SKIP and exits 0.
#   PRIORSMITH_BIN selects the binary (default: cargo build --release).
set -euo pipefail
cd "$(dirname "$0")/.."
PY=${PYTHON:-python3}
if ! "$PY" -c "import pymc" >/dev/null 2>&1; then
  if [ "${1:-}" = "--install" ]; then
    VENV=${PYMC_VENV:-/tmp/priorsmith-pymc-venv}
    [ -x "$VENV/bin/python" ] || python3 -m venv "$VENV"
    "$VENV/bin/python" -c "import pymc" >/dev/null 2>&1 || "$VENV/bin/pip" install --quiet pymc
    PY="$VENV/bin/python"
  else
    echo "SKIP check-pymc: PyMC is not importable by $PY (run with --install to put it in a venv)"
    exit 0
  fi
fi
if [ -z "${PRIORSMITH_BIN:-}" ]; then
  cargo build --release --quiet
  PRIORSMITH_BIN="${CARGO_TARGET_DIR:-target}/release/priorsmith"
fi
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT
cp tests/fixtures/all-families-fit.json "$WORK/fit.json"
"$PRIORSMITH_BIN" export "$WORK" --to pymc --out "$WORK/model.py" -q
"$PRIORSMITH_BIN" export "$WORK" --to json --out "$WORK/prior.json" -q
"$PY" - "$WORK" <<'PYEOF'
import json, math, sys
import numpy as np
import pymc as pm
work = sys.argv[1]
ns = {}
exec(open(f"{work}/model.py").read(), ns)
model = ns["model"]
prior = json.load(open(f"{work}/prior.json"))
n = 40000
bad = 0
print(f"PyMC {pm.__version__}: {n} draws per prior; fraction of draws below priorsmith's quantile q_p")
for k, st in enumerate(prior["priors"]):
    name = st["parameter"]
    x = np.asarray(pm.draw(model[name], draws=n, random_seed=1000 + k))
    worst = 0.0
    for p, q in st["quantiles"].items():
        p = float(p)
        frac = float(np.mean(x <= q))
        z = (frac - p) / math.sqrt(p * (1 - p) / n)
        worst = max(worst, abs(z))
        if abs(z) > 4:
            bad += 1
            print(f"  FAIL {name} ({st['family']}): p={p} fraction={frac:.4f} z={z:.1f}")
    print(f"  {name:<18} {st['family']:<15} max |z| = {worst:.2f}")
if bad:
    sys.exit(f"check-pymc: {bad} quantile checks failed")
print("check-pymc: all priors agree within 4 standard errors")
PYEOF

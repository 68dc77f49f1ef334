#!/usr/bin/env bash
# Opt-in check of the survival exports (not run by `cargo test`):
#   1. fit the survival starters and the two-arm hazard-ratio demo;
#   2. export each with --with-likelihood to Stan and PyMC, compile and sample
#      the prior (pystan/httpstan and PyMC from PyPI, in a venv under /tmp) and
#      compare the implied survival at the belief's horizon with priorsmith's
#      own draws (scripts/check_survival_exports.py);
#   3. when R with brms is installed (Debian: apt-get install r-cran-brms), run
#      brms::validate_prior and make_stancode on the brms export of a
#      mixture-cure and a promotion-time fit with family = weibull() (the
#      `shape` clash).
# Usage: scripts/check-survival-exports.sh [--install]   (--install: create the venv)
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$(pwd)
VENV=${VENV:-/tmp/venv-priorsmith-survival}
if [[ "${1:-}" == "--install" ]]; then
  python3 -m venv "$VENV"
  "$VENV/bin/pip" install -q scipy pymc pystan
fi
PY="$VENV/bin/python"
if ! "$PY" -c "import stan, pymc, scipy" 2>/dev/null; then
  echo "skipped: $VENV lacks pystan, pymc or scipy (run with --install)"; exit 0
fi
cargo build --release -q
BIN=target/release/priorsmith
OUT=$(mktemp -d /tmp/priorsmith-survival-XXXX)
"$PY" -c "import stan, pymc, scipy, httpstan; print('pystan', stan.__version__ if hasattr(stan, '__version__') else '?', 'httpstan', httpstan.__version__, 'pymc', pymc.__version__, 'scipy', scipy.__version__)"
# The parametric starter with a generalised gamma latency (Prentice's Q = -0.4, AFT
# effect, hazard ratio at 12 months), as in tests/survival.rs.
GG="$OUT/parametric-gengamma.toml"
sed -e 's/latency = "weibull".*/latency = "gengamma"\ngengamma_q = -0.4/' \
    -e 's/\[prior.hazard_effect_arm\]/[prior.latency_effect_arm]/' \
    -e 's/mean = { fit = \[-1.5, 1.0\] }/mean = { fit = [-1.0, 1.5] }/' \
    -e 's/quantity = "hazard_ratio".*/quantity = "hazard_ratio"\nhorizon = 12/' \
    model-templates/parametric-survival.toml > "$GG"
for spec in model-templates/mixture-cure.toml model-templates/promotion-time-cure.toml \
            model-templates/parametric-survival.toml model-templates/piecewise-hazard.toml \
            demo-data/two-arm-hazard-ratio.toml "$GG"; do
  name=$(basename "$spec" .toml)
  "$BIN" fit "$spec" --out "$OUT/$name" --quiet
  "$BIN" export "$OUT/$name" --to stan --with-likelihood --out "$OUT/$name/model.stan" --quiet
  "$BIN" export "$OUT/$name" --to pymc --with-likelihood --out "$OUT/$name/model.py" --quiet
  "$BIN" export "$OUT/$name" --to brms --out "$OUT/$name/priors.R" --quiet
  # httpstan writes build files into the working folder: run from $OUT.
  if [[ "$spec" = /* ]]; then sp="$spec"; else sp="$ROOT/$spec"; fi
  (cd "$OUT" && "$PY" "$ROOT/scripts/check_survival_exports.py" "$OUT/$name" "$sp" \
      "$OUT/$name/model.stan" "$OUT/$name/model.py")
done
if command -v Rscript >/dev/null && Rscript -e 'library(brms)' >/dev/null 2>&1; then
  for name in mixture-cure promotion-time-cure; do
    echo "== brms validate_prior: $name"
    Rscript - "$OUT/$name/priors.R" <<'REOF'
suppressMessages(library(brms))
args <- commandArgs(trailingOnly = TRUE)
source(args[1])
d <- data.frame(time = c(3, 12.5, 20, 36, 48), event = c(1, 1, 0, 1, 0))
np <- unique(priors$nlpar)
# The documented formula: every prior's parameter an intercept-only non-linear
# parameter; the response part is a placeholder using all of them.
f <- bf(as.formula(paste("time | cens(1 - event) ~", paste(np, collapse = " + "))),
        nl = TRUE)
for (p in np) f <- f + lf(as.formula(paste(p, "~ 1")))
v <- validate_prior(priors, f, data = d, family = weibull())
cat("validate_prior: ok,", nrow(v), "rows; nlpars", paste(np, collapse = ", "), "\n")
code <- make_stancode(f, data = d, family = weibull(), prior = priors)
cat("make_stancode: ok,", length(strsplit(code, "\n")[[1]]), "lines\n")
REOF
  done
else
  echo "brms check skipped: R with brms not installed (Debian: apt-get install r-cran-brms)"
fi
echo "outputs in $OUT"

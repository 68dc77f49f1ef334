#!/usr/bin/env bash
# Opt-in check of the survival exports (not run by `cargo test`):
#   1. fit the survival starters and the two-arm hazard-ratio demo;
#   2. export each with --with-likelihood to Stan and PyMC, compile and sample
#      the prior (pystan/httpstan and PyMC from PyPI, in a venv under /tmp) and
#      compare the implied survival at the belief's horizon with priorsmith's
#      own draws (scripts/check_survival_exports.py);
#   3. when R with brms is installed (Debian: apt-get install r-cran-brms), run
#      brms::validate_prior and make_stancode on the brms export of a
#      mixture-cure and a promotion-time fit with the documented formula and
#      custom family (docs/brms/cure-families.R), and of the two cure starters
#      with a beta prior on the cured fraction (cure_formula_*_fraction); with
#      BRMS_SAMPLE=1 (needs rstan and Debian's r-cran-bh) also sample the prior
#      in brms and print the implied S(36).
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
# The two cure starters with a beta prior on the cured fraction itself
# ([prior.cure_fraction], both parameters fitted) instead of their cure table.
for name in mixture-cure promotion-time-cure; do
  "$PY" - "model-templates/$name.toml" "$OUT/$name-fraction.toml" <<'PYEOF'
import re, sys
s = open(sys.argv[1]).read()
s = re.sub(r"(?m)^\[prior\.(cure_logit|log_theta)\][^\n]*\n(?:(?!\[)[^\n]+\n)*",
           '[prior.cure_fraction]\nfamily = "beta"\nalpha = { fit = [0.5, 60.0] }\nbeta = { fit = [0.5, 60.0] }\n', s, count=1)
assert "[prior.cure_fraction]" in s
open(sys.argv[2], "w").write(s)
PYEOF
done
for spec in model-templates/mixture-cure.toml model-templates/promotion-time-cure.toml \
            model-templates/parametric-survival.toml model-templates/piecewise-hazard.toml \
            demo-data/two-arm-hazard-ratio.toml "$GG" \
            "$OUT/mixture-cure-fraction.toml" "$OUT/promotion-time-cure-fraction.toml"; do
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
  for name in mixture-cure promotion-time-cure mixture-cure-fraction promotion-time-cure-fraction; do
    kind=mixture; [[ "$name" = promotion-time-cure* ]] && kind=promotion
    echo "== brms: $name with docs/brms/cure-families.R"
    Rscript - "$ROOT/docs/brms/cure-families.R" "$OUT/$name/priors.R" "$kind" "${BRMS_SAMPLE:-0}" <<'REOF'
suppressMessages(library(brms))
args <- commandArgs(trailingOnly = TRUE)
source(args[1]); source(args[2]); kind <- args[3]
d <- data.frame(time = c(3, 12.5, 20, 36, 48), event = c(1L, 1L, 0L, 1L, 0L))
# The documented formula and custom family (docs/survival.md, docs/brms/cure-families.R).
f <- if (kind == "mixture") cure_formula_mixture else cure_formula_promotion
if (any(grepl("cureFraction", priors$nlpar))) {
  # A prior on the cured fraction: the documented formulas with ~ logit(cureFraction)
  # or ~ log(-log(cureFraction)).
  f <- if (kind == "mixture") cure_formula_mixture_fraction else cure_formula_promotion_fraction
}
fam <- if (kind == "mixture") cure_family_mixture else cure_family_promotion
v <- validate_prior(priors, f, data = d, family = fam, stanvars = cure_stanvars)
cat("validate_prior: ok,", nrow(v), "rows; nlpars", paste(unique(v$nlpar[v$nlpar != ""]), collapse = ", "), "\n")
code <- make_stancode(f, data = d, family = fam, prior = priors, stanvars = cure_stanvars)
cat("make_stancode: ok,", length(strsplit(code, "\n")[[1]]), "lines\n")
if (args[4] == "1") {
  # Sample the prior (needs rstan with a C++ toolchain) and report S(36).
  fit <- brm(f, data = d, family = fam, stanvars = cure_stanvars, prior = priors,
             sample_prior = "only", chains = 2, iter = 6000, warmup = 1000, seed = 1,
             refresh = 0, silent = 2)
  dr <- as_draws_df(fit)
  if ("b_cureFraction_Intercept" %in% names(dr)) {
    p0 <- dr$b_cureFraction_Intercept
    a <- if (kind == "mixture") qlogis(p0) else log(-log(p0))
    cat("brms prior cure fraction 10/50/90 %:", format(quantile(p0, c(.1, .5, .9)), digits = 3), "\n")
  } else {
    a <- dr[[grep("^b_(cureLogit|logTheta)_Intercept$", names(dr))]]
  }
  su <- exp(-(36 / exp(dr$b_logScale_Intercept))^dr$b_nlShape_Intercept)
  s <- if (kind == "mixture") plogis(a) + (1 - plogis(a)) * su else exp(-exp(a) * (1 - su))
  cat("brms prior S(36) 10/50/90 %:", format(quantile(s, c(.1, .5, .9)), digits = 3), "\n")
}
REOF
  done
else
  echo "brms check skipped: R with brms not installed (Debian: apt-get install r-cran-brms)"
fi
echo "outputs in $OUT"

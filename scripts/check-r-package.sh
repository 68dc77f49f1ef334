#!/usr/bin/env bash
# Opt-in check of the R package in r/ (not run by CI): installs Debian's R and
# jsonlite when missing, builds the program, then `R CMD build` and
# `R CMD check --no-manual` (which runs r/tests/ against the program through
# PRIORSMITH_BIN). Passes only without errors or warnings.
set -euo pipefail
cd "$(dirname "$0")/.."
if ! command -v R >/dev/null 2>&1 || ! Rscript -e 'library(jsonlite)' >/dev/null 2>&1; then
  apt-get update -qq
  DEBIAN_FRONTEND=noninteractive apt-get install -y -qq r-base-core r-cran-jsonlite >/dev/null
fi
cargo build --release --quiet
export PRIORSMITH_BIN="$PWD/target/release/priorsmith"
work="$(mktemp -d)"
cp -r r "$work/priorsmith"
(cd "$work" && R CMD build --no-build-vignettes priorsmith >/dev/null)
tarball="$(ls "$work"/priorsmith_*.tar.gz)"
(cd "$work" && _R_CHECK_FORCE_SUGGESTS_=false R CMD check --no-manual "$tarball") | tee "$work/check.log"
if grep -Eq "^Status: .*(ERROR|WARNING)" "$work/check.log"; then
  echo "check-r-package: errors or warnings (see $work/priorsmith.Rcheck)"
  exit 1
fi
echo "check-r-package: ok"

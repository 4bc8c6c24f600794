#!/usr/bin/env bash
# The optional SEOBNRv5PHM/SEOBNRv5HM models: pyseobnr into the active Python environment.
# pyseobnr needs pygsl-lite, a source package that builds against the GSL headers (Debian's libgsl-dev, installed here
# with apt-get when missing and run as root) and does not build under setuptools 80 or newer (a build constraint).
# Run it from the project's folder with its virtual environment active: bash scripts/install_seobnr.sh
set -euo pipefail
cd "$(dirname "$0")/.."
if ! [ -e /usr/include/gsl/gsl_vector.h ]; then
  if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null; then
    echo "install_seobnr: installing libgsl-dev with apt-get"
    DEBIAN_FRONTEND=noninteractive apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends libgsl-dev >/dev/null
  else
    echo "install_seobnr: the GSL headers are missing; install Debian's libgsl-dev (as root), then run this again" >&2
    exit 2
  fi
fi
constraints=$(mktemp)
trap 'rm -f "$constraints"' EXIT
echo "setuptools<80" > "$constraints"
began=$(date +%s)
PIP_CONSTRAINT="$constraints" pip install -q ".[seobnr]"
echo "install_seobnr: pyseobnr installed in $(( $(date +%s) - began )) s (a first build takes some 6 minutes on 2 cores; pip keeps the wheels)"

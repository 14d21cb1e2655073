#!/usr/bin/env bash
# Regenerate the spdep reference fixtures and the NC TopoJSON.
# Installs R, spdep, spData, sf and jsonlite from Debian's packages when they are missing
# (needs root / sudo on Debian or Ubuntu), then runs the R script and the converter.
set -euo pipefail
cd "$(dirname "$0")/../.."

have_r_packages() {
  command -v Rscript >/dev/null 2>&1 &&
    Rscript -e 'quit(status = !all(sapply(c("spdep", "spData", "sf", "jsonlite"), requireNamespace, quietly = TRUE)))' >/dev/null 2>&1
}

if ! have_r_packages; then
  SUDO=""
  if [ "$(id -u)" -ne 0 ]; then SUDO="sudo"; fi
  $SUDO apt-get update
  $SUDO env DEBIAN_FRONTEND=noninteractive apt-get install -y --no-install-recommends \
    r-base-core r-cran-spdep r-cran-spdata r-cran-sf r-cran-jsonlite
fi

Rscript scripts/reference/spdep-reference.R .
Rscript scripts/reference/chisq-reference.R .
Rscript scripts/reference/spatial-markov-reference.R .
Rscript scripts/reference/spatial-markov-panel-reference.R .
Rscript scripts/reference/distributions-reference.R .
Rscript scripts/reference/rates-hotspots-reference.R .
Rscript scripts/reference/residuals-reference.R .
Rscript scripts/reference/crosswalk-reference.R .
node scripts/reference/nc-to-topojson.mjs tests/fixtures/nc/nc.geojson tests/fixtures/nc/nc.topojson
echo "Fixtures regenerated. Review 'git diff --stat tests/fixtures' before committing."

#!/usr/bin/env Rscript
# Reference values for Tessera's regression residual diagnostics (lib/spatial
# regression.ts and the stats CLI's residuals command): R's lm (coefficients,
# standard errors, t, p, R²), spdep's lm.morantest (Moran's I of the residuals
# with the exact moments of Cliff & Ord 1981) and lm.LMtests(test = "all") (the
# five Lagrange multiplier tests of Anselin 1988 and Anselin, Bera, Florax & Yoon
# 1996), on the North Carolina SIDS data shipped with the spData package
# (counties as regions, queen contiguity by poly2nb, styles W and B).
#
# Run from the repository root (see scripts/reference/README.md):
#   Rscript scripts/reference/residuals-reference.R [repo-root]
#
# Writes
#   tests/fixtures/nc-sids/residuals.csv    the data: FIPSNO, NAME, SIDR79, NWP79, SIDR74
#   tests/fixtures/nc-sids/residuals.json   lm, lm.morantest and lm.LMtests per model and style
# The boundaries are tests/fixtures/nc/nc.topojson; this script stops unless
# spData's sids.shp has the same counties in the same order with the same
# coordinates (nc-sids-common.R).

suppressPackageStartupMessages({
  library(sf)
  library(spdep)
  library(jsonlite)
})

args <- commandArgs(trailingOnly = TRUE)
root <- if (length(args) >= 1) args[[1]] else "."
source(file.path(root, "scripts", "reference", "exact-json.R"))
source(file.path(root, "scripts", "reference", "nc-sids-common.R"))
out_dir <- file.path(root, "tests", "fixtures", "nc-sids")
dir.create(out_dir, recursive = TRUE, showWarnings = FALSE)

# ---------------------------------------------------------------- data ----
sids <- read_nc_sids(root)
ids <- as.integer(sids$FIPSNO)
n <- length(ids)

# SIDS deaths per 1,000 live births 1979-84, the non-white share of those births,
# and the same rate for 1974-78.
SIDR79 <- 1000 * as.numeric(sids$SID79) / as.numeric(sids$BIR79)
NWP79 <- as.numeric(sids$NWBIR79) / as.numeric(sids$BIR79)
SIDR74 <- 1000 * as.numeric(sids$SID74) / as.numeric(sids$BIR74)

csv <- data.frame(
  FIPSNO = ids,
  NAME = as.character(sids$NAME),
  SIDR79 = sprintf("%.17g", SIDR79),
  NWP79 = sprintf("%.17g", NWP79),
  SIDR74 = sprintf("%.17g", SIDR74),
  stringsAsFactors = FALSE
)
csv_path <- file.path(out_dir, "residuals.csv")
write.csv(csv, csv_path, row.names = FALSE, quote = FALSE)
back <- read.csv(csv_path)
stopifnot(
  identical(back$FIPSNO, ids), identical(as.numeric(back$SIDR79), SIDR79),
  identical(as.numeric(back$NWP79), NWP79), identical(as.numeric(back$SIDR74), SIDR74)
)
message("wrote ", csv_path)
data <- data.frame(SIDR79 = SIDR79, NWP79 = NWP79, SIDR74 = SIDR74)

# ----------------------------------------------------------- neighbours ----
nb <- poly2nb(sids, queen = TRUE)
stopifnot(all(card(nb) > 0))
listws <- list(W = nb2listw(nb, style = "W"), B = nb2listw(nb, style = "B"))

# Cliff & Ord (1981) moments written out with dense matrices, independent of
# lm.morantest's code (which works on the symmetrised weights ½(W + W')): the
# script stops unless both agree, so the fixture's numbers are those of the formula
# the engine documents, for non-symmetric W too.
dense_moments <- function(X, Wd) {
  nn <- nrow(X)
  k <- ncol(X)
  M <- diag(nn) - X %*% solve(crossprod(X)) %*% t(X)
  MW <- M %*% Wd
  S0 <- sum(Wd)
  E <- (nn / S0) * sum(diag(MW)) / (nn - k)
  V <- (nn / S0)^2 * (sum(diag(MW %*% M %*% t(Wd))) + sum(diag(MW %*% MW)) + sum(diag(MW))^2) / ((nn - k) * (nn - k + 2)) - E^2
  c(E, V)
}

one <- function(formula, style) {
  lw <- listws[[style]]
  model <- lm(formula, data = data)
  s <- summary(model)
  co <- s$coefficients
  greater <- lm.morantest(model, lw, alternative = "greater")
  two <- lm.morantest(model, lw, alternative = "two.sided")
  stopifnot(identical(unname(greater$estimate), unname(two$estimate)))
  dm <- dense_moments(model.matrix(model), listw2mat(lw))
  stopifnot(
    isTRUE(all.equal(dm[1], unname(greater$estimate[2]), tolerance = 1e-12)),
    isTRUE(all.equal(dm[2], unname(greater$estimate[3]), tolerance = 1e-12))
  )
  lm_tests <- suppressWarnings(lm.LMtests(model, lw, test = "all"))
  lagrange <- lapply(lm_tests, function(t) {
    list(
      statistic = unname(t$statistic),
      df = as.integer(t$parameter),
      pSpdep = unname(t$p.value),
      pUpper = pchisq(unname(t$statistic), unname(t$parameter), lower.tail = FALSE)
    )
  })
  list(
    style = style,
    n = length(residuals(model)),
    k = ncol(model.matrix(model)),
    coefficients = list(
      names = I(c("intercept", rownames(co)[-1])),
      estimate = I(unname(co[, 1])),
      standardError = I(unname(co[, 2])),
      t = I(unname(co[, 3])),
      p = I(unname(co[, 4]))
    ),
    rSquared = s$r.squared,
    adjustedRSquared = s$adj.r.squared,
    sigma2 = s$sigma^2,
    residuals = I(unname(residuals(model))),
    fitted = I(unname(fitted(model))),
    moran = list(
      I = unname(greater$estimate[1]),
      expectedI = unname(greater$estimate[2]),
      variance = unname(greater$estimate[3]),
      z = unname(greater$statistic),
      pGreater = unname(greater$p.value),
      pTwoSided = unname(two$p.value)
    ),
    lagrange = list(
      error = lagrange$LMerr,
      lag = lagrange$LMlag,
      robustError = lagrange$RLMerr,
      robustLag = lagrange$RLMlag,
      combined = lagrange$SARMA
    )
  )
}

models <- list(
  simple = list(value = "SIDR79", covariates = I("NWP79"), formula = SIDR79 ~ NWP79),
  two = list(value = "SIDR79", covariates = I(c("NWP79", "SIDR74")), formula = SIDR79 ~ NWP79 + SIDR74)
)
results <- lapply(models, function(m) {
  list(
    value = m$value,
    covariates = m$covariates,
    formula = paste(deparse(m$formula), collapse = ""),
    W = one(m$formula, "W"),
    B = one(m$formula, "B")
  )
})

# ---------------------------------------------------------------- meta ----
meta <- c(
  list(
    generator = "scripts/reference/residuals-reference.R",
    generated = format(Sys.time(), "%Y-%m-%dT%H:%M:%SZ", tz = "UTC")
  ),
  versions(c("spdep", "spData", "sf")),
  list(
    source = "system.file('shapes/sids.shp', package = 'spData'): North Carolina SIDS data, 100 counties (Symons, Grimson & Yuan 1983; Cressie & Read 1985; Cressie & Chan 1989). SIDR79 = 1000 * SID79 / BIR79, NWP79 = NWBIR79 / BIR79, SIDR74 = 1000 * SID74 / BIR74. The polygons are identical to sf's nc.shp, committed as tests/fixtures/nc/nc.topojson (checked by this script).",
    licence = "spData is distributed under CC0; its README says sids.* derive, by permission, from the SAL data files prepared by Luc Anselin, provided as is, without warranties, with the request to give proper credit when used in publications.",
    idProperty = "FIPSNO",
    regionOrder = "shapefile order; every per-region array follows the ids array",
    neighbours = "poly2nb(sids, queen = TRUE), default snap; nb2listw style W and B",
    notes = I(c(
      "coefficients: summary(lm(formula))$coefficients (estimate, standard error, t, two-sided p from Student t with n - k df); sigma2 = summary(...)$sigma^2 = e'e/(n - k).",
      "moran: lm.morantest(model, listw, alternative = 'greater') for I, expectedI, variance, z and pGreater; alternative = 'two.sided' for pTwoSided. lm.morantest works on listw2U (the symmetrised weights); the script checks that its expectation and variance equal the Cliff & Ord (1981) forms E = (n/S0) tr(MW)/(n-k), Var = (n/S0)^2 [tr(MWMW') + tr(MWMW) + tr(MW)^2]/((n-k)(n-k+2)) - E^2 computed with dense matrices, to 1e-12.",
      "lagrange: lm.LMtests(model, listw, test = 'all'), keys error = LMerr, lag = LMlag, robustError = RLMerr, robustLag = RLMlag, combined = SARMA; sigma2 there is e'e/n and T = tracew(listw) = tr(W'W + WW). pSpdep is spdep's 1 - pchisq(statistic, df), which loses relative precision for tiny p; pUpper is pchisq(statistic, df, lower.tail = FALSE). lm.LMtests warns for style B (not row-standardised); the warning is suppressed."
    ))
  )
)

write_exact_json(list(
  meta = meta,
  ids = ids,
  names = as.character(sids$NAME),
  data = list(SIDR79 = SIDR79, NWP79 = NWP79, SIDR74 = SIDR74),
  models = results
), file.path(out_dir, "residuals.json"))

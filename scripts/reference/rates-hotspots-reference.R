#!/usr/bin/env Rscript
# Reference values for Tessera's rate and hot-spot statistics (lib/spatial
# empirical-bayes.ts and local-getis-ord.ts, and the stats CLI's rate-moran, rates
# and hotspots commands), computed with R's spdep on the North Carolina SIDS data
# shipped with the spData package (counties as regions, BIR74 births as the
# population, SID74 sudden infant deaths as the events, queen contiguity by poly2nb).
#
# Run from the repository root (see scripts/reference/README.md):
#   Rscript scripts/reference/rates-hotspots-reference.R [repo-root]
#
# Writes
#   tests/fixtures/nc-sids/nc-sids.csv             the data: FIPSNO, NAME, BIR74, SID74, SIDR74
#   tests/fixtures/nc-sids/rates-hotspots.json     spdep's EBImoran.mc, EBest, EBlocal, localG
# The boundaries are tests/fixtures/nc/nc.topojson (written from sf's nc.shp by
# spdep-reference.R and nc-to-topojson.mjs); this script stops unless spData's
# sids.shp has the same counties in the same order with the same coordinates.

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

SEED <- 20261204L   # set.seed() value before each EBImoran.mc call
NSIM <- 9999L       # EBImoran.mc permutations

# ---------------------------------------------------------------- data ----
sids <- read_nc_sids(root)
ids <- as.integer(sids$FIPSNO)
n <- length(ids)
events <- as.numeric(sids$SID74)
births <- as.numeric(sids$BIR74)
stopifnot(all(events >= 0), all(births > 0), all(events <= births))

# Hot spots are computed on the raw rate per 1,000 births, written to the CSV at full precision.
rate_per_1000 <- 1000 * events / births

csv <- data.frame(
  FIPSNO = ids,
  NAME = as.character(sids$NAME),
  BIR74 = as.integer(births),
  SID74 = as.integer(events),
  SIDR74 = sprintf("%.17g", rate_per_1000),
  stringsAsFactors = FALSE
)
csv_path <- file.path(out_dir, "nc-sids.csv")
write.csv(csv, csv_path, row.names = FALSE, quote = FALSE)
back <- read.csv(csv_path)
stopifnot(identical(as.numeric(back$SIDR74), rate_per_1000), identical(back$FIPSNO, ids))
message("wrote ", csv_path)

# ----------------------------------------------------------- neighbours ----
nb <- poly2nb(sids, queen = TRUE)
stopifnot(all(card(nb) > 0))
nb_lists <- lapply(seq_len(n), function(i) I(sort(ids[nb[[i]]])))
names(nb_lists) <- as.character(ids)
lw_W <- nb2listw(nb, style = "W")
lw_B <- nb2listw(nb, style = "B")

# ------------------------------------------------- EB Moran (Assuncao-Reis) ----
eb_moran <- function(lw) {
  set.seed(SEED)
  r <- suppressMessages(EBImoran.mc(events, births, lw, nsim = NSIM, alternative = "greater"))
  sims <- r$res[seq_len(NSIM)]
  list(
    observed = unname(r$statistic),
    observedRank = unname(r$parameter),
    pGreaterSpdep = unname(r$p.value),
    simulatedMean = mean(sims),
    simulatedSd = sd(sims),
    countSimGreaterOrEqual = sum(sims >= r$statistic),
    z = I(as.numeric(r$z))
  )
}
ebimoran <- list(nsim = NSIM, seed = SEED, W = eb_moran(lw_W), B = eb_moran(lw_B))

# ---------------------------------------------------- EB rates (Marshall) ----
ebg <- EBest(events, births)
ebest <- list(
  raw = as.numeric(ebg$raw),
  estmm = as.numeric(ebg$estmm),
  a = attr(ebg, "parameters")$a,
  b = attr(ebg, "parameters")$b
)
# EBlocal's sixth argument chooses the centre of the local variance: FALSE (spdep's
# default) each neighbour's own local rate, TRUE the county's local rate.
eb_local <- function(centre_on_own_local_rate) {
  r <- EBlocal(events, births, nb, NULL, NULL, centre_on_own_local_rate)
  list(est = as.numeric(r$est), a = as.numeric(attr(r, "parameters")$a), m = as.numeric(attr(r, "parameters")$m))
}
eblocal <- list(eachLocalRate = eb_local(FALSE), localRate = eb_local(TRUE))

# ------------------------------------------------------------- local G ----
local_g <- function(star, style) {
  lw <- nb2listw(if (star) include.self(nb) else nb, style = style)
  g <- localG(rate_per_1000, lw, return_internals = TRUE)
  internals <- attr(g, "internals")
  prefix <- if (star) "G*i" else "Gi"
  list(
    includeSelf = star,
    style = style,
    z = as.numeric(g),
    G = unname(internals[, prefix]),
    E = unname(internals[, paste0("E(", prefix, ")")]),
    V = unname(internals[, paste0("V(", prefix, ")")]),
    p = unname(internals[, paste0("Pr(z != E(", prefix, "))")])
  )
}
localg <- list(
  star_B = local_g(TRUE, "B"),
  nostar_B = local_g(FALSE, "B"),
  star_W = local_g(TRUE, "W"),
  nostar_W = local_g(FALSE, "W")
)

# Hot and cold spots: two-sided normal p of localG's z, adjusted by R's p.adjust
# ("none", "bonferroni", "BH" = false discovery rate) over the 100 counties, at 0.05.
ALPHA <- 0.05
classes_of <- function(g) {
  out <- list()
  for (m in c("none", "bonferroni", "BH")) {
    adj <- p.adjust(2 * pnorm(-abs(g$z)), method = m)
    out[[m]] <- ifelse(adj <= ALPHA, ifelse(g$z > 0, "hot", "cold"), "not-significant")
  }
  out
}
hotspot_classes <- list(alpha = ALPHA, star_B = classes_of(localg$star_B), nostar_B = classes_of(localg$nostar_B))

# ---------------------------------------------------------------- meta ----
meta <- c(
  list(
    generator = "scripts/reference/rates-hotspots-reference.R",
    generated = format(Sys.time(), "%Y-%m-%dT%H:%M:%SZ", tz = "UTC"),
    GEOS = unname(sf_extSoftVersion()["GEOS"])
  ),
  versions(c("spdep", "spData", "sf")),
  list(
    source = "system.file('shapes/sids.shp', package = 'spData'): North Carolina SIDS data, 100 counties, SID74 sudden infant deaths and BIR74 live births 1974-78 (Symons, Grimson & Yuan 1983; Cressie & Read 1985; Cressie & Chan 1989). The polygons are identical to sf's nc.shp, committed as tests/fixtures/nc/nc.topojson (checked by this script).",
    licence = "spData is distributed under CC0; its README says sids.* derive, by permission, from the SAL data files prepared by Luc Anselin, provided as is, without warranties, with the request to give proper credit when used in publications.",
    idProperty = "FIPSNO",
    regionOrder = "shapefile order; every per-region array follows the ids array",
    seed = SEED,
    neighbours = "poly2nb(sids, queen = TRUE), default snap",
    notes = c(
      "EBImoran.mc(n = SID74, x = BIR74, listw, nsim, alternative = 'greater') after set.seed(seed): z = (p - b)/sqrt(a + b/x) with a and b from EBest (a clamped at 0); the statistic is Moran's I of z (mean subtracted). The permutation reference is one stream of R's generator: compare only the observed statistic exactly and the distribution's mean and sd within sampling error. spdep's Monte Carlo p is max(M, 1)/(nsim + 1) without ties.",
      "EBest(family = 'poisson'): Marshall (1991) method of moments, a = max(0, s2 - b/mean(x)), estmm = b + a(p - b)/(a + b/x).",
      "EBlocal(ri = SID74, ni = BIR74, nb): neighbourhoods are include.self(nb), the county and its queen neighbours. With its sixth argument FALSE (the default; key eachLocalRate) the local variance centres each neighbour j on ITS OWN local rate m_j; with TRUE (key localRate) on the county's local rate m_i. Both are recorded.",
      "localG(SIDR74, listw, return_internals = TRUE) with SIDR74 = 1000 * SID74 / BIR74: star_* use include.self(nb) (Gi*), nostar_* the plain list (Gi); styles B and W.",
      "hotspotClasses: for localG star_B and nostar_B, p = 2 * pnorm(-|z|) adjusted by p.adjust(method = none, bonferroni or BH) over all counties; hot when adjusted p <= alpha and z > 0, cold when z < 0, else not-significant."
    )
  )
)

write_exact_json(list(
  meta = meta,
  ids = ids,
  names = as.character(sids$NAME),
  events = as.integer(events),
  population = as.integer(births),
  rate = rate_per_1000,
  neighbours = nb_lists,
  EBImoran = ebimoran,
  EBest = ebest,
  EBlocal = eblocal,
  localG = localg,
  hotspotClasses = hotspot_classes
), file.path(out_dir, "rates-hotspots.json"))

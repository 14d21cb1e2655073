#!/usr/bin/env Rscript
# Reference values for Tessera's spatial statistics engine (lib/spatial), computed
# with R's spdep on the North Carolina county polygons shipped with the sf package.
#
# Run from the repository root (see scripts/reference/README.md):
#   Rscript scripts/reference/spdep-reference.R [repo-root]
#
# Writes
#   tests/fixtures/nc/nc.geojson            the 100 NC counties, full-precision coordinates
#   tests/fixtures/spdep/nc-data.json       ids and the analysed variables
#   tests/fixtures/spdep/nc-neighbours.json queen / rook (poly2nb) and k = 4 nearest neighbours
#   tests/fixtures/spdep/nc-global.json     S0/S1/S2, Moran's I (+ moran.mc), Geary's C, General G
#   tests/fixtures/spdep/nc-local.json      localmoran (conditional TRUE/FALSE), localG (Gi*, Gi),
#                                           localmoran_perm
# Every number that the Jest comparison tests expect comes from these files; nothing
# is typed in by hand.

suppressPackageStartupMessages({
  library(sf)
  library(spdep)
  library(jsonlite)
})

args <- commandArgs(trailingOnly = TRUE)
root <- if (length(args) >= 1) args[[1]] else "."
spdep_dir <- file.path(root, "tests", "fixtures", "spdep")
nc_dir <- file.path(root, "tests", "fixtures", "nc")
dir.create(spdep_dir, recursive = TRUE, showWarnings = FALSE)
dir.create(nc_dir, recursive = TRUE, showWarnings = FALSE)

SEED <- 20240607L           # set.seed() value used before every Monte Carlo call
ID_PROPERTY <- "FIPSNO"     # stable numeric county id (FIPS code as a number, e.g. 37001)

# ---------------------------------------------------------------- data ----
nc_path <- system.file("shape/nc.shp", package = "sf")
stopifnot(nzchar(nc_path))
nc <- st_read(nc_path, quiet = TRUE)
ids <- as.integer(nc[[ID_PROPERTY]])
stopifnot(length(ids) == 100L, !anyDuplicated(ids))
n <- length(ids)

variables <- list(
  sid74 = list(label = "SID74/BIR74", x = nc$SID74 / nc$BIR74),
  sid79 = list(label = "SID79/BIR79", x = nc$SID79 / nc$BIR79),
  nwbir74 = list(label = "NWBIR74/BIR74", x = nc$NWBIR74 / nc$BIR74)
)

# ---------------------------------------------------------- JSON output ----
# Doubles at 17 significant digits with a read-back check (exact-json.R).
source(file.path(root, "scripts", "reference", "exact-json.R"))
write_fixture <- function(obj, name, pretty = TRUE) write_exact_json(obj, file.path(spdep_dir, name), pretty)

# ------------------------------------------------------------ neighbours ----
nb_to_lists <- function(nb) {
  out <- lapply(seq_along(nb), function(i) {
    j <- nb[[i]]
    j <- j[j > 0L]
    I(sort(ids[j]))  # I(): stays a JSON array even with a single neighbour
  })
  names(out) <- as.character(ids)
  out
}
nb_edges <- function(nb) {
  e <- do.call(rbind, lapply(seq_along(nb), function(i) {
    j <- nb[[i]]
    j <- j[j > 0L]
    if (length(j) == 0L) return(NULL)
    cbind(ids[i], ids[j])
  }))
  e[order(e[, 1], e[, 2]), , drop = FALSE]
}

# poly2nb with its default snap = sqrt(.Machine$double.eps) (coordinates within snap
# are treated as the same point).
nb_queen <- poly2nb(nc, queen = TRUE)
nb_rook <- poly2nb(nc, queen = FALSE)
poly2nb_snap <- eval(formals(poly2nb)$snap)

# k nearest neighbours on centroids. Four variants so that the tests can tell which
# lists depend on how centroids and distances are computed.
sf_use_s2(FALSE)
cent_planar <- suppressWarnings(st_coordinates(st_centroid(st_geometry(nc))))  # GEOS, planar in degrees
sf_use_s2(TRUE)
cent_s2 <- st_coordinates(st_centroid(st_geometry(nc)))                        # s2, spherical
colnames(cent_planar) <- colnames(cent_s2) <- c("lon", "lat")

knn_variants <- list(
  planar_centroid_greatcircle = knn2nb(knearneigh(cent_planar, k = 4, longlat = TRUE)),
  planar_centroid_euclidean = knn2nb(knearneigh(cent_planar, k = 4, longlat = FALSE)),
  s2_centroid_greatcircle = knn2nb(knearneigh(cent_s2, k = 4, longlat = TRUE)),
  s2_centroid_euclidean = knn2nb(knearneigh(cent_s2, k = 4, longlat = FALSE))
)
KNN_STATS_VARIANT <- "planar_centroid_greatcircle"
nb_k4 <- knn_variants[[KNN_STATS_VARIANT]]

knn_lists <- lapply(knn_variants, nb_to_lists)
robust_ids <- ids[vapply(seq_len(n), function(i) {
  ref <- knn_lists[[1]][[i]]
  all(vapply(knn_lists, function(l) identical(l[[i]], ref), logical(1)))
}, logical(1))]

neighbour_sets <- list(queen = nb_queen, rook = nb_rook, k4 = nb_k4)

neighbours_fixture <- list(
  meta = NULL, # filled below
  idProperty = ID_PROPERTY,
  ids = ids,
  queen = list(
    call = "poly2nb(nc, queen = TRUE)",
    snap = poly2nb_snap,
    nLinks = sum(card(nb_queen)),
    cardinalities = card(nb_queen),
    neighbours = nb_to_lists(nb_queen)
  ),
  rook = list(
    call = "poly2nb(nc, queen = FALSE)",
    snap = poly2nb_snap,
    nLinks = sum(card(nb_rook)),
    cardinalities = card(nb_rook),
    neighbours = nb_to_lists(nb_rook)
  ),
  k4 = list(
    note = paste(
      "knn2nb(knearneigh(centroids, k = 4, longlat)). spdep's longlat = TRUE distance is its",
      "great-circle approximation in km (C function gcdist, WGS-84 ellipsoid flattening);",
      "longlat = FALSE is Euclidean distance on raw degrees. Centroids: 'planar' = GEOS centroid",
      "of the lon/lat coordinates treated as planar (sf_use_s2(FALSE)); 's2' = spherical centroid",
      "(sf_use_s2(TRUE)). knn2nb lists are not symmetric (sym = FALSE)."
    ),
    statsVariant = KNN_STATS_VARIANT,
    centroids = list(
      planar = list(lon = unname(cent_planar[, 1]), lat = unname(cent_planar[, 2])),
      s2 = list(lon = unname(cent_s2[, 1]), lat = unname(cent_s2[, 2]))
    ),
    variants = lapply(knn_variants, function(nb) list(neighbours = nb_to_lists(nb))),
    idsWithSameListInAllVariants = robust_ids
  )
)

# ---------------------------------------------------------------- weights ----
weight_sets <- list()
for (nm in names(neighbour_sets)) {
  for (style in c("W", "B")) {
    weight_sets[[paste0(nm, "_", style)]] <- list(
      neighbours = nm, style = style,
      listw = nb2listw(neighbour_sets[[nm]], style = style)
    )
  }
}

# ------------------------------------------------------------------ global ----
htest_row <- function(h) {
  list(
    # as.vector(): globalG.test returns 1 x 1 matrices (t(x) %*% lag), which would
    # otherwise be written as nested arrays.
    statistic = as.vector(h$statistic),
    pValue = as.vector(h$p.value),
    estimate = lapply(as.list(h$estimate), as.vector),
    alternative = h$alternative
  )
}

mc_summary <- function(mc, observed, nsim, seed) {
  sims <- mc$res[seq_len(nsim)]
  list(
    nsim = nsim, seed = seed,
    statistic = unname(mc$statistic),
    pValue = unname(mc$p.value),
    alternative = mc$alternative,
    observed = observed,
    countSimGreaterOrEqual = sum(sims >= observed),
    countSimLessOrEqual = sum(sims <= observed),
    simMean = mean(sims),
    simSd = sd(sims)
  )
}

has_arg <- function(f, a) a %in% names(formals(f))

global_results <- list()
for (wn in names(weight_sets)) {
  ws <- weight_sets[[wn]]
  lw <- ws$listw
  sc <- spweights.constants(lw)
  entry <- list(
    neighbours = ws$neighbours, style = ws$style,
    constants = list(n = sc$n, S0 = sc$S0, S1 = sc$S1, S2 = sc$S2),
    variables = list()
  )
  for (vn in names(variables)) {
    x <- variables[[vn]]$x
    mi <- moran(x, lw, n = length(x), S0 = Szero(lw))
    v <- list(
      moran = list(I = mi$I, K = mi$K),
      moranTest = list(),
      geary = list(C = geary(x, lw, n = length(x), n1 = length(x) - 1, S0 = Szero(lw))$C),
      gearyTest = list(),
      moranMc = list(),
      gearyMc = list()
    )
    for (rnd in c(TRUE, FALSE)) {
      key <- if (rnd) "randomisation" else "normality"
      for (alt in c("greater", "less", "two.sided")) {
        v$moranTest[[key]][[alt]] <- htest_row(moran.test(x, lw, randomisation = rnd, alternative = alt))
        v$gearyTest[[key]][[alt]] <- htest_row(geary.test(x, lw, randomisation = rnd, alternative = alt))
      }
    }
    for (nsim in c(999L, 9999L)) {
      for (alt in c("greater", "less", "two.sided")) {
        set.seed(SEED)
        mc <- moran.mc(x, lw, nsim = nsim, alternative = alt)
        v$moranMc[[paste0("nsim", nsim)]][[alt]] <- mc_summary(mc, mi$I, nsim, SEED)
        set.seed(SEED)
        gmc <- geary.mc(x, lw, nsim = nsim, alternative = alt)
        v$gearyMc[[paste0("nsim", nsim)]][[alt]] <- mc_summary(gmc, v$geary$C, nsim, SEED)
      }
    }
    if (ws$style == "B") {
      g <- list()
      for (alt in c("greater", "less", "two.sided")) {
        g[[alt]] <- htest_row(globalG.test(x, lw, alternative = alt))
      }
      v$globalGTest <- g
      if (has_arg(globalG.test, "B1correct")) {
        v$globalGTestB1correctFALSE <- htest_row(globalG.test(x, lw, alternative = "greater", B1correct = FALSE))
      }
    }
    entry$variables[[vn]] <- v
  }
  global_results[[wn]] <- entry
}

# ------------------------------------------------------------------- local ----
lm_columns <- function(m) {
  m <- as.matrix(m)
  list(
    Ii = unname(m[, 1]), EIi = unname(m[, 2]), VarIi = unname(m[, 3]),
    ZIi = unname(m[, 4]), p = unname(m[, 5]), pColumn = colnames(m)[5]
  )
}

local_results <- list()
for (wn in names(weight_sets)) {
  ws <- weight_sets[[wn]]
  lw <- ws$listw
  entry <- list(neighbours = ws$neighbours, style = ws$style, variables = list())
  for (vn in names(variables)) {
    x <- variables[[vn]]$x
    v <- list()
    for (cond in c(TRUE, FALSE)) {
      key <- if (cond) "conditional" else "total"
      two <- localmoran(x, lw, conditional = cond, alternative = "two.sided")
      gre <- localmoran(x, lw, conditional = cond, alternative = "greater")
      r <- lm_columns(two)
      r$pTwoSided <- r$p
      r$pTwoSidedColumn <- r$pColumn
      r$p <- NULL
      r$pColumn <- NULL
      r$pGreater <- unname(as.matrix(gre)[, 5])
      r$pGreaterColumn <- colnames(gre)[5]
      # "pysal" quadrant: sign of z_i and of its lag (the definition in docs/statistics.md);
      # "mean": x against mean(x) and lag(x) against mean(lag(x)).
      r$quadrantPysal <- as.character(attr(two, "quadr")$pysal)
      r$quadrantMean <- as.character(attr(two, "quadr")$mean)
      v$localmoran[[key]] <- r
    }
    entry$variables[[vn]] <- v
  }
  local_results[[wn]] <- entry
}

# Local G: Gi* with include.self (binary and row-standardised), and Gi without self.
localg_results <- list()
for (nm in names(neighbour_sets)) {
  nb <- neighbour_sets[[nm]]
  nb_star <- include.self(nb)
  for (style in c("B", "W")) {
    for (star in c(TRUE, FALSE)) {
      lw <- nb2listw(if (star) nb_star else nb, style = style)
      key <- paste0(nm, "_", style, if (star) "_star" else "_nostar")
      e <- list(neighbours = nm, style = style, includeSelf = star, variables = list())
      for (vn in names(variables)) {
        x <- variables[[vn]]$x
        lg <- localG(x, lw, return_internals = TRUE)
        internals <- attr(lg, "internals")
        r <- list(z = as.numeric(lg))
        if (!is.null(internals)) {
          for (cn in colnames(internals)) r[[cn]] <- unname(internals[, cn])
        }
        e$variables[[vn]] <- r
      }
      localg_results[[key]] <- e
    }
  }
}

# Conditional permutation local Moran (seeded), for sampling-tolerance comparisons.
perm_results <- list()
PERM_NSIM <- 9999L
for (wn in c("queen_W", "queen_B")) {
  lw <- weight_sets[[wn]]$listw
  e <- list(nsim = PERM_NSIM, seed = SEED, variables = list())
  for (vn in names(variables)) {
    x <- variables[[vn]]$x
    set.seed(SEED)
    lp <- localmoran_perm(x, lw, nsim = PERM_NSIM, alternative = "two.sided")
    m <- as.matrix(lp)
    cols <- list()
    for (cn in colnames(m)) cols[[cn]] <- unname(m[, cn])
    e$variables[[vn]] <- list(columns = colnames(m), values = cols)
  }
  perm_results[[wn]] <- e
}

# -------------------------------------------------------------------- meta ----
ext <- sf_extSoftVersion()
arg_default <- function(f, a) {
  d <- formals(f)[[a]]
  if (is.null(d)) return(NULL)
  paste(deparse(d), collapse = "")
}
meta <- list(
  generator = "scripts/reference/spdep-reference.R",
  generated = format(Sys.time(), "%Y-%m-%dT%H:%M:%SZ", tz = "UTC"),
  R = R.version.string,
  spdep = as.character(packageVersion("spdep")),
  sf = as.character(packageVersion("sf")),
  jsonlite = as.character(packageVersion("jsonlite")),
  GEOS = unname(ext["GEOS"]), GDAL = unname(ext["GDAL"]), PROJ = unname(ext["PROJ"]),
  source = "system.file('shape/nc.shp', package = 'sf'): 100 North Carolina counties, NAD27 longitude/latitude",
  idProperty = ID_PROPERTY,
  regionOrder = "shapefile order; every per-region array follows meta.ids / the ids array",
  seed = SEED,
  defaults = list(
    localmoran_conditional = arg_default(localmoran, "conditional"),
    localmoran_alternative = arg_default(localmoran, "alternative"),
    localmoran_mlvar = arg_default(localmoran, "mlvar"),
    moran_test_randomisation = arg_default(moran.test, "randomisation"),
    globalG_test_B1correct = arg_default(globalG.test, "B1correct"),
    globalG_test_adjust_x = arg_default(globalG.test, "adjust.x"),
    localmoran_perm_sample_Ei = arg_default(localmoran_perm, "sample_Ei"),
    poly2nb_snap = "sqrt(.Machine$double.eps)"
  ),
  notes = c(
    "Variables are plain ratios x = numerator / denominator of the nc attributes, computed in R doubles.",
    "moran.mc / geary.mc: res holds nsim simulated values then the observed one; spdep ranks all nsim+1 values, diff = nsim - rank(observed), diff clamped at 0, p = punif((diff + 1)/(nsim + 1)) for 'greater'. With M = number of simulated values >= observed this is max(M, 1)/(nsim + 1) when there are no ties, one fewer in the numerator than the textbook (M + 1)/(nsim + 1). For 'less' spdep computes 1 - (diff + 1)/(nsim + 1) = rank(observed)/(nsim + 1) = (L + 1)/(nsim + 1) with L = number of simulated values < observed (textbook form) unless diff was clamped. 'two.sided' is punif(|rank - (nsim+1)/2|/(nsim+1), 0, 0.5, lower.tail = FALSE). geary.mc swaps the roles: 'greater' uses the upper-tail formula on C. countSimGreaterOrEqual / countSimLessOrEqual are computed here from the same draws so both conventions can be checked.",
    "moran.test / geary.test statistic is the standard deviate z; estimate holds the statistic, its expectation and variance. geary.test 'greater' is the alternative of positive autocorrelation (C < 1): z = (E[C] - C)/sd.",
    "localmoran: columns Ii, E.Ii, Var.Ii, Z.Ii, p; mlvar = TRUE (m2 = sum(z^2)/n). conditional = TRUE uses the conditional-randomisation moments (Sokal et al. 1998), conditional = FALSE the total-randomisation moments (Anselin 1995). See defaults.localmoran_conditional for the default.",
    "localG: returned values are standard deviates z of Gi (Gi* when the neighbour list has include.self). Internals, where present, come from return_internals = TRUE.",
    "globalG.test is run on binary weights only (style B), as spdep's documentation requires.",
    "localmoran_perm (spdep 1.2-7): conditional permutation with region i fixed, but its k_i neighbour values are drawn WITH replacement from the other n - 1 values (sample(z[-i], k_i * nsim, replace = TRUE)); run after set.seed(seed). 'Pr(folded) Sim' = (min(M, nsim - M) + 1)/(nsim + 1) with M = number of draws >= Ii; 'Pr(z != E(Ii)) Sim' comes from the rank of Ii via probs_lut; E.Ii is the mean of the draws (sample_Ei = TRUE), Var.Ii their variance, Z.Ii and the first p column follow from those."
  )
)
neighbours_fixture$meta <- meta

write_fixture(list(
  meta = meta,
  ids = ids,
  names = as.character(nc$NAME),
  variables = lapply(variables, function(v) list(label = v$label, x = v$x)),
  raw = list(
    SID74 = nc$SID74, BIR74 = nc$BIR74, NWBIR74 = nc$NWBIR74,
    SID79 = nc$SID79, BIR79 = nc$BIR79
  )
), "nc-data.json")
write_fixture(neighbours_fixture, "nc-neighbours.json")
write_fixture(list(meta = meta, ids = ids, weights = global_results), "nc-global.json")
write_fixture(list(
  meta = meta, ids = ids,
  localmoran = local_results,
  localG = localg_results,
  localmoranPerm = perm_results
), "nc-local.json", pretty = FALSE)

# ----------------------------------------------------------------- GeoJSON ----
# Written by GDAL with 17 significant figures, then read back and compared
# coordinate for coordinate so that the TopoJSON built from it starts from the exact
# same vertices as poly2nb.
geojson_path <- file.path(nc_dir, "nc.geojson")
if (file.exists(geojson_path)) invisible(file.remove(geojson_path))
nc_out <- nc[, c("CNTY_ID", "FIPSNO", "FIPS", "NAME", "BIR74", "SID74", "NWBIR74", "BIR79", "SID79", "NWBIR79")]
st_write(nc_out, geojson_path, driver = "GeoJSON", quiet = TRUE,
         layer_options = c("RFC7946=NO", "SIGNIFICANT_FIGURES=17", "WRITE_BBOX=NO"))
back <- st_read(geojson_path, quiet = TRUE)
stopifnot(identical(as.integer(back$FIPSNO), ids))
same <- mapply(function(a, b) identical(unclass(a), unclass(b)), st_geometry(nc), st_geometry(back))
if (!all(same)) stop("GeoJSON coordinates differ from the shapefile for ", sum(!same), " counties")
message("wrote ", geojson_path, " (", file.size(geojson_path), " bytes); coordinates identical to nc.shp")

# Spatial Markov over a panel (every period to the next, transitions added up) with
# the test of homogeneity, as the reference for lib/runs/panel-transitions.ts and
# lib/spatial/spatial-markov.ts spatialMarkovPanel, computed with R and spdep on
# regular lattices with invented values (drawn here with set.seed and written to the
# fixture, so the TypeScript reads exactly these doubles). Some values are missing.
#
# Every step is done with R's own functions, not a port of the TypeScript:
#   pairs        each period t with t + 1; a region missing (NA) in either is left out
#                of that pair only
#   neighbours   spdep::cell2nb (queen or rook), restricted to the pair's regions by
#                spdep::subset.nb; regions left with no neighbour are left out too (and
#                counted); row-standardised by nb2listw(style = "W")
#   spatial lag  spdep::lag.listw of the earlier values
#   classes      per period, type-7 quantiles at j/k (stats::quantile) and
#                findInterval(left.open = TRUE): the number of cut points strictly
#                below a value (so a value equal to a cut point is in the lower class)
#   tables       table() of lag class × earlier class × later class, added over pairs
#   test         for each earlier class i, Pearson's chi-square (stats::chisq.test,
#                correct = FALSE) of the lag class × later class table of the pooled
#                transitions from class i, after dropping all-zero rows and columns; Q is
#                the sum and df the sum of the tables' degrees of freedom, p =
#                pchisq(Q, df, lower.tail = FALSE) (Anderson & Goodman 1957; Rey 2001;
#                Bickenbach & Bode 2003). Expected counts below 5 are counted from
#                chisq.test's own $expected (row total x column total / total).
# Numbers are written at full precision (exact-json.R).
#   Rscript scripts/reference/spatial-markov-panel-reference.R <project root>
args <- commandArgs(trailingOnly = TRUE)
root <- if (length(args) > 0) args[[1]] else "."
source(file.path(root, "scripts", "reference", "exact-json.R"))
source(file.path(root, "scripts", "reference", "markov-common.R"))
suppressPackageStartupMessages(library(spdep))

SEED <- 20261204L
set.seed(SEED, kind = "Mersenne-Twister", normal.kind = "Inversion", sample.kind = "Rejection")

panel_case <- function(name, rows, columns, type, k, values, note) {
  n <- rows * columns
  nb <- cell2nb(rows, columns, type = type)
  periods <- ncol(values)
  levels <- 0:(k - 1)
  f <- function(v) factor(v, levels = levels)
  total <- table(f(integer(0)), f(integer(0)), f(integer(0)))
  pairs <- list()
  for (t in seq_len(periods - 1)) {
    a <- values[, t]
    b <- values[, t + 1]
    present <- !is.na(a) & !is.na(b)
    sub <- subset.nb(nb, present)
    isolated <- card(sub) == 0
    keep <- which(present)[!isolated]
    sub2 <- subset.nb(nb, seq_len(n) %in% keep)
    lw <- nb2listw(sub2, style = "W")
    lag <- lag.listw(lw, a[keep])
    from <- quantile_classes(a[keep], k)
    to <- quantile_classes(b[keep], k)
    lag_class <- quantile_classes(lag, k)
    total <- total + table(f(lag_class), f(from), f(to))
    pairs[[t]] <- list(regions = length(keep), missing = sum(!present), noNeighbours = sum(isolated))
  }
  per_class <- lapply(levels, function(i) {
    t <- total[, i + 1, ]
    t <- t[rowSums(t) > 0, colSums(t) > 0, drop = FALSE]
    expected <- outer(rowSums(t), colSums(t)) / sum(t)
    if (nrow(t) < 2 || ncol(t) < 2) return(list(class = i, statistic = 0, df = 0L, cells = length(t), expectedBelow5 = sum(expected < 5)))
    test <- suppressWarnings(chisq.test(t, correct = FALSE))
    stopifnot(isTRUE(all.equal(unname(test$expected), unname(expected))))
    list(class = i, statistic = unname(test$statistic), df = as.integer(unname(test$parameter)), cells = length(t), expectedBelow5 = sum(test$expected < 5))
  })
  Q <- sum(vapply(per_class, function(x) x$statistic, 0))
  df <- sum(vapply(per_class, function(x) x$df, 0L))
  list(
    name = name,
    note = note,
    rows = rows,
    columns = columns,
    contiguity = type,
    classes = k,
    # values[period][region], the lattice in row-major order (cell2nb's order); a
    # missing value is written as 0 and its 0-based region index listed in missing[period]
    # (the fixture format holds no NA).
    values = lapply(seq_len(periods), function(t) I(ifelse(is.na(values[, t]), 0, values[, t]))),
    missing = lapply(seq_len(periods), function(t) I(as.integer(which(is.na(values[, t])) - 1L))),
    pairs = pairs,
    pooled = lapply(levels, function(i) as.integer(apply(total, c(2, 3), sum)[i + 1, ])),
    conditional = lapply(levels, function(l) lapply(levels, function(i) as.integer(total[l + 1, i + 1, ]))),
    chiSquare = Q,
    degreesOfFreedom = df,
    p = pchisq(Q, df, lower.tail = FALSE),
    cells = sum(vapply(per_class, function(x) as.integer(x$cells), 0L)),
    expectedBelow5 = sum(vapply(per_class, function(x) as.integer(x$expectedBelow5), 0L))
  )
}

# A 7 x 7 queen lattice over five periods: a trend across the rows that drifts, with
# noise; region 10 is missing in the second period and region 30 in the fourth.
g7 <- grid(7, 7)
v7 <- matrix(NA_real_, 49, 5)
v7[, 1] <- g7$r + rnorm(49, sd = 1.2)
for (t in 2:5) v7[, t] <- v7[, t - 1] + 0.3 * (g7$c - 3) + rnorm(49, sd = 0.9)
v7[10, 2] <- NA
v7[30, 4] <- NA

# A 6 x 8 rook lattice over four periods, whole numbers (ties at the cut points); the
# corner region 1's two rook neighbours (2 and 9) are missing in the second period, so
# in the pairs 1-2 and 2-3 the corner has no neighbour and is left out.
g6 <- grid(6, 8)
v6 <- matrix(NA_real_, 48, 4)
v6[, 1] <- as.numeric(sample(1:5, 48, replace = TRUE))
for (t in 2:4) v6[, t] <- pmin(5, pmax(1, v6[, t - 1] + sample(-1:1, 48, replace = TRUE)))
v6[c(2, 9), 2] <- NA

cases <- list(
  panel_case("queen-7x7-k4-five-periods", 7, 7, "queen", 4, v7,
             "a drifting trend with noise; two regions missing in one period each"),
  panel_case("rook-6x8-k3-ties-island", 6, 8, "rook", 3, v6,
             "whole numbers 1..5 with ties at the cut points; two missing regions leave a corner without neighbours in two pairs")
)

doc <- list(
  source = "R: spdep cell2nb / subset.nb / card / nb2listw(style = 'W') / lag.listw, stats::quantile(type = 7) + findInterval(left.open = TRUE) per period, table() added over pairs, stats::chisq.test(correct = FALSE) per earlier class, stats::pchisq",
  generator = "scripts/reference/spatial-markov-panel-reference.R",
  generated = format(Sys.time(), "%Y-%m-%dT%H:%M:%SZ", tz = "UTC"),
  versions = versions("spdep"),
  seed = SEED,
  rng = as.list(RNGkind()),
  cases = cases
)
write_exact_json(doc, file.path(root, "tests", "fixtures", "spatial", "spatial-markov-panel.json"))

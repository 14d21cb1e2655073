# Spatial Markov transition tables and their chi-square test of homogeneity, as the
# reference for lib/spatial/spatial-markov.ts, computed with R and spdep on regular
# lattices with invented values (drawn here with set.seed and written to the fixture,
# so the TypeScript reads exactly these doubles).
#
# Every step is done with R's own functions, not a port of the TypeScript:
#   neighbours   spdep::cell2nb (queen or rook), row-standardised by nb2listw(style = "W")
#   spatial lag  spdep::lag.listw of the earlier values
#   classes      type-7 quantiles at j/k (stats::quantile) and findInterval(left.open =
#                TRUE): the number of cut points strictly below a value
#   tables       table() of earlier class × later class, split by the lag's class
#   test         for each earlier class i, Pearson's chi-square (stats::chisq.test,
#                correct = FALSE) of the lag class × later class table of the regions in
#                class i, after dropping all-zero rows and columns; Q is the sum over i and
#                df the sum of the tables' degrees of freedom, p = pchisq(Q, df, lower.tail
#                = FALSE). This is the homogeneity statistic of Anderson & Goodman (1957) as
#                used for spatial Markov chains by Rey (2001) and Bickenbach & Bode (2003):
#                n_l,i (p_l,ij − p_ij)² / p_ij is (O − E)²/E of that table cell, since its
#                expected count is n_l,i · p_ij. An earlier class with fewer than two lag
#                classes or later classes contributes 0 with 0 degrees of freedom.
# Numbers are written at full precision (exact-json.R).
#   Rscript scripts/reference/spatial-markov-reference.R <project root>
args <- commandArgs(trailingOnly = TRUE)
root <- if (length(args) > 0) args[[1]] else "."
source(file.path(root, "scripts", "reference", "exact-json.R"))
source(file.path(root, "scripts", "reference", "markov-common.R"))
suppressPackageStartupMessages(library(spdep))

SEED <- 20260601L
set.seed(SEED, kind = "Mersenne-Twister", normal.kind = "Inversion", sample.kind = "Rejection")

markov_case <- function(name, rows, columns, type, k, earlier, later, note) {
  nb <- cell2nb(rows, columns, type = type)
  lw <- nb2listw(nb, style = "W")
  lag <- lag.listw(lw, earlier)
  from <- quantile_classes(earlier, k)
  to <- quantile_classes(later, k)
  lag_class <- quantile_classes(lag, k)
  levels <- 0:(k - 1)
  f <- function(v) factor(v, levels = levels)
  pooled <- table(f(from), f(to))
  conditional <- lapply(levels, function(l) {
    t <- table(f(from[lag_class == l]), f(to[lag_class == l]))
    lapply(seq_len(k), function(i) as.integer(t[i, ]))
  })
  per_class <- lapply(levels, function(i) {
    t <- table(f(lag_class[from == i]), f(to[from == i]))
    t <- t[rowSums(t) > 0, colSums(t) > 0, drop = FALSE]
    if (nrow(t) < 2 || ncol(t) < 2) return(list(class = i, lagClasses = nrow(t), laterClasses = ncol(t), statistic = 0, df = 0L))
    test <- suppressWarnings(chisq.test(t, correct = FALSE))
    list(class = i, lagClasses = nrow(t), laterClasses = ncol(t), statistic = unname(test$statistic), df = as.integer(unname(test$parameter)))
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
    # 0-based, the lattice in row-major order (cell2nb's order: column index fastest).
    neighbours = lapply(nb, function(j) I(as.integer(sort(j) - 1L))),
    earlier = I(earlier),
    later = I(later),
    lag = I(lag),
    fromClass = I(as.integer(from)),
    toClass = I(as.integer(to)),
    lagClass = I(as.integer(lag_class)),
    pooled = lapply(seq_len(k), function(i) as.integer(pooled[i, ])),
    conditional = conditional,
    perClass = per_class,
    chiSquare = Q,
    degreesOfFreedom = df,
    p = pchisq(Q, df, lower.tail = FALSE)
  )
}

g8 <- grid(8, 8)
earlier8 <- g8$r + g8$c + rnorm(64, sd = 1.5)
later8 <- earlier8 + 0.5 * (g8$r - g8$c) + rnorm(64, sd = 1)

g7 <- grid(7, 7)
earlier7 <- as.numeric(sample(1:6, 49, replace = TRUE))
later7 <- pmin(6, pmax(1, earlier7 + sample(-1:1, 49, replace = TRUE)))

g6 <- grid(6, 6)
earlier6 <- round(g6$r * 0.7 + rnorm(36), 3)
later6 <- round(earlier6 + rnorm(36, sd = 0.8), 3)

cases <- list(
  markov_case("queen-8x8-k4", 8, 8, "queen", 4, earlier8, later8,
              "a diagonal trend with noise; the later period tilts it"),
  markov_case("rook-7x7-k3-ties", 7, 7, "rook", 3, earlier7, later7,
              "whole numbers 1..6 with many ties; with n = 49 and k = 3 the cut points are data values, and a value equal to a cut point is in the lower class"),
  markov_case("queen-6x6-k5-sparse", 6, 6, "queen", 5, earlier6, later6,
              "five classes on 36 regions: many conditional rows are empty, so the degrees of freedom fall below (k - 1)^2 per class")
)

doc <- list(
  source = "R: spdep cell2nb / nb2listw(style = 'W') / lag.listw, stats::quantile(type = 7) + findInterval(left.open = TRUE), stats::chisq.test(correct = FALSE) per earlier class, stats::pchisq",
  generator = "scripts/reference/spatial-markov-reference.R",
  generated = format(Sys.time(), "%Y-%m-%dT%H:%M:%SZ", tz = "UTC"),
  versions = versions("spdep"),
  seed = SEED,
  rng = as.list(RNGkind()),
  cases = cases
)
write_exact_json(doc, file.path(root, "tests", "fixtures", "spatial", "spatial-markov.json"))

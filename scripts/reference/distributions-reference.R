# Quantiles and upper tails of the standard normal and chi-square distributions,
# computed by R's stats::qnorm / pnorm / qchisq / pchisq, as the reference for
# lib/spatial/distributions.ts (the check values of its tests come from here, not
# from memory or a printed table). Numbers are written at full precision
# (exact-json.R).
#   Rscript scripts/reference/distributions-reference.R <project root>
args <- commandArgs(trailingOnly = TRUE)
root <- if (length(args) > 0) args[[1]] else "."
source(file.path(root, "scripts", "reference", "exact-json.R"))

# Upper-tail probabilities whose quantiles the tests use (0.05 one-sided, 0.025 and
# 0.005 for two-sided 5 % and 1 %, and far out).
normal_tails <- c(0.1, 0.05, 0.025, 0.005, 0.0005, 1e-6, 1e-12)
normal_quantiles <- lapply(normal_tails, function(p) list(upperTail = p, z = qnorm(p, lower.tail = FALSE)))
normal_points <- c(0, 0.5, 1, 2, 3, 5, 8, 10, 20, 37)
normal_at <- lapply(normal_points, function(z) list(z = z, upperTail = pnorm(z, lower.tail = FALSE)))

chisq_quantiles <- list()
for (df in c(1, 2, 4, 6, 12, 30)) {
  for (p in c(0.05, 0.01, 0.001)) {
    chisq_quantiles[[length(chisq_quantiles) + 1]] <- list(df = df, upperTail = p, x = qchisq(p, df, lower.tail = FALSE))
  }
}
chisq_points <- list(
  c(0.5, 1), c(3, 1), c(50, 1), c(0.1, 4), c(9.5, 4), c(213.85, 4), c(400, 4),
  c(7.3, 2), c(25.357791097791097, 18), c(34.3, 30), c(120, 30), c(0.01, 12)
)
chisq_at <- lapply(chisq_points, function(v) list(x = v[1], df = v[2], upperTail = pchisq(v[1], v[2], lower.tail = FALSE)))

doc <- list(
  source = "R stats::qnorm, pnorm, qchisq and pchisq with lower.tail = FALSE",
  generator = "scripts/reference/distributions-reference.R",
  versions = versions(),
  normal = list(quantiles = normal_quantiles, upperTails = normal_at),
  chiSquare = list(quantiles = chisq_quantiles, upperTails = chisq_at)
)
write_exact_json(doc, file.path(root, "tests", "fixtures", "spatial", "distributions.json"))

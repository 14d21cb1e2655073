# Pearson's chi-square test of independence (stats::chisq.test without the
# continuity correction) for fixed contingency tables, as the reference for
# lib/spatial/contingency.ts. Tables with an all-zero row or column are given
# here already without it: the TypeScript drops such rows and columns first,
# and chisq.test would return NaN for them. Numbers are written at full
# precision (sprintf("%.17g"), exact-json.R).
#   Rscript scripts/reference/chisq-reference.R <project root>
args <- commandArgs(trailingOnly = TRUE)
root <- if (length(args) > 0) args[[1]] else "."
source(file.path(root, "scripts", "reference", "exact-json.R"))
tables <- list(
  two_by_two = matrix(c(12, 5, 3, 9), nrow = 2, byrow = TRUE),
  three_by_three = matrix(c(20, 4, 1, 3, 15, 6, 2, 5, 18), nrow = 3, byrow = TRUE),
  four_by_five = matrix(c(7, 0, 3, 2, 9, 1, 11, 4, 0, 2, 5, 2, 14, 3, 1, 0, 6, 2, 10, 4), nrow = 4, byrow = TRUE),
  nearly_independent = matrix(c(10, 20, 30, 11, 19, 31), nrow = 2, byrow = TRUE)
)
out <- lapply(names(tables), function(name) {
  m <- tables[[name]]
  test <- suppressWarnings(chisq.test(m, correct = FALSE))
  list(
    name = name,
    counts = lapply(seq_len(nrow(m)), function(i) as.integer(m[i, ])),
    statistic = unname(test$statistic),
    df = as.integer(unname(test$parameter)),
    p = test$p.value,
    expected_below_5 = sum(test$expected < 5)
  )
})
doc <- list(
  source = "R stats::chisq.test(x, correct = FALSE)",
  generator = "scripts/reference/chisq-reference.R",
  r_version = paste(R.version$major, R.version$minor, sep = "."),
  versions = versions(),
  tables = out
)
write_exact_json(doc, file.path(root, "tests", "fixtures", "spatial", "chisq-independence.json"))

# Helpers shared by the spatial Markov reference scripts (source()d, not run on
# its own).

# Quantile classes 0..k-1: type-7 quantiles at j/k and the number of cut points
# strictly below a value, so a value equal to a cut point is in the lower class.
quantile_classes <- function(v, k) {
  cuts <- quantile(v, probs = seq_len(k - 1) / k, type = 7, names = FALSE)
  findInterval(v, cuts, left.open = TRUE)
}

# Row and column index of every cell of a rows x columns lattice, row-major
# (cell2nb's order: column index fastest).
grid <- function(rows, columns) list(r = rep(0:(rows - 1), each = columns), c = rep(0:(columns - 1), times = rows))

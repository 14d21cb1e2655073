# Writing reference fixtures at full precision, shared by the reference scripts
# (source()d, not run on its own).
#
# jsonlite 1.8.4 prints at most 15 significant digits even with digits = NA, which
# does not round-trip every double (0.1 + 0.2 comes back as 0.3). Doubles are
# formatted with sprintf("%.17g"), which identifies each double exactly, and passed to
# toJSON verbatim. Length-1 doubles become scalars unless wrapped in I(); integers
# (as.integer, table counts) are written by jsonlite as they are.
suppressPackageStartupMessages(library(jsonlite))

num_json <- function(v, array) {
  s <- ifelse(is.finite(v), sprintf("%.17g", v), "null")
  if (!array) return(structure(s, class = "json"))
  structure(paste0("[", paste(s, collapse = ","), "]"), class = "json")
}

exactify <- function(x) {
  if (is.list(x) && !is.data.frame(x)) return(lapply(x, exactify))
  if (is.double(x)) return(num_json(unclass(x), inherits(x, "AsIs") || length(x) != 1L))
  x
}

# Every number in a nested list, in order, as doubles.
collect_numbers <- function(x) {
  if (is.list(x)) return(unlist(lapply(x, collect_numbers), use.names = FALSE))
  if (is.numeric(x)) return(as.numeric(unclass(x)))
  numeric(0)
}

# Writes `obj` as JSON (pretty unless told otherwise) to `path` and reads it back:
# every double must come back bit for bit, or the script stops.
write_exact_json <- function(obj, path, pretty = TRUE) {
  txt <- toJSON(exactify(obj), auto_unbox = TRUE, json_verbatim = TRUE, na = "null", null = "null", pretty = pretty)
  writeLines(txt, path, useBytes = TRUE)
  back <- fromJSON(path, simplifyVector = FALSE)
  a <- collect_numbers(obj)
  b <- collect_numbers(back)
  if (anyNA(a)) stop("NA/NaN in ", path)
  if (length(a) != length(b) || any(a != b)) stop("JSON round trip lost precision in ", path)
  message("wrote ", path, " (", file.size(path), " bytes)")
  invisible(path)
}

# R and package versions for a fixture's meta block.
versions <- function(packages = character(0)) {
  out <- list(R = R.version.string, jsonlite = utils::packageDescription("jsonlite")$Version)
  for (p in packages) out[[p]] <- utils::packageDescription(p)$Version
  out
}

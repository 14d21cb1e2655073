# Sourced by the reference scripts that use spData's North Carolina SIDS data
# (rates-hotspots-reference.R, residuals-reference.R): the 100 counties, checked
# to be the same counties in the same order with the same coordinates as the
# committed boundaries tests/fixtures/nc/nc.geojson (written from sf's nc.shp),
# so the engine, reading tests/fixtures/nc/nc.topojson, sees the same polygons.

read_nc_sids <- function(root) {
  sids_path <- system.file("shapes/sids.shp", package = "spData")
  stopifnot(nzchar(sids_path))
  sids <- st_read(sids_path, quiet = TRUE)
  ids <- as.integer(sids$FIPSNO)
  stopifnot(length(ids) == 100L, !anyDuplicated(ids))
  committed <- st_read(file.path(root, "tests", "fixtures", "nc", "nc.geojson"), quiet = TRUE)
  stopifnot(identical(as.integer(committed$FIPSNO), ids))
  a_xy <- st_coordinates(st_geometry(sids))
  b_xy <- st_coordinates(st_geometry(committed))
  stopifnot(identical(dim(a_xy), dim(b_xy)), max(abs(a_xy[, 1:2] - b_xy[, 1:2])) == 0)
  sids
}

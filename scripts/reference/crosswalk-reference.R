#!/usr/bin/env Rscript
# Reference values for Tessera's area-weighted crosswalk and harmonisation
# (lib/geometry/crosswalk.ts, harmonise.ts and the intake CLI's crosswalk command),
# computed with R's sf (GEOS for planar overlays, s2 on the sphere): the 100 North
# Carolina counties interpolated onto a regular grid.
#
# Run from the repository root (see scripts/reference/README.md):
#   Rscript scripts/reference/crosswalk-reference.R [repo-root]
#
# Planar check: the counties (tests/fixtures/nc/nc.geojson, NAD27 lon/lat) are
# projected to NAD83 / North Carolina (EPSG:32119) and scaled from metres to km;
# a 60 km grid is laid over them with st_make_grid. Both geometries are written
# with every coordinate at 17 significant digits, so the test clips exactly the
# doubles GEOS clipped here.
#   tests/fixtures/crosswalk/nc-km.geojson         counties in km (property FIPSNO)
#   tests/fixtures/crosswalk/grid-km.geojson       grid cells (property cell)
#   tests/fixtures/crosswalk/nc-grid-planar.json   areas, overlay shares, st_interpolate_aw results
# Geographic check: the same counties in lon/lat onto a 0.5-degree grid, with s2
# (edges are great-circle arcs):
#   tests/fixtures/crosswalk/grid-lonlat.geojson
#   tests/fixtures/crosswalk/nc-grid-geographic.json
# The data are tests/fixtures/nc-sids/nc-sids.csv (BIR74, SID74 extensive; SIDR74
# = 1000 SID74 / BIR74 intensive).

suppressPackageStartupMessages({
  library(sf)
  library(jsonlite)
})

args <- commandArgs(trailingOnly = TRUE)
root <- if (length(args) >= 1) args[[1]] else "."
source(file.path(root, "scripts", "reference", "exact-json.R"))
out_dir <- file.path(root, "tests", "fixtures", "crosswalk")
dir.create(out_dir, recursive = TRUE, showWarnings = FALSE)

PLANAR_CELL_KM <- 60
GEOGRAPHIC_CELL_DEG <- 0.5

nc <- st_read(file.path(root, "tests", "fixtures", "nc", "nc.geojson"), quiet = TRUE)
data <- read.csv(file.path(root, "tests", "fixtures", "nc-sids", "nc-sids.csv"))
stopifnot(identical(as.integer(nc$FIPSNO), as.integer(data$FIPSNO)))
ids <- as.integer(nc$FIPSNO)
values <- data.frame(BIR74 = as.numeric(data$BIR74), SID74 = as.numeric(data$SID74), SIDR74 = as.numeric(data$SIDR74))

meta_versions <- function() {
  v <- versions("sf")
  v$GEOS <- unname(sf_extSoftVersion()["GEOS"])
  v$PROJ <- unname(sf_extSoftVersion()["PROJ"])
  v$s2 <- utils::packageDescription("s2")$Version
  v
}

# GeoJSON written through write_exact_json: coordinates at 17 significant digits.
ring_json <- function(ring) lapply(seq_len(nrow(ring)), function(k) I(unname(as.numeric(ring[k, 1:2]))))
polygon_json <- function(poly) lapply(poly, ring_json)
feature_json <- function(geom, properties) {
  g <- unclass(geom)
  polys <- if (inherits(geom, "MULTIPOLYGON")) lapply(g, polygon_json) else list(polygon_json(g))
  list(type = "Feature", properties = properties, geometry = list(type = "MultiPolygon", coordinates = polys))
}
write_geojson <- function(geoms, properties, path) {
  features <- lapply(seq_along(geoms), function(i) feature_json(geoms[[i]], properties[[i]]))
  write_exact_json(list(type = "FeatureCollection", features = features), path, pretty = FALSE)
}

# Overlay of sources onto targets: one row per pair with a positive overlap area.
overlay <- function(src, tgt) {
  i <- st_intersection(src, tgt)
  idx <- attr(i, "idx")
  area <- as.numeric(st_area(i))
  keep <- area > 0
  data.frame(s = idx[keep, 1], t = idx[keep, 2], area = area[keep])
}

# Interpolation both ways: sf's st_interpolate_aw and the formulas written out
# (extensive: sum of share * x; intensive: sum of area_st * x / sum of area_st over the
# target's covered part), so a difference between them would show.
interpolate <- function(src_sf, tgt_sfc, ov, area_s) {
  to_sf <- st_sf(cell = seq_along(tgt_sfc), geometry = tgt_sfc)
  ext <- suppressWarnings(st_interpolate_aw(src_sf[, c("BIR74", "SID74")], to_sf, extensive = TRUE))
  int <- suppressWarnings(st_interpolate_aw(src_sf[, "SIDR74"], to_sf, extensive = FALSE))
  ext_cells <- as.integer(rownames(ext))
  int_cells <- as.integer(rownames(int))
  share <- ov$area / area_s[ov$s]
  manual_ext <- function(v) tapply(share * v[ov$s], ov$t, sum)
  covered <- tapply(ov$area, ov$t, sum)
  manual_int <- tapply(ov$area * values$SIDR74[ov$s], ov$t, sum) / covered
  cells <- sort(unique(as.integer(ov$t)))
  stopifnot(identical(sort(ext_cells), cells), identical(sort(int_cells), cells))
  list(
    cells = cells,
    sf = list(
      BIR74 = I(ext$BIR74[match(cells, ext_cells)]),
      SID74 = I(ext$SID74[match(cells, ext_cells)]),
      SIDR74 = I(int$SIDR74[match(cells, int_cells)])
    ),
    formula = list(
      BIR74 = I(as.numeric(manual_ext(values$BIR74)[as.character(cells)])),
      SID74 = I(as.numeric(manual_ext(values$SID74)[as.character(cells)])),
      SIDR74 = I(as.numeric(manual_int[as.character(cells)]))
    )
  )
}

fixture <- function(src_sfc, tgt_sfc, cell_ids, coordinates, notes) {
  src_sf <- st_sf(values, geometry = src_sfc)
  ov <- overlay(src_sfc, tgt_sfc)
  area_s <- as.numeric(st_area(src_sfc))
  area_t <- as.numeric(st_area(tgt_sfc))
  interp <- interpolate(src_sf, tgt_sfc, ov, area_s)
  max_sf_formula <- max(abs(unlist(interp$sf) - unlist(interp$formula)) / pmax(1, abs(unlist(interp$formula))))
  message(coordinates, ": ", nrow(ov), " pairs; st_interpolate_aw vs formula max rel. difference ", max_sf_formula)
  list(
    meta = c(
      list(
        generated = format(Sys.time(), "%Y-%m-%dT%H:%M:%SZ", tz = "UTC"),
        script = "scripts/reference/crosswalk-reference.R",
        coordinates = coordinates,
        notes = notes,
        sfVersusFormulaMaxRelativeDifference = max_sf_formula
      ),
      meta_versions()
    ),
    sources = list(ids = I(ids), area = I(area_s)),
    targets = list(ids = I(cell_ids), area = I(area_t)),
    pairs = list(
      from = I(ids[ov$s]),
      to = I(cell_ids[ov$t]),
      area = I(ov$area),
      share = I(ov$area / area_s[ov$s])
    ),
    interpolated = list(
      cells = I(cell_ids[interp$cells]),
      st_interpolate_aw = interp$sf,
      formula = interp$formula
    )
  )
}

# ---------------------------------------------------------------- planar ----
sf_use_s2(FALSE)
projected <- st_transform(st_geometry(nc), 32119)
nc_km <- st_set_crs(projected / 1000, NA)
stopifnot(all(st_is_valid(nc_km)))
grid_km <- st_make_grid(nc_km, cellsize = PLANAR_CELL_KM)
planar_cells <- sprintf("c%03d", seq_along(grid_km))
write_geojson(nc_km, lapply(ids, function(id) list(FIPSNO = id)), file.path(out_dir, "nc-km.geojson"))
write_geojson(grid_km, lapply(planar_cells, function(id) list(cell = id)), file.path(out_dir, "grid-km.geojson"))
# Read back: the written coordinates are the ones GEOS clips below.
nc_km_back <- st_geometry(st_read(file.path(out_dir, "nc-km.geojson"), quiet = TRUE, crs = NA))
grid_km_back <- st_geometry(st_read(file.path(out_dir, "grid-km.geojson"), quiet = TRUE, crs = NA))
stopifnot(max(abs(st_coordinates(nc_km_back)[, 1:2] - st_coordinates(nc_km)[, 1:2])) == 0)
planar <- fixture(
  st_set_crs(nc_km_back, NA), st_set_crs(grid_km_back, NA), planar_cells, "planar",
  paste0(
    "NC counties projected to EPSG:32119 and divided by 1000 (km); grid st_make_grid(cellsize = ", PLANAR_CELL_KM,
    "); sf_use_s2(FALSE), GEOS st_intersection and st_area (planar, km^2); shares = area(s and t) / area(s); ",
    "st_interpolate_aw(extensive = TRUE) for BIR74 and SID74, (extensive = FALSE) for SIDR74; 'formula' repeats both by hand"
  )
)
write_exact_json(planar, file.path(out_dir, "nc-grid-planar.json"))

# ------------------------------------------------------------ geographic ----
sf_use_s2(TRUE)
nc_ll <- st_geometry(nc)
grid_ll <- st_make_grid(nc_ll, cellsize = GEOGRAPHIC_CELL_DEG)
geo_cells <- sprintf("g%03d", seq_along(grid_ll))
write_geojson(grid_ll, lapply(geo_cells, function(id) list(cell = id)), file.path(out_dir, "grid-lonlat.geojson"))
grid_ll_back <- st_geometry(st_read(file.path(out_dir, "grid-lonlat.geojson"), quiet = TRUE))
st_crs(grid_ll_back) <- NA # GeoJSON is read as WGS 84; the cells were made in the counties' NAD27
st_crs(grid_ll_back) <- st_crs(nc_ll)
geographic <- fixture(
  nc_ll, grid_ll_back, geo_cells, "geographic",
  paste0(
    "NC counties in NAD27 lon/lat (tests/fixtures/nc/nc.geojson); grid st_make_grid(cellsize = ", GEOGRAPHIC_CELL_DEG,
    " degrees); sf_use_s2(TRUE): s2 intersection and area on the sphere, edges as great-circle arcs (areas in m^2); ",
    "shares and interpolated values are ratios, so the radius cancels"
  )
)
write_exact_json(geographic, file.path(out_dir, "nc-grid-geographic.json"))

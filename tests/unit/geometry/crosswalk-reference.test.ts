/**
 * Outside check of the area-weighted crosswalk and harmonisation against R's sf
 * (st_intersection / st_area / st_interpolate_aw; versions in the fixtures' meta):
 * the 100 North Carolina counties onto a regular grid, written by
 * scripts/reference/crosswalk-reference.R.
 *
 * Planar (counties projected to EPSG:32119, in km; 60 km cells): both sides clip
 * exactly the same doubles with exact planar clipping (GEOS; polygon-clipping), so
 * shares, areas and interpolated values must agree to 1e-9 relative; what is left
 * is rounding in where two edges cross (observed ~1e-14).
 *
 * Geographic (counties in lon/lat, 0.5° cells, sf with s2): s2 reads every edge as a
 * great-circle arc, Tessera as straight in degrees (as GeoJSON does). Along the
 * state's long east–west borders the two differ by tens of metres, which moves
 * county areas by up to ~0.1 % and shares by up to ~1e-3; the tolerance is 2.5e-3
 * on shares (so on counts, relative to the contributing counties' totals) and
 * 5e-3 relative on areas and on the interpolated rate.
 */
import { readFileSync } from "node:fs";
import { areaCrosswalk, type AreaCrosswalk } from "@/lib/geometry/crosswalk";
import { harmonise } from "@/lib/geometry/harmonise";
import { loadBoundaries } from "@/lib/intake/boundaries";
import { CROSSWALK_FILES, crosswalkReference, type CrosswalkReference } from "../../fixtures/crosswalk/fixture";

function readData(): Map<string, Map<string, number>> {
  const [header, ...rows] = readFileSync(CROSSWALK_FILES.data, "utf8").trim().split(/\r?\n/).map((l) => l.split(","));
  const columns = new Map<string, Map<string, number>>();
  for (const name of ["BIR74", "SID74", "SIDR74"]) {
    const at = header.indexOf(name);
    columns.set(name, new Map(rows.map((r) => [r[0], Number(r[at])])));
  }
  return columns;
}

function crosswalkOf(counties: string, grid: string, coordinates?: "planar" | "geographic"): AreaCrosswalk {
  return areaCrosswalk(
    { boundaries: loadBoundaries(readFileSync(counties, "utf8")), objectName: "regions", idProperty: "FIPSNO" },
    { boundaries: loadBoundaries(readFileSync(grid, "utf8")), objectName: "regions", idProperty: "cell" },
    // R keeps every overlap with a positive area: no slivers dropped here.
    { sliverTolerance: 0, coordinates },
  );
}

function relative(a: number, b: number): number {
  return Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);
}

function compare(xw: AreaCrosswalk, ref: CrosswalkReference, tolerance: { share: number; relative: number }, areaScale: number) {
  const ours = new Map(xw.pairs.map((p) => [`${p.from}|${p.to}`, p]));
  const theirs = ref.pairs.from.map((from, i) => `${from}|${ref.pairs.to[i]}`);
  expect(new Set(ours.keys())).toEqual(new Set(theirs));
  let worstShare = 0;
  let worstArea = 0;
  const sourceArea = new Map(ref.sources.ids.map((id, i) => [String(id), ref.sources.area[i]]));
  theirs.forEach((key, i) => {
    const p = ours.get(key)!;
    worstShare = Math.max(worstShare, Math.abs(p.share - ref.pairs.share[i]));
    // Overlap areas relative to their county's area: a corner of a few hectares has no meaningful relative error of its own.
    worstArea = Math.max(worstArea, Math.abs(p.area - ref.pairs.area[i] * areaScale) / (sourceArea.get(p.from)! * areaScale));
  });
  expect(worstShare).toBeLessThanOrEqual(tolerance.share);
  expect(worstArea).toBeLessThanOrEqual(tolerance.relative);
  ref.sources.ids.forEach((id, i) => {
    const s = xw.sources.find((x) => x.id === String(id))!;
    expect(relative(s.area, ref.sources.area[i] * areaScale)).toBeLessThanOrEqual(tolerance.relative);
    // Every county lies inside the grid.
    expect(s.coverage).toBe(1);
  });
  // Grid cells no county reaches are exactly those sf leaves out of its result.
  expect(new Set(xw.uncoveredTo)).toEqual(new Set(ref.targets.ids.filter((id) => !ref.interpolated.cells.includes(id))));
  expect(xw.unmatchedFrom).toEqual([]);

  const data = readData();
  const targets = ref.interpolated.cells;
  for (const [column, rule] of [
    ["BIR74", { kind: "extensive" }],
    ["SID74", { kind: "extensive" }],
    ["SIDR74", { kind: "intensive", weighting: { by: "area" } }],
  ] as const) {
    const h = harmonise(xw.pairs, data.get(column)!, rule, { targets });
    expect(h.missing).toEqual([]);
    // An extensive value can be off by at most (share error) × (the contributing counties' totals): a cell
    // holding a sliver of a county has no meaningful relative error of its own. Intensive values are means.
    const scale = new Map<string, number>();
    if (rule.kind === "extensive") {
      for (const p of xw.pairs) scale.set(p.to, (scale.get(p.to) ?? 0) + data.get(column)!.get(p.from)!);
    }
    targets.forEach((cell, i) => {
      const value = h.values.get(cell)!;
      for (const expected of [ref.interpolated.st_interpolate_aw[column][i], ref.interpolated.formula[column][i]]) {
        const error = rule.kind === "extensive" ? Math.abs(value - expected) / Math.max(scale.get(cell)!, 1) : relative(value, expected);
        expect(error).toBeLessThanOrEqual(rule.kind === "extensive" ? tolerance.share : tolerance.relative);
      }
    });
  }
}

describe("area-weighted crosswalk against R's sf", () => {
  test("planar: NC counties (km) onto a 60 km grid agree with GEOS overlays and st_interpolate_aw to 1e-9", () => {
    const ref = crosswalkReference("planar");
    expect(ref.meta.coordinates).toBe("planar");
    const xw = crosswalkOf(CROSSWALK_FILES.planarCounties, CROSSWALK_FILES.planarGrid);
    expect({ coordinates: xw.coordinates, detected: xw.coordinatesDetected, unit: xw.areaUnit }).toEqual({ coordinates: "planar", detected: true, unit: "coordinate units²" });
    expect(xw.pairs.length).toBe(ref.pairs.from.length);
    compare(xw, ref, { share: 1e-9, relative: 1e-9 }, 1);
  });

  test("geographic: NC counties (lon/lat) onto a 0.5° grid agree with s2 within the great-circle/straight-edge difference", () => {
    const ref = crosswalkReference("geographic");
    expect(ref.meta.coordinates).toBe("geographic");
    const xw = crosswalkOf(CROSSWALK_FILES.geographicCounties, CROSSWALK_FILES.geographicGrid);
    expect({ coordinates: xw.coordinates, unit: xw.areaUnit, radius: xw.earthRadiusKm }).toEqual({ coordinates: "geographic", unit: "km²", radius: 6371.0088 });
    // sf reports m²; Tessera km².
    compare(xw, ref, { share: 2.5e-3, relative: 5e-3 }, 1e-6);
  });
});

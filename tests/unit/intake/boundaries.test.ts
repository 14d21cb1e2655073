import { readFileSync } from "node:fs";
import { boundaryIds, BoundaryError, inspectBoundaries, loadBoundaries } from "@/lib/intake";
import { fixture } from "./helpers";

const topojsonText = readFileSync(fixture("regions.topojson"), "utf8");
const geojsonText = readFileSync(fixture("regions.geojson"), "utf8");

function geojsonWith(properties: Record<string, unknown>[]): string {
  return JSON.stringify({
    type: "FeatureCollection",
    features: properties.map((props, i) => ({
      type: "Feature",
      properties: props,
      geometry: { type: "Polygon", coordinates: [[[i, 0], [i + 1, 0], [i + 1, 1], [i, 1], [i, 0]]] },
    })),
  });
}

describe("inspectBoundaries", () => {
  test("lists objects, geometry counts and candidate id properties (unique, non-empty)", () => {
    const summary = inspectBoundaries(loadBoundaries(topojsonText));
    expect(summary.sourceFormat).toBe("topojson");
    expect(summary.coordinates).toBe("planar");
    expect(summary.objects).toHaveLength(1);
    const [regions] = summary.objects;
    expect(regions).toMatchObject({ name: "regions", type: "GeometryCollection", geometries: 4, emptyGeometries: 0 });
    // 'kind' repeats and 'note' is empty on one feature, so neither qualifies.
    expect(regions.candidateIdProperties).toEqual(["code", "name", "num"]);
    expect(regions.properties.find((p) => p.name === "note")).toEqual({ name: "note", present: 3, distinct: 3, candidate: false, examples: ["x0", "x1", "x3"] });
  });

  test("GeoJSON is converted with topojson-server under the given object name", () => {
    const loaded = loadBoundaries(geojsonText, "uploaded");
    expect(loaded.sourceFormat).toBe("geojson");
    expect(Object.keys(loaded.topology.objects)).toEqual(["uploaded"]);
    expect(boundaryIds(loaded, "uploaded", "code")).toEqual(["R01", "R02", "R03", "R04"]);
  });

  test("longitude/latitude boxes are told apart from planar ones", () => {
    expect(inspectBoundaries(loadBoundaries(geojsonWith([{ code: "A" }]))).coordinates).toBe("lonlat");
  });
});

describe("boundaryIds", () => {
  const loaded = loadBoundaries(topojsonText);

  test("reads ids in geometry order; numbers become decimal strings", () => {
    expect(boundaryIds(loaded, "regions", "code")).toEqual(["R01", "R02", "R03", "R04"]);
    expect(boundaryIds(loaded, "regions", "num")).toEqual(["1", "2", "3", "4"]);
  });

  test("a missing object names the objects there are", () => {
    expect(() => boundaryIds(loaded, "districts", "code")).toThrow(new BoundaryError("the boundary file has no object 'districts'; its objects are: regions"));
  });

  test("a property missing on feature N", () => {
    const withGap = loadBoundaries(geojsonWith([{ code: "A" }, { code: "B" }, { name: "no code" }]));
    expect(() => boundaryIds(withGap, "regions", "code")).toThrow("property 'code' is missing on feature 3 of object 'regions' (its properties: name)");
    try {
      boundaryIds(withGap, "regions", "code");
    } catch (error) {
      expect(error).toBeInstanceOf(BoundaryError);
      expect((error as BoundaryError).feature).toBe(3);
    }
  });

  test("an empty id", () => {
    expect(() => boundaryIds(loadBoundaries(geojsonWith([{ code: "A" }, { code: " " }])), "regions", "code")).toThrow(
      "property 'code' is empty on feature 2 of object 'regions'",
    );
  });

  test("duplicate ids name every pair of features", () => {
    const duplicated = loadBoundaries(geojsonWith([{ code: "A" }, { code: "B" }, { code: "A" }, { code: "B" }]));
    expect(() => boundaryIds(duplicated, "regions", "code")).toThrow(
      "duplicate ids in property 'code' of object 'regions': 'A' (features 1 and 3), 'B' (features 2 and 4)",
    );
    expect(() => boundaryIds(loadBoundaries(geojsonWith([{ kind: "x" }, { kind: "x" }])), "regions", "kind")).toThrow(/duplicate ids/);
  });

  test("not JSON, or neither format", () => {
    expect(() => loadBoundaries("{oops")).toThrow(/the boundary file is not valid JSON/);
    expect(() => loadBoundaries('{"type":"Point","coordinates":[0,0]}')).toThrow(
      "the boundary file is neither TopoJSON (type 'Topology') nor GeoJSON (type 'FeatureCollection'); its type is 'Point'",
    );
  });
});

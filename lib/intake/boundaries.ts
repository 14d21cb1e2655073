/**
 * Boundary files: TopoJSON (preferred: neighbouring regions share arcs, which
 * contiguity weights rely on) or GeoJSON, converted with topojson-server so the
 * rest of Tessera sees one format.
 *
 * `inspectBoundaries` lists the objects of a topology, how many geometries each
 * holds and which properties could serve as the region code (present, non-empty
 * and unique on every geometry). `boundaryIds` reads the codes for a chosen
 * (object, idProperty) and refuses, with the feature number, anything that
 * would make region matching ambiguous.
 */
import { topology as toTopology } from "topojson-server";
import type { GeometryCollection, GeometryObject, Topology } from "topojson-specification";
import type { FeatureCollection, GeoJsonObject, GeoJsonProperties } from "geojson";

/** A boundary problem; `feature` is the 1-based position of the geometry in its object, when one is at fault. */
export class BoundaryError extends Error {
  readonly feature: number | null;
  constructor(message: string, feature: number | null = null) {
    super(message);
    this.name = "BoundaryError";
    this.feature = feature;
  }
}

export interface PropertySummary {
  name: string;
  /** Geometries where the property is present and non-empty. */
  present: number;
  distinct: number;
  /** True when present and non-empty on every geometry, with no repeats: usable as region code. */
  candidate: boolean;
  examples: string[];
}

export interface BoundaryObjectSummary {
  name: string;
  type: string;
  geometries: number;
  /** Geometries with a null geometry (a region with no shape). */
  emptyGeometries: number;
  /** Property names that qualify as region codes, best first (code/id-like names, then the rest). */
  candidateIdProperties: string[];
  properties: PropertySummary[];
}

export interface BoundarySummary {
  /** "topojson", or "geojson" when the file was converted on reading. */
  sourceFormat: "topojson" | "geojson";
  objects: BoundaryObjectSummary[];
  /** Planar when the bounding box leaves the longitude/latitude range (then distances are in the file's units). */
  coordinates: "lonlat" | "planar";
  bbox: [number, number, number, number] | null;
}

export interface LoadedBoundaries {
  topology: Topology;
  sourceFormat: "topojson" | "geojson";
}

function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === "object" && value !== null && !Array.isArray(value);
}

/**
 * Reads boundaries from JSON text. TopoJSON is kept; a GeoJSON FeatureCollection
 * (or Feature) becomes a topology with one object named `geojsonObjectName`
 * (no quantisation, so shared borders stay exact).
 * @throws BoundaryError when the text is not JSON or neither format.
 */
export function loadBoundaries(text: string, geojsonObjectName = "regions"): LoadedBoundaries {
  let parsed: unknown;
  try {
    parsed = JSON.parse(text.replace(/^\uFEFF/, ""));
  } catch (error) {
    throw new BoundaryError(`the boundary file is not valid JSON (${error instanceof Error ? error.message : String(error)})`);
  }
  if (!isRecord(parsed)) throw new BoundaryError("the boundary file is not a JSON object");
  if (parsed.type === "Topology") {
    if (!isRecord(parsed.objects) || !Array.isArray(parsed.arcs)) {
      throw new BoundaryError("the TopoJSON has no 'objects' map or no 'arcs' array");
    }
    return { topology: parsed as unknown as Topology, sourceFormat: "topojson" };
  }
  if (parsed.type === "FeatureCollection" || parsed.type === "Feature") {
    const collection: FeatureCollection =
      parsed.type === "Feature"
        ? { type: "FeatureCollection", features: [parsed as unknown as FeatureCollection["features"][number]] }
        : (parsed as unknown as FeatureCollection);
    if (!Array.isArray(collection.features)) throw new BoundaryError("the GeoJSON FeatureCollection has no 'features' array");
    const topology = toTopology({ [geojsonObjectName]: collection as GeoJsonObject }) as unknown as Topology;
    return { topology, sourceFormat: "geojson" };
  }
  throw new BoundaryError(`the boundary file is neither TopoJSON (type 'Topology') nor GeoJSON (type 'FeatureCollection'); its type is '${String(parsed.type)}'`);
}

function geometriesOf(object: GeometryObject<GeoJsonProperties>): GeometryObject<GeoJsonProperties>[] {
  return object.type === "GeometryCollection" ? (object as GeometryCollection<GeoJsonProperties>).geometries : [object];
}

function propertyText(value: unknown): string | null {
  if (typeof value === "string") return value.trim() === "" ? null : value.trim();
  if (typeof value === "number" && Number.isFinite(value)) return String(value);
  return null;
}

const ID_LIKE = /(^|_)(code|id|key|geoid|fid)$|code|^id/i;

function summariseObject(name: string, object: GeometryObject<GeoJsonProperties>): BoundaryObjectSummary {
  const geometries = geometriesOf(object);
  const stats = new Map<string, { present: number; values: Set<string>; examples: string[] }>();
  let emptyGeometries = 0;
  for (const geometry of geometries) {
    if (geometry.type === null) emptyGeometries += 1;
    const properties = isRecord(geometry.properties) ? geometry.properties : {};
    for (const [key, value] of Object.entries(properties)) {
      let stat = stats.get(key);
      if (!stat) {
        stat = { present: 0, values: new Set(), examples: [] };
        stats.set(key, stat);
      }
      const text = propertyText(value);
      if (text === null) continue;
      stat.present += 1;
      stat.values.add(text);
      if (stat.examples.length < 3) stat.examples.push(text);
    }
  }
  const properties: PropertySummary[] = [...stats.entries()].map(([property, stat]) => ({
    name: property,
    present: stat.present,
    distinct: stat.values.size,
    candidate: geometries.length > 0 && stat.present === geometries.length && stat.values.size === geometries.length,
    examples: stat.examples,
  }));
  const candidateIdProperties = properties
    .filter((property) => property.candidate)
    .map((property) => property.name)
    .sort((a, b) => Number(ID_LIKE.test(b)) - Number(ID_LIKE.test(a)));
  return { name, type: object.type ?? "null", geometries: geometries.length, emptyGeometries, candidateIdProperties, properties };
}

function bboxOf(topology: Topology): [number, number, number, number] | null {
  if (Array.isArray(topology.bbox) && topology.bbox.length >= 4) {
    const [x0, y0, x1, y1] = topology.bbox;
    return [x0, y0, x1, y1];
  }
  let x0 = Infinity;
  let y0 = Infinity;
  let x1 = -Infinity;
  let y1 = -Infinity;
  const transform = topology.transform;
  for (const arc of topology.arcs) {
    let x = 0;
    let y = 0;
    for (const position of arc) {
      // Quantised arcs are delta-encoded; decode to the file's coordinates.
      if (transform) {
        x += position[0];
        y += position[1];
      } else {
        x = position[0];
        y = position[1];
      }
      const px = transform ? x * transform.scale[0] + transform.translate[0] : x;
      const py = transform ? y * transform.scale[1] + transform.translate[1] : y;
      if (px < x0) x0 = px;
      if (px > x1) x1 = px;
      if (py < y0) y0 = py;
      if (py > y1) y1 = py;
    }
  }
  return Number.isFinite(x0) ? [x0, y0, x1, y1] : null;
}

/** Lists the objects of a topology with geometry counts and candidate id properties. */
export function inspectBoundaries(loaded: LoadedBoundaries): BoundarySummary {
  const objects = loaded.topology.objects;
  const bbox = bboxOf(loaded.topology);
  const lonlat = bbox !== null && bbox[0] >= -180 && bbox[2] <= 180 && bbox[1] >= -90 && bbox[3] <= 90;
  return {
    sourceFormat: loaded.sourceFormat,
    objects: Object.entries(objects).map(([name, object]) => summariseObject(name, object)),
    coordinates: lonlat ? "lonlat" : "planar",
    bbox,
  };
}

/**
 * The region codes of one object, in geometry order, as trimmed strings
 * (numbers are written in decimal, so 7 and "7" match but "007" does not).
 * @throws BoundaryError naming the object, the property and the 1-based feature
 *   number when the object is missing, the property is missing or empty on a
 *   feature, or two features share a code.
 */
export function boundaryIds(loaded: LoadedBoundaries, objectName: string, idProperty: string): string[] {
  const objects = loaded.topology.objects;
  const object = objects[objectName];
  if (object === undefined) {
    const names = Object.keys(objects);
    throw new BoundaryError(`the boundary file has no object '${objectName}'; its objects are: ${names.length > 0 ? names.join(", ") : "(none)"}`);
  }
  const geometries = geometriesOf(object);
  if (geometries.length === 0) throw new BoundaryError(`object '${objectName}' holds no geometries`);
  const ids: string[] = [];
  const firstFeature = new Map<string, number>();
  const duplicates: { id: string; earlier: number; feature: number }[] = [];
  geometries.forEach((geometry, index) => {
    const feature = index + 1;
    const properties = isRecord(geometry.properties) ? geometry.properties : null;
    if (properties === null || !(idProperty in properties)) {
      const available = properties ? Object.keys(properties).join(", ") : "none";
      throw new BoundaryError(`property '${idProperty}' is missing on feature ${feature} of object '${objectName}' (its properties: ${available})`, feature);
    }
    const id = propertyText(properties[idProperty]);
    if (id === null) throw new BoundaryError(`property '${idProperty}' is empty on feature ${feature} of object '${objectName}'`, feature);
    const earlier = firstFeature.get(id);
    if (earlier !== undefined) duplicates.push({ id, earlier, feature });
    else firstFeature.set(id, feature);
    ids.push(id);
  });
  if (duplicates.length > 0) {
    // Name every repeat (up to a few) so one upload round fixes them all.
    const listed = duplicates
      .slice(0, 5)
      .map(({ id, earlier, feature }) => `'${id}' (features ${earlier} and ${feature})`)
      .join(", ");
    const more = duplicates.length > 5 ? ` and ${duplicates.length - 5} more` : "";
    throw new BoundaryError(`duplicate ids in property '${idProperty}' of object '${objectName}': ${listed}${more}`, duplicates[0].feature);
  }
  return ids;
}

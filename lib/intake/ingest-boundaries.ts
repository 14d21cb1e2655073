/**
 * Boundary ingest: reads a boundary version's file from S3, converts GeoJSON
 * to TopoJSON (topojson-server), checks the chosen object, id property and
 * every geometry, and stores the regions — all or nothing: the regions, the
 * converted topology's key and the state change are written in one
 * transaction; a rejection stores only the report.
 *
 * Boundary files are read whole (they must be parsed as one JSON document);
 * panels are the large uploads and those are streamed.
 */
import { createHash } from "node:crypto";
import type { Topology, GeometryObject } from "topojson-specification";
import type { GeoJsonProperties } from "geojson";
import { putObject } from "@/lib/storage/s3";
import { StoredFileChecksumError } from "@/lib/storage/errors";
import { contiguityWeights, summariseWeights } from "@/lib/spatial";
import { BoundaryError, boundaryIds, inspectBoundaries, loadBoundaries, type BoundarySummary } from "./boundaries";
import { inTransaction, intakePool } from "./ingest-db";
import { readVersionFile, sha256Hex, versionTopologyKey } from "./version-files";
import type { VersionDiff } from "@/models/intake-types";

export interface BoundaryProblem {
  /** 1-based position of the geometry in its object, or null for the whole file. */
  feature: number | null;
  region: string | null;
  message: string;
}

export interface BoundaryReport {
  ok: boolean;
  sourceFormat: "topojson" | "geojson" | null;
  coordinates: "planar" | "lonlat" | null;
  bbox: [number, number, number, number] | null;
  object: string;
  idProperty: string;
  nameProperty: string | null;
  regionCount: number;
  objects: BoundarySummary["objects"];
  /** Queen contiguity of the regions, as a first look (the Boundaries screen shows other rules). */
  contiguity: { rule: string; links: number; meanNeighbours: number; islands: string[]; components: number } | null;
  errors: BoundaryProblem[];
  errorCount: number;
  warnings: BoundaryProblem[];
  warningCount: number;
}

export type BoundaryIngestOutcome =
  | { state: "validated"; report: BoundaryReport; diff: VersionDiff }
  | { state: "rejected"; report: BoundaryReport }
  | { state: "skipped"; reason: string };

const MAX_LISTED = 100;

function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === "object" && value !== null && !Array.isArray(value);
}

/**
 * Geometry checks the engine relies on: polygons only, arc indexes in range,
 * finite coordinates, rings with at least four positions.
 */
export function checkGeometries(topology: Topology, objectName: string, ids: readonly string[]): BoundaryProblem[] {
  const problems: BoundaryProblem[] = [];
  const arcCount = topology.arcs.length;
  const arcLengths: number[] = [];
  topology.arcs.forEach((arc, index) => {
    arcLengths.push(Array.isArray(arc) ? arc.length : 0);
    if (!Array.isArray(arc) || arc.some((p) => !Array.isArray(p) || !Number.isFinite(p[0]) || !Number.isFinite(p[1]))) {
      problems.push({ feature: null, region: null, message: `arc ${index} has a position that is not a pair of finite numbers` });
    }
  });
  const object = topology.objects[objectName];
  const geometries: GeometryObject<GeoJsonProperties>[] = object.type === "GeometryCollection" ? object.geometries : [object];
  const ringLength = (ring: readonly number[]): number => {
    // Consecutive arcs share their joining position.
    let positions = 0;
    for (const index of ring) {
      const a = index < 0 ? ~index : index;
      positions += (arcLengths[a] ?? 0) - (positions > 0 ? 1 : 0);
    }
    return positions;
  };
  geometries.forEach((geometry, i) => {
    const feature = i + 1;
    const region = ids[i] ?? null;
    const where = `feature ${feature}${region ? ` (region '${region}')` : ""}`;
    let polygons: number[][][];
    if (geometry.type === "Polygon") polygons = [geometry.arcs];
    else if (geometry.type === "MultiPolygon") polygons = geometry.arcs;
    else if (geometry.type === null) {
      problems.push({ feature, region, message: `${where} has no geometry; every region needs a polygon` });
      return;
    } else {
      problems.push({ feature, region, message: `${where} is a ${String(geometry.type)}; regions must be Polygon or MultiPolygon` });
      return;
    }
    if (!Array.isArray(polygons) || polygons.length === 0) {
      problems.push({ feature, region, message: `${where} has an empty polygon` });
      return;
    }
    for (const polygon of polygons) {
      for (const ring of polygon) {
        const bad = ring.find((index) => !Number.isInteger(index) || (index < 0 ? ~index : index) >= arcCount);
        if (bad !== undefined) {
          problems.push({ feature, region, message: `${where} refers to arc ${bad}, but the file has ${arcCount} arcs` });
          return;
        }
        if (ringLength(ring) < 4) {
          problems.push({ feature, region, message: `${where} has a ring with fewer than 4 positions (a polygon ring must close on itself)` });
          return;
        }
      }
    }
  });
  return problems;
}

function emptyReport(objectName: string, idProperty: string, nameProperty: string | null): BoundaryReport {
  return {
    ok: false,
    sourceFormat: null,
    coordinates: null,
    bbox: null,
    object: objectName,
    idProperty,
    nameProperty,
    regionCount: 0,
    objects: [],
    contiguity: null,
    errors: [],
    errorCount: 0,
    warnings: [],
    warningCount: 0,
  };
}

/** Pure part of the boundary check (no S3, no database): used by the ingest and by tests. */
export function checkBoundaryText(
  text: string,
  objectName: string,
  idProperty: string,
  nameProperty: string | null,
): { report: BoundaryReport; topology: Topology | null; ids: string[]; names: (string | null)[]; attributes: Record<string, unknown>[] } {
  const report = emptyReport(objectName, idProperty, nameProperty);
  const fail = (problem: BoundaryProblem) => {
    report.errors.push(problem);
    report.errorCount = report.errors.length;
    return { report, topology: null, ids: [], names: [], attributes: [] };
  };
  if (text.trim() === "") return fail({ feature: null, region: null, message: "the boundary file is empty" });
  let loaded;
  try {
    loaded = loadBoundaries(text, objectName);
  } catch (err) {
    return fail({ feature: null, region: null, message: err instanceof Error ? err.message : String(err) });
  }
  const summary = inspectBoundaries(loaded);
  report.sourceFormat = summary.sourceFormat;
  report.coordinates = summary.coordinates;
  report.bbox = summary.bbox;
  report.objects = summary.objects;
  let ids: string[];
  try {
    ids = boundaryIds(loaded, objectName, idProperty);
  } catch (err) {
    if (err instanceof BoundaryError) return fail({ feature: err.feature, region: null, message: err.message });
    throw err;
  }
  report.regionCount = ids.length;
  const topology = loaded.topology;
  const geometryProblems = checkGeometries(topology, objectName, ids);
  if (geometryProblems.length > 0) {
    report.errors = geometryProblems.slice(0, MAX_LISTED);
    report.errorCount = geometryProblems.length;
    return { report, topology: null, ids: [], names: [], attributes: [] };
  }
  const object = topology.objects[objectName];
  const geometries = object.type === "GeometryCollection" ? object.geometries : [object];
  const attributes = geometries.map((g) => (isRecord(g.properties) ? g.properties : {}));
  let names: (string | null)[] = ids.map(() => null);
  if (nameProperty) {
    const missing: number[] = [];
    names = attributes.map((p, i) => {
      const v = p[nameProperty];
      if (typeof v === "string" && v.trim() !== "") return v.trim();
      if (typeof v === "number") return String(v);
      missing.push(i + 1);
      return null;
    });
    if (missing.length === ids.length) {
      return fail({ feature: 1, region: ids[0] ?? null, message: `property '${nameProperty}' (chosen for region names) is missing on every feature of object '${objectName}'` });
    }
    for (const feature of missing.slice(0, MAX_LISTED)) {
      report.warnings.push({ feature, region: ids[feature - 1] ?? null, message: `feature ${feature} has no '${nameProperty}'; its code is shown instead` });
    }
    report.warningCount += missing.length;
  }
  try {
    const queen = contiguityWeights(topology, { object: objectName, idProperty, rule: "queen" });
    const summaryW = summariseWeights(queen);
    report.contiguity = {
      rule: "queen",
      links: summaryW.links,
      meanNeighbours: summaryW.n > 0 ? summaryW.links / summaryW.n : 0,
      islands: [...summaryW.islands],
      components: summaryW.components.count,
    };
    if (summaryW.islands.length > 0) {
      report.warnings.push({
        feature: null,
        region: null,
        message: `${summaryW.islands.length} region(s) share no border or corner with another (${summaryW.islands.slice(0, 10).join(", ")}${summaryW.islands.length > 10 ? ", …" : ""}); analyses must choose an island policy`,
      });
      report.warningCount += 1;
    }
  } catch (err) {
    return fail({ feature: null, region: null, message: `contiguity could not be computed: ${err instanceof Error ? err.message : String(err)}` });
  }
  report.ok = true;
  return { report, topology, ids, names, attributes };
}

interface BoundaryVersionRow {
  id: number;
  boundary_set_id: number;
  version: number;
  state: string;
  s3_key: string;
  file_key: string | null;
  sha256: string;
  object_name: string;
  id_property: string;
  name_property: string | null;
}

async function markRejected(versionId: number, report: BoundaryReport): Promise<void> {
  await intakePool().query(
    `UPDATE boundary_versions SET state = 'rejected', report = $2, validated_at = now(), updated_at = now() WHERE id = $1 AND state = 'uploaded'`,
    [versionId, JSON.stringify(report)],
  );
}

/**
 * Where a version's TopoJSON is stored: a TopoJSON file is its own copy as it
 * is; a GeoJSON file is converted and stored beside that copy. Rows made
 * before versions had copies keep the older key beside the upload's object.
 */
export function topologyKeyFor(version: { s3_key: string; file_key: string | null }, readsOwnCopy: boolean, topologySha256: string): string {
  if (version.file_key === null) return `${version.s3_key.replace(/\/[^/]*$/, "")}/topology-${createHash("sha256").update(version.s3_key).digest("hex").slice(0, 12)}.json`;
  return readsOwnCopy ? version.file_key : versionTopologyKey(version.file_key, topologySha256);
}

/**
 * Validates and stores one boundary version (state `uploaded`); idempotent
 * like {@link ingestPanelVersion}.
 */
export async function ingestBoundaryVersion(versionId: number, options: { text?: string } = {}): Promise<BoundaryIngestOutcome> {
  const { rows } = await intakePool().query<BoundaryVersionRow>(
    "SELECT id, boundary_set_id, version, state, s3_key, file_key, sha256, object_name, id_property, name_property FROM boundary_versions WHERE id = $1",
    [versionId],
  );
  const version = rows[0];
  if (!version) return { state: "skipped", reason: `boundary version ${versionId} does not exist` };
  if (version.state !== "uploaded") return { state: "skipped", reason: `boundary version ${versionId} is already ${version.state}` };

  const fail = async (message: string): Promise<BoundaryIngestOutcome> => {
    const report = emptyReport(version.object_name, version.id_property, version.name_property);
    report.errors.push({ feature: null, region: null, message });
    report.errorCount = 1;
    await markRejected(versionId, report);
    return { state: "rejected", report };
  };
  let text: string;
  try {
    if (options.text !== undefined) text = options.text;
    else {
      // The version's copy was made after the upload's check, while the upload's PUT URL was still valid: what is read must still be what was checked.
      text = (await readVersionFile(version.s3_key, version.sha256, `boundary version ${version.version} (id ${versionId})`)).toString("utf8");
    }
  } catch (err) {
    if (err instanceof StoredFileChecksumError) {
      return fail(`the stored file changed after its upload was checked (checksum ${err.actual.slice(0, 12)}… instead of ${err.expected.slice(0, 12)}…); upload it again`);
    }
    return fail(`the boundary file could not be read from storage: ${err instanceof Error ? err.message : String(err)}`);
  }
  const checked = checkBoundaryText(text, version.object_name, version.id_property, version.name_property);
  if (!checked.report.ok || !checked.topology) {
    await markRejected(versionId, checked.report);
    return { state: "rejected", report: checked.report };
  }
  // What maps and runs read, under a key no URL was ever signed for, with its
  // checksum recorded so every read can verify it. A GeoJSON file's converted
  // topology is stored before the transaction; if the transaction then fails,
  // the orphan object is harmless and overwritten on retry.
  const sourceFormat = checked.report.sourceFormat === "geojson" ? "geojson" : "topojson";
  const topologyText = sourceFormat === "geojson" ? JSON.stringify(checked.topology) : text;
  // A TopoJSON file is read from the version's copy itself, whose checksum is the upload's.
  const readsOwnCopy = sourceFormat === "topojson" && version.file_key !== null && options.text === undefined;
  const topologySha256 = readsOwnCopy ? version.sha256 : sha256Hex(topologyText);
  const topologyKey = topologyKeyFor(version, readsOwnCopy, topologySha256);
  if (!readsOwnCopy) await putObject(topologyKey, topologyText, "application/json");
  try {
    const diff = await inTransaction(async (client) => {
      const locked = await client.query<{ state: string }>("SELECT state FROM boundary_versions WHERE id = $1 FOR UPDATE", [versionId]);
      if (locked.rows[0]?.state !== "uploaded") throw new Error(`boundary version ${versionId} changed state during validation`);
      await client.query(
        `INSERT INTO regions (boundary_version_id, code, name, attributes)
         SELECT $1, code, name, attributes FROM unnest($2::text[], $3::text[], $4::jsonb[]) AS t(code, name, attributes)`,
        [versionId, checked.ids, checked.names, checked.attributes.map((a) => JSON.stringify(a))],
      );
      const previous = await client.query<{ id: number; version: number }>(
        `SELECT id, version FROM boundary_versions WHERE boundary_set_id = $1 AND version < $2
            AND state IN ('validated','published','archived') ORDER BY version DESC LIMIT 1`,
        [version.boundary_set_id, version.version],
      );
      const prev = previous.rows[0];
      let diff: VersionDiff = { previousVersion: null, previousVersionId: null, regions: { added: [], removed: [], addedCount: 0, removedCount: 0 } };
      if (prev) {
        const before = await client.query<{ code: string }>("SELECT code FROM regions WHERE boundary_version_id = $1", [prev.id]);
        const beforeSet = new Set(before.rows.map((r) => r.code));
        const nowSet = new Set(checked.ids);
        const added = checked.ids.filter((c) => !beforeSet.has(c)).sort();
        const removed = [...beforeSet].filter((c) => !nowSet.has(c)).sort();
        diff = {
          previousVersion: prev.version,
          previousVersionId: prev.id,
          regions: { added: added.slice(0, 200), removed: removed.slice(0, 200), addedCount: added.length, removedCount: removed.length },
        };
      }
      await client.query(
        `UPDATE boundary_versions SET state = 'validated', s3_key = $2, topology_sha256 = $6, region_count = $3, report = $4, diff = $5,
                validated_at = now(), updated_at = now() WHERE id = $1`,
        [versionId, topologyKey, checked.ids.length, JSON.stringify(checked.report), JSON.stringify(diff), topologySha256],
      );
      return diff;
    });
    return { state: "validated", report: checked.report, diff };
  } catch (err) {
    const report = { ...checked.report, ok: false, errors: [{ feature: null, region: null, message: `the regions could not be stored (nothing was kept): ${err instanceof Error ? err.message : String(err)}` }], errorCount: 1 };
    await markRejected(versionId, report);
    return { state: "rejected", report };
  }
}

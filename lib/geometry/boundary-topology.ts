/**
 * Boundary geometry for analyses and maps: a boundary version's stored
 * TopoJSON (checksum-verified, a few kept in memory), its region codes and
 * names in geometry order, and whether its coordinates are longitude/latitude
 * or planar. Server-only; does not authorise (a route handler checks
 * `boundaryVersionInWorkspace` after requireMember).
 */
import { QueryTypes } from "sequelize";
import type { Topology } from "topojson-specification";
import { db } from "@/lib/db";
import { readVersionFile } from "@/lib/intake/version-files";
import type { VersionState } from "@/models/intake-types";

export interface BoundaryTopology {
  boundaryVersionId: number;
  state: VersionState;
  /** The stored TopoJSON (GeoJSON uploads were converted at intake). */
  topology: Topology;
  objectName: string;
  idProperty: string;
  nameProperty: string | null;
  /** Region codes in geometry order. */
  regionCodes: string[];
  /** Region names by code (null when no name property was chosen). */
  regionNames: Map<string, string | null>;
  coordinates: "planar" | "lonlat";
}

// checksum was verified are kept, keyed by id, key and checksum (validation moves a GeoJSON version's key).
const topologyCache = new Map<string, { topology: Topology; coordinates: "planar" | "lonlat" }>();
const TOPOLOGY_CACHE_SIZE = 4;

/** Forgets the verified topologies this process keeps (tests that change a stored file behind the app's back). */
export function forgetCachedTopologies(): void {
  topologyCache.clear();
}

interface TopologySource {
  s3_key: string;
  file_key: string | null;
  sha256: string;
  topology_sha256: string | null;
  format: string;
}

/**
 * The SHA-256 the file at s3_key must have: recorded at validation; before it,
 * the version's own copy's; null only for a GeoJSON version validated before
 * checksums of converted topologies were recorded (read as before, unverified).
 */
export function expectedTopologySha256(v: TopologySource): string | null {
  if (v.topology_sha256 !== null) return v.topology_sha256;
  if (v.s3_key === v.file_key || v.format === "topojson") return v.sha256;
  return null;
}

function coordinatesOf(topology: Topology): "planar" | "lonlat" {
  let bbox = topology.bbox as number[] | undefined;
  if (!bbox || bbox.length < 4) {
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    // A rejected upload's stored file may be GeoJSON or broken TopoJSON: no arcs, no extent.
    for (const arc of Array.isArray(topology.arcs) ? topology.arcs : []) {
      if (!Array.isArray(arc)) continue;
      let x = 0, y = 0;
      for (const point of arc) {
        if (!Array.isArray(point)) continue;
        const [px, py] = point as number[];
        if (topology.transform) {
          x += px;
          y += py;
        } else {
          x = px;
          y = py;
        }
        const gx = topology.transform ? x * topology.transform.scale[0] + topology.transform.translate[0] : x;
        const gy = topology.transform ? y * topology.transform.scale[1] + topology.transform.translate[1] : y;
        x0 = Math.min(x0, gx); x1 = Math.max(x1, gx); y0 = Math.min(y0, gy); y1 = Math.max(y1, gy);
      }
    }
    bbox = [x0, y0, x1, y1];
  }
  return bbox[0] >= -180 && bbox[2] <= 180 && bbox[1] >= -90 && bbox[3] <= 90 ? "lonlat" : "planar";
}

/**
 * The stored TopoJSON of a boundary version with the object and properties
 * that hold the regions, and the region codes in geometry order.
 * @throws naming the boundary version when it does not exist or its file cannot be read.
 */
export async function loadBoundaryTopology(boundaryVersionId: number): Promise<BoundaryTopology> {
  const rows = await db().query<
    { id: number; version: number; set_name: string; state: VersionState; object_name: string; id_property: string; name_property: string | null } & TopologySource
  >(
    `SELECT v.id, v.version, s.name AS set_name, v.state, v.s3_key, v.file_key, v.sha256, v.topology_sha256, v.format, v.object_name, v.id_property, v.name_property
       FROM boundary_versions v JOIN boundary_sets s ON s.id = v.boundary_set_id WHERE v.id = :id`,
    { replacements: { id: boundaryVersionId }, type: QueryTypes.SELECT },
  );
  const version = rows[0];
  if (!version) throw new Error(`boundary version ${boundaryVersionId} does not exist`);
  const expected = expectedTopologySha256(version);
  const cacheKey = `${boundaryVersionId}\u0000${version.s3_key}\u0000${expected ?? ""}`;
  let cached = topologyCache.get(cacheKey);
  if (!cached) {
    // Throws StoredFileChecksumError, naming the version, when the stored file is not the one recorded.
    const bytes = await readVersionFile(version.s3_key, expected, `boundary version ${version.version} of '${version.set_name}' (id ${boundaryVersionId})`);
    let topology: Topology;
    try {
      topology = JSON.parse(bytes.toString("utf8")) as Topology;
    } catch (err) {
      throw new Error(`boundary version ${boundaryVersionId}: stored TopoJSON ${version.s3_key} is not JSON (${err instanceof Error ? err.message : String(err)})`);
    }
    cached = { topology, coordinates: coordinatesOf(topology) };
    topologyCache.set(cacheKey, cached);
    if (topologyCache.size > TOPOLOGY_CACHE_SIZE) {
      const oldest = topologyCache.keys().next().value;
      if (oldest !== undefined) topologyCache.delete(oldest);
    }
  }
  const regionRows = await db().query<{ code: string; name: string | null }>("SELECT code, name FROM regions WHERE boundary_version_id = :id ORDER BY id", {
    replacements: { id: boundaryVersionId },
    type: QueryTypes.SELECT,
  });
  return {
    boundaryVersionId,
    state: version.state,
    topology: cached.topology,
    objectName: version.object_name,
    idProperty: version.id_property,
    nameProperty: version.name_property,
    regionCodes: regionRows.map((r) => r.code),
    regionNames: new Map(regionRows.map((r) => [r.code, r.name])),
    coordinates: cached.coordinates,
  };
}

/** Whether a boundary version belongs to the workspace (and, when `publishedOnly`, is published). */
export async function boundaryVersionInWorkspace(workspaceId: number, boundaryVersionId: number, publishedOnly = true): Promise<boolean> {
  const rows = await db().query<{ state: VersionState }>(
    "SELECT bv.state FROM boundary_versions bv JOIN boundary_sets s ON s.id = bv.boundary_set_id WHERE bv.id = :id AND s.workspace_id = :workspaceId",
    { replacements: { id: boundaryVersionId, workspaceId }, type: QueryTypes.SELECT },
  );
  const row = rows[0];
  return Boolean(row) && (!publishedOnly || row.state === "published");
}

/**
 * A synthetic panel of any size on a square lattice, brought in through the
 * same intake path a steward uses (presigned PUT to S3, size and SHA-256
 * check, validation and COPY ingest, publish). Used by the worker fault and
 * several-workers tests and by the `workers` benchmark, which need runs large
 * enough that a piece takes seconds.
 *
 * The lattice is GeoJSON in planar kilometres (10 km squares far outside the
 * longitude/latitude range), converted to TopoJSON on intake; neighbouring
 * squares share edges, so queen and rook weights work as on real boundaries.
 * Values are a smooth field per indicator (so there is clustering to find)
 * plus seeded noise, drifting by period. Invented data; nothing real.
 */
import { createHash } from "node:crypto";
import { authorizeMember, type MemberContext } from "@/lib/auth/guard";
import { completeUpload, createBoundaryVersion, createPanelVersion, createUpload, publishVersion } from "@/lib/intake/service";
import { ingestBoundaryVersion } from "@/lib/intake/ingest-boundaries";
import { ingestPanelVersion } from "@/lib/intake/ingest-panel";

export interface LatticeSpec {
  columns: number;
  rows: number;
  indicators: number;
  periods: number;
  /** Seeds the noise; the same spec and seed give byte-identical files. */
  seed: number;
}

export interface PublishedLattice {
  panelVersionId: number;
  boundaryVersionId: number;
  indicators: string[];
  periods: string[];
  regions: string[];
}

const CELL_KM = 10;
// Far outside ±180/±90, so intake treats the coordinates as planar.
const ORIGIN_KM = 100_000;

export function regionCode(index: number): string {
  return `L${String(index).padStart(5, "0")}`;
}
export function indicatorCode(index: number): string {
  return `lattice_${String(index + 1).padStart(2, "0")}`;
}
export function periodKey(index: number): string {
  return String(2001 + index);
}

/** The lattice as a GeoJSON FeatureCollection of squares, row by row. */
export function latticeGeoJson(columns: number, rows: number): string {
  const features: string[] = [];
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < columns; c++) {
      const x0 = ORIGIN_KM + c * CELL_KM;
      const y0 = ORIGIN_KM + r * CELL_KM;
      const x1 = x0 + CELL_KM;
      const y1 = y0 + CELL_KM;
      const ring = `[[${x0},${y0}],[${x1},${y0}],[${x1},${y1}],[${x0},${y1}],[${x0},${y0}]]`;
      features.push(
        `{"type":"Feature","properties":{"code":"${regionCode(r * columns + c)}","name":"Square ${r + 1}-${c + 1}"},"geometry":{"type":"Polygon","coordinates":[${ring}]}}`,
      );
    }
  }
  return `{"type":"FeatureCollection","features":[\n${features.join(",\n")}\n]}\n`;
}

/** The panel as a long CSV: region,period,indicator,value. */
export function latticePanelCsv(spec: LatticeSpec): string {
  let state = spec.seed >>> 0 || 1;
  const noise = () => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    return state / 4294967296 - 0.5;
  };
  const lines = ["region,period,indicator,value"];
  for (let k = 0; k < spec.indicators; k++) {
    // Each indicator its own wave length and direction; the last of every three has no structure at all.
    const smooth = k % 3 === 2 ? 0 : 1;
    const wave = 3 + (k % 5);
    for (let t = 0; t < spec.periods; t++) {
      for (let r = 0; r < spec.rows; r++) {
        for (let c = 0; c < spec.columns; c++) {
          const field = smooth * (Math.sin((c + k) / wave) + Math.cos((r - k) / (wave + 1)));
          const value = 50 + 8 * field * (1 - t / (2 * spec.periods)) + 4 * noise() + 0.2 * t;
          lines.push(`${regionCode(r * spec.columns + c)},${periodKey(t)},${indicatorCode(k)},${value.toFixed(4)}`);
        }
      }
    }
  }
  return `${lines.join("\n")}\n`;
}

/** Uploads one file as the browser does: a presigned PUT, then the server-side size and checksum check. */
async function upload(member: MemberContext, kind: "boundaries" | "panel", fileName: string, text: string): Promise<string> {
  const bytes = Buffer.from(text, "utf8");
  const sha256 = createHash("sha256").update(bytes).digest("hex");
  const ticket = await createUpload(member, { kind, fileName, size: bytes.length, sha256 });
  const response = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: bytes });
  if (!response.ok) throw new Error(`PUT ${fileName} to S3 failed: HTTP ${response.status} ${await response.text()}`);
  const checked = await completeUpload(member, ticket.uploadId);
  if (checked.state !== "received") throw new Error(`upload of ${fileName} failed: ${checked.error}`);
  return ticket.uploadId;
}

/**
 * Publishes a lattice boundary set and its panel in the member's workspace
 * (the member needs the data.curate capability: a steward or manager).
 * `name` names the boundary set and the panel.
 */
export async function publishLatticePanel(userId: number, workspaceSlug: string, spec: LatticeSpec, name: string): Promise<PublishedLattice> {
  const member = await authorizeMember(userId, workspaceSlug, "data.curate");
  const boundaryUpload = await upload(member, "boundaries", "lattice.geojson", latticeGeoJson(spec.columns, spec.rows));
  const boundary = await createBoundaryVersion(
    member,
    { uploadId: boundaryUpload, setName: `${name} squares`, objectName: "regions", idProperty: "code", nameProperty: "name" },
    { enqueueJob: false },
  );
  const boundaryOutcome = await ingestBoundaryVersion(boundary.id);
  if (boundaryOutcome.state !== "validated") throw new Error(`lattice boundaries not validated: ${JSON.stringify(boundaryOutcome).slice(0, 500)}`);
  await publishVersion(member, "boundaries", boundary.id);

  const panelUpload = await upload(member, "panel", "lattice-panel.csv", latticePanelCsv(spec));
  const panel = await createPanelVersion(
    member,
    {
      uploadId: panelUpload,
      panelName: `${name} indicators`,
      boundarySetId: boundary.parentId,
      boundaryVersionId: boundary.id,
      decimal: ".",
      mapping: { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" },
      remember: false,
    },
    { enqueueJob: false },
  );
  const panelOutcome = await ingestPanelVersion(panel.id);
  if (panelOutcome.state !== "validated") throw new Error(`lattice panel not validated: ${JSON.stringify(panelOutcome).slice(0, 500)}`);
  await publishVersion(member, "panel", panel.id);
  return {
    panelVersionId: panel.id,
    boundaryVersionId: boundary.id,
    indicators: Array.from({ length: spec.indicators }, (_, k) => indicatorCode(k)),
    periods: Array.from({ length: spec.periods }, (_, t) => periodKey(t)),
    regions: Array.from({ length: spec.columns * spec.rows }, (_, i) => regionCode(i)),
  };
}

import { QueryTypes } from "sequelize";
import { POST as postUpload } from "@/app/api/w/[slug]/intake/uploads/route";
import { POST as postComplete } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/complete/route";
import { POST as postBoundaries } from "@/app/api/w/[slug]/intake/boundaries/route";
import { POST as postPanels } from "@/app/api/w/[slug]/intake/panels/route";
import { POST as postPublish } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/publish/route";
import { POST as postRun } from "@/app/api/w/[slug]/runs/route";
import { db } from "@/lib/db";
import { waitFor } from "@/tests/helpers/wait";
import { ctx, jsonRequest, sha256 } from "@/tests/integration/intake/fixtures";

// The steward's whole path through the real route handlers, S3 (presigned
// PUT), the worker and PostgreSQL — used where a test needs data that came in
// exactly as users bring it. The caller signs in (the session stand-in) first.

export type Kind = "boundaries" | "panel";
export const LONG_MAPPING = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" } as const;

async function ok(response: Response, status: number, what: string): Promise<Record<string, unknown>> {
  const body = (await response.json()) as Record<string, unknown>;
  if (response.status !== status) throw new Error(`${what}: expected ${status}, got ${response.status}: ${JSON.stringify(body)}`);
  return body;
}

export interface Ticket {
  uploadId: string;
  /** The presigned PUT URL; it stays valid for an hour, also after the upload was checked. */
  url: string;
  contentType: string;
}

/** Ticket, browser-like PUT to the presigned URL, completion; returns the upload id. */
export async function uploadThroughRoutes(slug: string, kind: Kind, fileName: string, content: string): Promise<string> {
  return (await ticketThroughRoutes(slug, kind, fileName, content)).uploadId;
}

/** Like uploadThroughRoutes, returning the whole ticket (with the presigned URL). */
export async function ticketThroughRoutes(slug: string, kind: Kind, fileName: string, content: string): Promise<Ticket> {
  const ticket = await ok(
    await postUpload(jsonRequest("POST", { kind, fileName, size: Buffer.byteLength(content), sha256: sha256(content) }), ctx({ slug })),
    201,
    `upload ticket for ${fileName}`,
  );
  const put = await fetch(String(ticket.url), { method: "PUT", headers: { "Content-Type": String(ticket.contentType) }, body: content });
  if (!put.ok) throw new Error(`PUT of ${fileName} to S3 answered ${put.status}`);
  await ok(await postComplete(jsonRequest("POST"), ctx({ slug, uploadId: String(ticket.uploadId) })), 200, `completing ${fileName}`);
  return { uploadId: String(ticket.uploadId), url: String(ticket.url), contentType: String(ticket.contentType) };
}

export async function versionState(kind: Kind, id: number): Promise<string> {
  const table = kind === "panel" ? "panel_versions" : "boundary_versions";
  const rows = await db().query<{ state: string }>(`SELECT state FROM ${table} WHERE id = $1`, { bind: [id], type: QueryTypes.SELECT });
  return rows[0]?.state ?? "missing";
}

/** Waits for the worker to validate or reject a version; returns the state it ends in. */
export async function settled(kind: Kind, id: number): Promise<string> {
  return waitFor(`${kind} version ${id} to leave 'uploaded'`, async () => {
    const s = await versionState(kind, id);
    return s !== "uploaded" ? s : null;
  }, { timeoutMs: 60_000, intervalMs: 250 });
}

/** Waits for the worker to validate a version; throws unless it ends `validated`. */
export async function validated(kind: Kind, id: number): Promise<void> {
  const state = await settled(kind, id);
  if (state !== "validated") throw new Error(`${kind} version ${id} ended ${state}, not validated`);
}

export async function publish(slug: string, kind: Kind, id: number): Promise<void> {
  await ok(await postPublish(jsonRequest("POST"), ctx({ slug, kind, versionId: String(id) })), 200, `publishing ${kind} version ${id}`);
}

/** A boundary version from GeoJSON or TopoJSON text (objects "regions", property "code"), validated by the worker and published. */
export async function publishedBoundaries(slug: string, text: string, setName: string, fileName = "grid.geojson"): Promise<{ id: number; setId: number; uploadId: string; ticket: Ticket }> {
  const ticket = await ticketThroughRoutes(slug, "boundaries", fileName, text);
  const id = await newBoundaryVersion(slug, { uploadId: ticket.uploadId, setName });
  await validated("boundaries", id.id);
  await publish(slug, "boundaries", id.id);
  return { id: id.id, setId: id.setId, uploadId: ticket.uploadId, ticket };
}

/** POST /intake/boundaries for a received upload (objects "regions", property "code"); the worker validates it. */
export async function newBoundaryVersion(slug: string, target: { uploadId: string; setName: string } | { uploadId: string; boundarySetId: number }): Promise<{ id: number; setId: number }> {
  const created = await ok(await postBoundaries(jsonRequest("POST", { ...target, objectName: "regions", idProperty: "code", nameProperty: "name" }), ctx({ slug })), 202, "new boundary version");
  return { id: Number(created.id), setId: Number(created.parentId) };
}

/** A long-layout panel version from CSV text over `boundarySetId`, validated (COPY-ingested) by the worker and published. */
export async function publishedPanel(slug: string, csv: string, target: { panelName: string; boundarySetId: number } | { panelId: number }): Promise<{ id: number; panelId: number; uploadId: string }> {
  const uploadId = await uploadThroughRoutes(slug, "panel", "panel.csv", csv);
  const created = await ok(await postPanels(jsonRequest("POST", { uploadId, decimal: ".", mapping: LONG_MAPPING, ...target }), ctx({ slug })), 202, "new panel version");
  const id = Number(created.id);
  await validated("panel", id);
  await publish(slug, "panel", id);
  return { id, panelId: Number(created.parentId), uploadId };
}

/** Starts a run through POST /runs and waits for the worker to finish it; returns its id and final state. */
export async function runThroughRoutes(slug: string, body: Record<string, unknown>): Promise<{ runId: number; state: string }> {
  const started = await ok(await postRun(jsonRequest("POST", body), ctx({ slug })), 201, "starting a run");
  const runId = Number(started.runId);
  return { runId, state: await finished(runId) };
}

/** Waits until the run is completed, failed or cancelled; returns the state. */
export async function finished(runId: number): Promise<string> {
  return waitFor(`run ${runId} to finish (is the test worker running?)`, async () => {
    const rows = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
    const state = rows[0]?.state;
    return state && ["completed", "failed", "cancelled"].includes(state) ? state : null;
  }, { timeoutMs: 120_000, intervalMs: 300 });
}

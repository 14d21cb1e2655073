import { readdirSync } from "node:fs";
import path from "node:path";
import { QueryTypes } from "sequelize";
import { POST as postBoundaries } from "@/app/api/w/[slug]/intake/boundaries/route";
import { POST as postPanels } from "@/app/api/w/[slug]/intake/panels/route";
import { POST as postUpload } from "@/app/api/w/[slug]/intake/uploads/route";
import { POST as postComplete } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/complete/route";
import { POST as postPublish } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/publish/route";
import { POST as postArchive } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/archive/route";
import { PUT as putIndicator } from "@/app/api/w/[slug]/intake/indicators/[code]/route";
import { POST as postCancel } from "@/app/api/w/[slug]/runs/[runId]/cancel/route";
import { POST as postRerun } from "@/app/api/w/[slug]/runs/[runId]/rerun/route";
import { getSessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { runIntakeValidation } from "@/lib/intake/jobs";
import { runPiece } from "@/lib/runs/worker";
import { getObjectBytes } from "@/lib/storage/s3";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { asSession, ctx, gridGeoJson, jsonRequest, longPanel, sha256 } from "@/tests/integration/intake/fixtures";
import { loadVeldmarkPanel } from "@/tests/integration/runs/fixtures";
import { topology } from "topojson-server";
import {
  finished,
  newBoundaryVersion,
  publishedBoundaries,
  publishedPanel,
  runThroughRoutes,
  settled,
  ticketThroughRoutes,
  uploadThroughRoutes,
  validated,
  versionState,
  LONG_MAPPING,
} from "./fixtures-intake";
import { completeRunInProcess, queuedRun } from "./fixtures-world";

// A published panel version (and its published boundaries) and a completed
// run, made through the real routes, S3 and worker. A manager — the strongest
// role — then tries every route that could touch them; each must refuse, or
// make something new, and the stored rows must stay byte for byte. Then the
// same is tried in SQL, where the triggers of migration
// 20261207000300-immutable-published-data refuse it.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(180_000);

let slug: string;
let boundary: { id: number; setId: number; uploadId: string };
let panel: { id: number; panelId: number; uploadId: string };
let runId: number;
const SIZE = 4;
const INDICATORS = ["jobless_rate", "income"];

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ manager: "manager" });
  slug = made.workspace.slug;
  sessionMock.mockResolvedValue(asSession(made.users.manager));
  boundary = await publishedBoundaries(slug, gridGeoJson(SIZE), "Immutable grid");
  panel = await publishedPanel(slug, longPanel({ size: SIZE, indicators: INDICATORS }), { panelName: "Immutable panel", boundarySetId: boundary.setId });
  const run = await runThroughRoutes(slug, { panelVersionId: panel.id, permutations: 99, seed: 20240607 });
  expect(run.state).toBe("completed");
  runId = run.runId;
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

// ——— what "unchanged" means: hashes of the stored rows and objects

async function one<T extends object>(sql: string, bind: unknown[]): Promise<T> {
  const rows = await db().query<T>(sql, { bind, type: QueryTypes.SELECT });
  if (!rows[0]) throw new Error(`no row from: ${sql}`);
  return rows[0];
}
const md5Of = async (sql: string, bind: unknown[]) => (await one<{ h: string | null }>(sql, bind)).h ?? "(no rows)";
const rowText = (table: string, id: number, except: string[] = []) => md5Of(`SELECT (to_jsonb(t) - $2::text[])::text AS h FROM ${table} t WHERE id = $1`, [id, except]);

interface Snapshot {
  observations: string;
  observationCount: number;
  panelRow: string;
  regions: string;
  boundaryRow: string;
  results: string;
  resultCount: number;
  runRow: string;
  panelObject: string;
  boundaryObject: string;
}

async function objectHash(table: "panel_versions" | "boundary_versions", id: number): Promise<string> {
  const { s3_key } = await one<{ s3_key: string }>(`SELECT s3_key FROM ${table} WHERE id = $1`, [id]);
  return sha256(await getObjectBytes(s3_key));
}

/** Everything a published version and a completed run consist of; `versionRowsExcept` leaves out columns a state change may touch. */
async function snapshot(versionRowsExcept: string[] = []): Promise<Snapshot> {
  return {
    observations: await md5Of("SELECT md5(string_agg(o::text, E'\\n' ORDER BY indicator_code, period_key, region_code)) AS h FROM observations o WHERE panel_version_id = $1", [panel.id]),
    observationCount: (await one<{ n: number }>("SELECT count(*)::int AS n FROM observations WHERE panel_version_id = $1", [panel.id])).n,
    panelRow: await rowText("panel_versions", panel.id, versionRowsExcept),
    regions: await md5Of("SELECT md5(string_agg(r::text, E'\\n' ORDER BY id)) AS h FROM regions r WHERE boundary_version_id = $1", [boundary.id]),
    boundaryRow: await rowText("boundary_versions", boundary.id, versionRowsExcept),
    results: await md5Of("SELECT md5(string_agg(rr::text, E'\\n' ORDER BY id)) AS h FROM run_results rr WHERE run_id = $1", [runId]),
    resultCount: (await one<{ n: number }>("SELECT count(*)::int AS n FROM run_results WHERE run_id = $1", [runId])).n,
    runRow: await rowText("runs", runId),
    panelObject: await objectHash("panel_versions", panel.id),
    boundaryObject: await objectHash("boundary_versions", boundary.id),
  };
}

/** Runs `attempt`, then checks that nothing of the published data or the completed run changed. */
async function leavesAllAsItWas<T>(attempt: () => Promise<T>): Promise<T> {
  const before = await snapshot();
  const outcome = await attempt();
  expect(await snapshot()).toEqual(before);
  return outcome;
}

async function refusal(response: Response, status: number): Promise<string> {
  const body = (await response.json()) as { error?: string };
  expect({ status: response.status, error: typeof body.error }).toEqual({ status, error: "string" });
  return body.error ?? "";
}

const versionCtx = (kind: "panel" | "boundaries", id: number) => ctx({ slug, kind, versionId: String(id) });

describe("the data is what it should be before anything is tried", () => {
  it("has observations, regions, results and stored objects whose checksums match the uploads", async () => {
    const s = await snapshot();
    expect(s.observationCount).toBe(INDICATORS.length * 3 * SIZE * SIZE);
    expect(s.resultCount).toBe(INDICATORS.length * 3);
    const stored = await one<{ sha256: string }>("SELECT sha256 FROM panel_versions WHERE id = $1", [panel.id]);
    expect(s.panelObject).toBe(stored.sha256);
  });
});

describe("a completed run cannot be changed by any route", () => {
  it("refuses to cancel it (409 naming the run) and changes nothing", async () => {
    const message = await leavesAllAsItWas(async () => refusal(await postCancel(jsonRequest("POST"), ctx({ slug, runId: String(runId) })), 409));
    const { number } = await one<{ number: number }>("SELECT number FROM runs WHERE id = $1", [runId]);
    // Named by its number in the workspace, as every screen names it.
    expect(message).toBe(`Run ${number} is already completed; only queued or running runs can be cancelled.`);
  });

  it("a rerun makes a new run with the same numbers and leaves the completed one byte for byte", async () => {
    const before = await snapshot();
    const response = await postRerun(jsonRequest("POST"), ctx({ slug, runId: String(runId) }));
    expect(response.status).toBe(201);
    const body = (await response.json()) as { runId: number; rerunOf: number };
    expect(body.rerunOf).toBe(runId);
    expect(body.runId).not.toBe(runId);
    expect(await finished(body.runId)).toBe("completed");
    expect(await snapshot()).toEqual(before);
    const numbers = (id: number) =>
      md5Of("SELECT md5(string_agg(concat_ws('|', indicator_code, period_key, i, perm_p, adjusted_p, significance, local::text, gi_star::text), E'\\n' ORDER BY indicator_code, period_index)) AS h FROM run_results WHERE run_id = $1", [id]);
    expect(await numbers(body.runId)).toBe(await numbers(runId));
  });

  it("a piece job delivered again after completion is skipped and changes nothing", async () => {
    expect(await leavesAllAsItWas(() => runPiece(runId, INDICATORS[0]))).toBe("skipped");
  });
});

describe("a published panel version and its published boundaries cannot be changed by any route", () => {
  it.each(["panel", "boundaries"] as const)("refuses to publish the %s again (409) and changes nothing", async (kind) => {
    const id = kind === "panel" ? panel.id : boundary.id;
    const message = await leavesAllAsItWas(async () => refusal(await postPublish(jsonRequest("POST"), versionCtx(kind, id)), 409));
    expect(message).toMatch(/^Version 1 of 'Immutable (panel|grid)' is published; only a validated version can be published\.$/);
  });

  it.each(["panel", "boundaries"] as const)("skips a repeated validation job for the %s and changes nothing", async (kind) => {
    await leavesAllAsItWas(() => runIntakeValidation({ kind, versionId: kind === "panel" ? panel.id : boundary.id }));
  });

  it("refuses the same file uploaded again (409 naming the published version) and changes nothing", async () => {
    const csv = longPanel({ size: SIZE, indicators: INDICATORS });
    const message = await leavesAllAsItWas(async () =>
      refusal(await postUpload(jsonRequest("POST", { kind: "panel", fileName: "again.csv", size: Buffer.byteLength(csv), sha256: sha256(csv) }), ctx({ slug })), 409),
    );
    expect(message).toBe("This file was already uploaded as version 1 of panel 'Immutable panel' (published).");
  });

  it("completing the published version's upload again answers 200 without change", async () => {
    const response = await leavesAllAsItWas(() => postComplete(jsonRequest("POST"), ctx({ slug, uploadId: panel.uploadId })));
    expect(response.status).toBe(200);
    expect(((await response.json()) as { state: string }).state).toBe("received");
  });

  it("a new file for the same panel and boundary set becomes version 2; version 1 stays byte for byte", async () => {
    await leavesAllAsItWas(async () => {
      const panelUpload = await uploadThroughRoutes(slug, "panel", "panel-v2.csv", longPanel({ size: SIZE, indicators: INDICATORS, shift: { region: "G3", year: 2020, by: 5 } }));
      const newPanel = await postPanels(jsonRequest("POST", { uploadId: panelUpload, panelId: panel.panelId, decimal: ".", mapping: LONG_MAPPING }), ctx({ slug }));
      const p = (await newPanel.json()) as { id: number; version: number };
      expect({ status: newPanel.status, version: p.version }).toEqual({ status: 202, version: 2 });
      await validated("panel", p.id);

      const boundaryUpload = await uploadThroughRoutes(slug, "boundaries", "grid-v2.geojson", gridGeoJson(SIZE).replace('"Square 1"', '"Square One"'));
      const newBoundary = await postBoundaries(
        jsonRequest("POST", { uploadId: boundaryUpload, boundarySetId: boundary.setId, objectName: "regions", idProperty: "code", nameProperty: "name" }),
        ctx({ slug }),
      );
      const b = (await newBoundary.json()) as { id: number; version: number };
      expect({ status: newBoundary.status, version: b.version }).toEqual({ status: 202, version: 2 });
      await validated("boundaries", b.id);
    });
  });

  it("editing indicator metadata (workspace labels, not version data) leaves the observations byte for byte", async () => {
    const response = await leavesAllAsItWas(() => putIndicator(jsonRequest("PUT", { label: "Jobless rate (relabelled)", unit: "%" }), ctx({ slug, code: "jobless_rate" })));
    expect(response.status).toBe(200);
  });

  it("offers no route to edit, replace or delete a version or a run: their routes export no PUT, PATCH or DELETE (Next answers 405)", async () => {
    const api = path.join(process.cwd(), "app", "api");
    const files = (readdirSync(api, { recursive: true }) as string[])
      .map((f) => f.split(path.sep).join("/"))
      .filter((f) => /(^|\/)route\.ts$/.test(f) && /\[(versionId|runId)\]/.test(f));
    expect(files.length).toBeGreaterThanOrEqual(8);
    const mutating: string[] = [];
    for (const file of files) {
      const mod = (await import(path.join(api, file))) as Record<string, unknown>;
      for (const method of ["PUT", "PATCH", "DELETE"]) if (typeof mod[method] === "function") mutating.push(`${method} app/api/${file}`);
    }
    // A new handler here must get a refusal test in this file before it is listed as allowed.
    expect(mutating).toEqual([]);
  });

  it("refuses to archive boundaries that a published panel version still uses (409) and changes nothing", async () => {
    const message = await leavesAllAsItWas(async () => refusal(await postArchive(jsonRequest("POST"), versionCtx("boundaries", boundary.id)), 409));
    expect(message).toBe("These boundaries are used by published panel versions ('Immutable panel' v1); archive those first.");
  });

  it("archiving the published panel version changes its state only: observations, S3 object and every other column stay byte for byte", async () => {
    const before = await snapshot(["state", "archived_at", "updated_at"]);
    const response = await postArchive(jsonRequest("POST"), versionCtx("panel", panel.id));
    expect(response.status).toBe(200);
    expect(await versionState("panel", panel.id)).toBe("archived");
    expect(await snapshot(["state", "archived_at", "updated_at"])).toEqual(before);
  });

  it("an archived version can be neither published again nor archived twice (409), and nothing changes", async () => {
    const again = await leavesAllAsItWas(async () => refusal(await postPublish(jsonRequest("POST"), versionCtx("panel", panel.id)), 409));
    expect(again).toBe("Version 1 of 'Immutable panel' is archived; only a validated version can be published.");
    const twice = await leavesAllAsItWas(async () => refusal(await postArchive(jsonRequest("POST"), versionCtx("panel", panel.id)), 409));
    expect(twice).toBe("Version 1 of 'Immutable panel' is archived; only validated or published versions can be archived.");
  });

  it("archiving the boundaries afterwards changes their state only; the regions and the stored topology stay byte for byte", async () => {
    const before = await snapshot(["state", "archived_at", "updated_at"]);
    expect((await postArchive(jsonRequest("POST"), versionCtx("boundaries", boundary.id))).status).toBe(200);
    expect(await versionState("boundaries", boundary.id)).toBe("archived");
    expect(await snapshot(["state", "archived_at", "updated_at"])).toEqual(before);
  });

  it("the completed run of an archived version is still intact, and a rerun of it is refused (409)", async () => {
    const message = await leavesAllAsItWas(async () => refusal(await postRerun(jsonRequest("POST"), ctx({ slug, runId: String(runId) })), 409));
    expect(message).toContain("which is now archived; only published versions can be analysed");
  });
});

// ——— the presigned PUT URL of an upload stays valid for an hour after the upload was checked

/** The invented grid as TopoJSON (object "regions"); `prefix` changes the region codes and so the bytes. */
function topoGrid(prefix: string): string {
  return JSON.stringify(topology({ regions: JSON.parse(gridGeoJson(SIZE, prefix)) }));
}

describe("an upload's presigned URL, still valid after the upload was checked, cannot change published boundaries", () => {
  it("a PUT to it after publication leaves the topology that maps and runs read byte for byte", async () => {
    const original = topoGrid("T");
    const published = await publishedBoundaries(slug, original, "TopoJSON grid", "grid.topojson");
    const before = await objectHash("boundary_versions", published.id);
    expect(before).toBe(sha256(original));
    const put = await fetch(published.ticket.url, { method: "PUT", headers: { "Content-Type": published.ticket.contentType }, body: topoGrid("X") });
    expect(put.ok).toBe(true); // S3 takes it: the URL is still valid
    expect(await objectHash("boundary_versions", published.id)).toBe(before);
  });

  it("bytes swapped after the check but before validation are rejected with a message naming the checksum, and no regions are stored", async () => {
    const ticket = await ticketThroughRoutes(slug, "boundaries", "swapped.topojson", topoGrid("S"));
    const put = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: topoGrid("Z") });
    expect(put.ok).toBe(true);
    const version = await newBoundaryVersion(slug, { uploadId: ticket.uploadId, setName: "Swapped grid" });
    expect(await settled("boundaries", version.id)).toBe("rejected");
    const row = await one<{ report: { errors: { message: string }[] }; regions: number }>(
      "SELECT report, (SELECT count(*)::int FROM regions WHERE boundary_version_id = $1) AS regions FROM boundary_versions WHERE id = $1",
      [version.id],
    );
    expect(row.regions).toBe(0);
    expect(row.report.errors[0]?.message).toMatch(/^the stored file changed after its upload was checked \(checksum [0-9a-f]{12}… instead of [0-9a-f]{12}…\); upload it again$/);
  });
});

describe("an upload's presigned URL, still valid after the upload was checked, cannot change what a panel version stores", () => {
  it("panel bytes swapped after the check but before validation are rejected with a message naming the checksum, and no observations are stored", async () => {
    const ticket = await ticketThroughRoutes(slug, "panel", "swapped.csv", longPanel({ size: SIZE, indicators: ["swap_test"] }));
    const swapped = longPanel({ size: SIZE, indicators: ["swap_test"], shift: { region: "G2", year: 2019, by: 100 } });
    const put = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: swapped });
    expect(put.ok).toBe(true);
    const response = await postPanels(jsonRequest("POST", { uploadId: ticket.uploadId, panelId: panel.panelId, decimal: ".", mapping: LONG_MAPPING }), ctx({ slug }));
    expect(response.status).toBe(202);
    const { id } = (await response.json()) as { id: number };
    expect(await settled("panel", id)).toBe("rejected");
    const row = await one<{ report: { errors: { message: string }[] }; observations: number }>(
      "SELECT report, (SELECT count(*)::int FROM observations WHERE panel_version_id = $1) AS observations FROM panel_versions WHERE id = $1",
      [id],
    );
    expect(row.observations).toBe(0);
    expect(row.report.errors[0]?.message).toMatch(/the stored file changed after its upload was checked \(checksum [0-9a-f]{12}… instead of [0-9a-f]{12}…\); upload it again$/);
  });
});

// ——— the same in SQL: the triggers of migration 20261207000300

class RolledBack extends Error {}

/** Runs `sql` in a transaction that is always rolled back; returns PostgreSQL's refusal, or null when it was accepted. */
async function refusedBy(sql: string, bind: unknown[]): Promise<string | null> {
  try {
    await db().transaction(async (transaction) => {
      await db().query(sql, { bind, transaction });
      throw new RolledBack("accepted; rolled back by the test");
    });
  } catch (error) {
    if (error instanceof RolledBack) return null;
    return error instanceof Error ? error.message : String(error);
  }
  return null;
}

describe("PostgreSQL itself refuses changes to published data and completed results", () => {
  let other: { panelVersionId: number; boundaryVersionId: number; validatedVersionId: number; runId: number };

  beforeAll(async () => {
    const made = await makeWorkspace({ owner: "manager" });
    const published = await loadVeldmarkPanel(made.workspace.id, { indicators: ["unemployment_rate"], periods: ["2012", "2013"] });
    const pending = await loadVeldmarkPanel(made.workspace.id, { state: "validated", indicators: ["unemployment_rate"], periods: ["2012"] });
    const queued = await queuedRun(made.workspace.id, made.users.owner.id, published.panelVersionId, ["unemployment_rate"], ["2012", "2013"]);
    await completeRunInProcess(queued, ["unemployment_rate"]);
    other = { panelVersionId: published.panelVersionId, boundaryVersionId: published.boundaryVersionId, validatedVersionId: pending.panelVersionId, runId: queued };
  });

  it.each([
    ["an UPDATE of an observation", "UPDATE observations SET value = value + 1 WHERE panel_version_id = $1"],
    ["a DELETE of observations", "DELETE FROM observations WHERE panel_version_id = $1"],
  ])("refuses %s of a published panel version, naming the version", async (_what, sql) => {
    expect(await refusedBy(sql, [other.panelVersionId])).toMatch(new RegExp(`panel version id ${other.panelVersionId}\\) cannot be changed: the version is published`));
  });

  it("refuses changes to the observations of the archived version made through the routes, too", async () => {
    expect(await refusedBy("DELETE FROM observations WHERE panel_version_id = $1", [panel.id])).toMatch(/the version is archived/);
  });

  it("still lets an unpublished (validated) version's observations change", async () => {
    expect(await refusedBy("UPDATE observations SET value = 0 WHERE panel_version_id = $1", [other.validatedVersionId])).toBeNull();
  });

  it("refuses an UPDATE or DELETE of the regions of published boundaries, naming the version", async () => {
    expect(await refusedBy("UPDATE regions SET name = 'renamed' WHERE boundary_version_id = $1", [other.boundaryVersionId])).toMatch(
      new RegExp(`boundary version id ${other.boundaryVersionId}\\) cannot be changed: the version is published`),
    );
    expect(await refusedBy("DELETE FROM regions WHERE boundary_version_id = $1", [other.boundaryVersionId])).toMatch(/cannot be changed/);
  });

  it.each([
    ["update", "UPDATE run_results SET i = 0 WHERE run_id = $1"],
    // Local Gi* (hot and cold spots) lives in the same rows and is frozen with them.
    ["update", "UPDATE run_results SET gi_star = NULL WHERE run_id = $1 AND gi_star IS NOT NULL"],
    ["update", `UPDATE run_results SET gi_star = jsonb_set(gi_star, '{classes,0}', '"cold"') WHERE run_id = $1 AND gi_star IS NOT NULL`],
    ["delete", "DELETE FROM run_results WHERE run_id = $1"],
  ])("refuses an %s of a completed run's results, naming the run", async (op, sql) => {
    expect(await refusedBy(sql, [other.runId])).toBe(`Results of run ${other.runId} cannot be changed (${op}): the run is completed. Rerun it for new results.`);
  });

  it("refuses a new result row for a completed run, naming the run", async () => {
    const sql = `INSERT INTO run_results (run_id, indicator_code, period_key, period_index, status, n, regions_in_boundaries, excluded_missing, excluded_islands, exclusions, weights, created_at)
                 SELECT run_id, 'invented_indicator', period_key, period_index, status, n, regions_in_boundaries, excluded_missing, excluded_islands, exclusions, weights, now()
                   FROM run_results WHERE run_id = $1 LIMIT 1`;
    expect(await refusedBy(sql, [other.runId])).toBe(`Results of run ${other.runId} cannot be changed (insert): the run is completed. Rerun it for new results.`);
  });

  it("refuses any change to a completed run's row", async () => {
    expect(await refusedBy("UPDATE runs SET seed = seed + 1 WHERE id = $1", [other.runId])).toBe(`Run ${other.runId} cannot be changed: it is completed. Rerun it for new results.`);
  });

  it("refuses edits, state rollbacks and deletion of a published version row, but lets it be archived", async () => {
    const id = other.panelVersionId;
    expect(await refusedBy("UPDATE panel_versions SET sha256 = repeat('0', 64) WHERE id = $1", [id])).toBe(`Panel version 1 (id ${id}) cannot be changed: it is published; only archiving a published version is allowed.`);
    expect(await refusedBy("UPDATE panel_versions SET state = 'validated' WHERE id = $1", [id])).toBe(`Panel version 1 (id ${id}) cannot go from published to validated.`);
    expect(await refusedBy("DELETE FROM panel_versions WHERE id = $1", [id])).toBe(`Panel version 1 (id ${id}) cannot be deleted: it is published.`);
    expect(await refusedBy("UPDATE boundary_versions SET region_count = 1 WHERE id = $1", [other.boundaryVersionId])).toMatch(/^Boundary version 1 \(id \d+\) cannot be changed: it is published/);
    expect(await refusedBy("UPDATE panel_versions SET state = 'archived', archived_at = now(), updated_at = now() WHERE id = $1", [id])).toBeNull();
  });

  it("still lets a whole workspace be deleted (the cascade removes its published data and completed runs)", async () => {
    const made = await makeWorkspace({ owner: "manager" });
    const doomed = await loadVeldmarkPanel(made.workspace.id, { indicators: ["unemployment_rate"], periods: ["2012"] });
    const doomedRun = await queuedRun(made.workspace.id, made.users.owner.id, doomed.panelVersionId, ["unemployment_rate"], ["2012"]);
    await completeRunInProcess(doomedRun, ["unemployment_rate"]);
    await db().query("DELETE FROM workspaces WHERE id = $1", { bind: [made.workspace.id] });
    const left = await one<{ o: number; r: number }>(
      "SELECT (SELECT count(*)::int FROM observations WHERE panel_version_id = $1) AS o, (SELECT count(*)::int FROM run_results WHERE run_id = $2) AS r",
      [doomed.panelVersionId, doomedRun],
    );
    expect(left).toEqual({ o: 0, r: 0 });
  });
});

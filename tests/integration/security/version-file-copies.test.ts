import { QueryTypes } from "sequelize";
import { GET as getTopology } from "@/app/api/w/[slug]/intake/boundaries/[versionId]/topology/route";
import { POST as postRun } from "@/app/api/w/[slug]/runs/route";
import { requireMember } from "@/lib/auth/guard";
import { getSessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { createBoundaryVersion, createPanelVersion } from "@/lib/intake/service";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { ingestBoundaryVersion } from "@/lib/intake/ingest-boundaries";
import { ingestPanelVersion } from "@/lib/intake/ingest-panel";
import { forgetCachedTopologies, loadBoundaryTopology } from "@/lib/geometry/boundary-topology";
import { StoredFileChecksumError } from "@/lib/storage/errors";
import { getObjectBytes, putObject } from "@/lib/storage/s3";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { asSession, ctx, gridGeoJson, jsonRequest, longPanel, sha256 } from "@/tests/integration/intake/fixtures";
import { topology } from "topojson-server";
import { LONG_MAPPING, publishedBoundaries, publishedPanel, runThroughRoutes, ticketThroughRoutes, uploadThroughRoutes, type Ticket } from "./fixtures-intake";

// Published means unchangeable down to the file. Each version keeps its own
// copy of its source file under workspaces/<id>/versions/<kind>/<versionId>/,
// a key no presigned URL is issued for; every read of it checks its SHA-256.
// Here, through the real routes, S3 (s3rver) and the worker: a PUT of other
// bytes to an upload's still-valid URL after publishing changes nothing any
// version uses, and a version's own copy changed behind the app's back is
// refused on read with a sentence naming the version.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(180_000);

const SIZE = 4;
const INDICATORS = ["jobless_rate", "income"];
let slug: string;
let workspaceId: number;

interface VersionFile {
  s3_key: string;
  file_key: string | null;
  sha256: string;
  upload_key: string;
}

async function versionFile(table: "boundary_versions" | "panel_versions", id: number): Promise<VersionFile> {
  const [row] = await db().query<VersionFile>(`SELECT v.s3_key, v.file_key, v.sha256, u.s3_key AS upload_key FROM ${table} v JOIN uploads u ON u.id = v.upload_id WHERE v.id = $1`, {
    bind: [id],
    type: QueryTypes.SELECT,
  });
  if (!row) throw new Error(`no ${table} row ${id}`);
  return row;
}

/** What a browser with the old upload screen still open could do: PUT other bytes to the ticket's URL. */
async function putAgain(ticket: Ticket, body: string): Promise<void> {
  const response = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body });
  expect(response.ok).toBe(true); // the store takes it: the URL is still valid
}

async function topologyAnswer(id: number): Promise<{ status: number; body: Record<string, unknown> }> {
  const response = await getTopology(jsonRequest("GET"), ctx({ slug, versionId: String(id) }));
  return { status: response.status, body: (await response.json()) as Record<string, unknown> };
}

const resultNumbers = async (runId: number) => {
  const [row] = await db().query<{ h: string | null; n: number }>(
    `SELECT md5(string_agg(concat_ws('|', indicator_code, period_key, i, perm_p, adjusted_p, significance, local::text), E'\\n' ORDER BY indicator_code, period_index)) AS h,
            count(*)::int AS n FROM run_results WHERE run_id = $1`,
    { bind: [runId], type: QueryTypes.SELECT },
  );
  return row;
};

const observationsHash = async (panelVersionId: number) => {
  const [row] = await db().query<{ h: string | null; n: number }>(
    "SELECT md5(string_agg(o::text, E'\\n' ORDER BY indicator_code, period_key, region_code)) AS h, count(*)::int AS n FROM observations o WHERE panel_version_id = $1",
    { bind: [panelVersionId], type: QueryTypes.SELECT },
  );
  return row;
};

const topoGrid = (prefix: string) => JSON.stringify(topology({ regions: JSON.parse(gridGeoJson(SIZE, prefix)) }));

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ manager: "manager" });
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  sessionMock.mockResolvedValue(asSession(made.users.manager));
});
afterAll(async () => {
  forgetCachedTopologies();
  await closeIntakePool();
  await closeConnections();
});

describe("a PUT to an upload's old URL after publishing changes nothing any version uses", () => {
  const geo = gridGeoJson(SIZE);
  const topo = topoGrid("G");
  let geoBoundaries: Awaited<ReturnType<typeof publishedBoundaries>>;
  let topoBoundaries: Awaited<ReturnType<typeof publishedBoundaries>>;
  let panel: { id: number; panelId: number; uploadId: string; ticket: Ticket };
  let firstRun: number;
  const before: { geoTopology?: unknown; topoTopology?: unknown; observations?: { h: string | null; n: number }; results?: { h: string | null; n: number } } = {};

  beforeAll(async () => {
    geoBoundaries = await publishedBoundaries(slug, geo, "Copied grid (GeoJSON)");
    topoBoundaries = await publishedBoundaries(slug, topo, "Copied grid (TopoJSON)", "grid.topojson");
    const csv = longPanel({ size: SIZE, indicators: INDICATORS });
    // The same path as publishedPanel, keeping the ticket so its URL can be used again.
    const ticket = await ticketThroughRoutes(slug, "panel", "copied.csv", csv);
    const published = await publishedPanelFromUpload(ticket.uploadId, geoBoundaries.setId);
    panel = { ...published, ticket };
    const run = await runThroughRoutes(slug, { panelVersionId: panel.id, permutations: 99, seed: 4242 });
    expect(run.state).toBe("completed");
    firstRun = run.runId;
    before.geoTopology = (await topologyAnswer(geoBoundaries.id)).body;
    before.topoTopology = (await topologyAnswer(topoBoundaries.id)).body;
    before.observations = await observationsHash(panel.id);
    before.results = await resultNumbers(firstRun);
  });

  it("each version's file is its own copy: a different key from its upload's, under versions/, with the upload's checksum", async () => {
    for (const [table, id] of [["boundary_versions", geoBoundaries.id], ["boundary_versions", topoBoundaries.id], ["panel_versions", panel.id]] as const) {
      const f = await versionFile(table, id);
      const kind = table === "panel_versions" ? "panel" : "boundaries";
      expect(f.file_key).toBe(`workspaces/${workspaceId}/versions/${kind}/${id}/${f.sha256}`);
      expect(f.file_key).not.toBe(f.upload_key);
      expect(sha256(await getObjectBytes(f.file_key ?? ""))).toBe(f.sha256);
    }
    // A TopoJSON file is read from the copy itself; a GeoJSON one from its converted topology beside the copy.
    expect((await versionFile("boundary_versions", topoBoundaries.id)).s3_key).toBe((await versionFile("boundary_versions", topoBoundaries.id)).file_key);
    const geoFile = await versionFile("boundary_versions", geoBoundaries.id);
    expect(geoFile.s3_key).toMatch(new RegExp(`^workspaces/${workspaceId}/versions/boundaries/${geoBoundaries.id}/topology-[0-9a-f]{64}\\.json$`));
  });

  it("after other bytes are PUT to all three upload URLs, the uploads' objects changed but topologies, observations and a rerun's numbers did not", async () => {
    await putAgain(geoBoundaries.ticket, gridGeoJson(SIZE, "X"));
    await putAgain(topoBoundaries.ticket, topoGrid("X"));
    await putAgain(panel.ticket, longPanel({ size: SIZE, indicators: INDICATORS, shift: { region: "G3", year: 2020, by: 50 } }));
    // The PUTs did land: the upload objects are no longer what was checked, so the reads below prove something.
    for (const [table, id] of [["boundary_versions", geoBoundaries.id], ["boundary_versions", topoBoundaries.id], ["panel_versions", panel.id]] as const) {
      const f = await versionFile(table, id);
      expect(sha256(await getObjectBytes(f.upload_key))).not.toBe(f.sha256);
    }

    forgetCachedTopologies();
    expect((await topologyAnswer(geoBoundaries.id)).body).toEqual(before.geoTopology);
    expect((await topologyAnswer(topoBoundaries.id)).body).toEqual(before.topoTopology);
    forgetCachedTopologies();
    const loaded = await loadBoundaryTopology(topoBoundaries.id);
    expect(JSON.stringify(loaded.topology)).toBe(JSON.stringify(JSON.parse(topo)));

    expect(await observationsHash(panel.id)).toEqual(before.observations);
    // A new run over the same published versions (another seed-identical run, started after the PUTs).
    const again = await runThroughRoutes(slug, { panelVersionId: panel.id, permutations: 99, seed: 4242 });
    expect(again.state).toBe("completed");
    expect(await resultNumbers(again.runId)).toEqual(before.results);
  });
});

async function publishedPanelFromUpload(uploadId: string, boundarySetId: number): Promise<{ id: number; panelId: number; uploadId: string }> {
  // publishedPanel uploads its own file; this one reuses an upload whose ticket the test keeps.
  const { POST: postPanels } = await import("@/app/api/w/[slug]/intake/panels/route");
  const { validated, publish } = await import("./fixtures-intake");
  const response = await postPanels(jsonRequest("POST", { uploadId, panelName: `Copied panel ${uploadId.slice(0, 8)}`, boundarySetId, decimal: ".", mapping: LONG_MAPPING }), ctx({ slug }));
  const body = (await response.json()) as { id: number; parentId: number };
  expect(response.status).toBe(202);
  await validated("panel", body.id);
  await publish(slug, "panel", body.id);
  return { id: body.id, panelId: body.parentId, uploadId };
}

describe("a version's own copy changed behind the app's back is refused on read, naming the version", () => {
  let boundaries: Awaited<ReturnType<typeof publishedBoundaries>>;
  let panel: { id: number };
  const sentence = (what: string) =>
    new RegExp(`^The stored file of ${what} does not match the checksum recorded when the version was made \\(found [0-9a-f]{12}…, expected [0-9a-f]{12}…\\): it was changed or damaged in storage, so it was not used\\.`);

  beforeAll(async () => {
    boundaries = await publishedBoundaries(slug, topoGrid("T"), "Tampered grid", "tampered.topojson");
    panel = await publishedPanel(slug, longPanel({ size: SIZE, indicators: ["tamper_rate"] }).replace(/G(\d+),/g, "T$1,"), { panelName: "Tampered panel", boundarySetId: boundaries.setId });
    const f = await versionFile("boundary_versions", boundaries.id);
    // Same length, other bytes: a region code changed in place.
    const original = (await getObjectBytes(f.s3_key)).toString("utf8");
    const tampered = original.replace('"T1"', '"Z1"');
    expect(tampered).not.toBe(original);
    await putObject(f.s3_key, tampered, "application/json");
    forgetCachedTopologies();
  });

  it("the topology route answers 500 with the sentence, and no topology", async () => {
    const answer = await topologyAnswer(boundaries.id);
    expect(answer.status).toBe(500);
    expect(answer.body.topology).toBeUndefined();
    expect(String(answer.body.error)).toMatch(sentence(`boundary version 1 of 'Tampered grid' \\(id ${boundaries.id}\\)`));
  });

  it("reading it for a run's geometry throws StoredFileChecksumError with the same sentence", async () => {
    const error = await loadBoundaryTopology(boundaries.id).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(StoredFileChecksumError);
    expect((error as Error).message).toMatch(sentence(`boundary version 1 of 'Tampered grid' \\(id ${boundaries.id}\\)`));
  });

  it("starting a run over those boundaries is refused with the sentence, and no run is stored", async () => {
    const [{ n: runsBefore }] = await db().query<{ n: number }>("SELECT count(*)::int AS n FROM runs WHERE workspace_id = $1", { bind: [workspaceId], type: QueryTypes.SELECT });
    const response = await postRun(jsonRequest("POST", { panelVersionId: panel.id, permutations: 99, seed: 1 }), ctx({ slug }));
    const body = (await response.json()) as { error?: string };
    expect(response.status).toBe(500);
    expect(body.error).toMatch(sentence(`boundary version 1 of 'Tampered grid' \\(id ${boundaries.id}\\)`));
    const [{ n: runsAfter }] = await db().query<{ n: number }>("SELECT count(*)::int AS n FROM runs WHERE workspace_id = $1", { bind: [workspaceId], type: QueryTypes.SELECT });
    expect(runsAfter).toBe(runsBefore);
  });
});

describe("a version's copy changed between its creation and its validation is rejected, and nothing is stored", () => {
  it.each(["boundaries", "panel"] as const)("%s: the validation refuses the changed copy with a message naming both checksums", async (kind) => {
    const steward = await requireMember(slug, "data.curate");
    const setName = `Unvalidated ${kind} grid`;
    let versionId: number;
    if (kind === "boundaries") {
      const uploadId = await uploadThroughRoutes(slug, "boundaries", "late.topojson", topoGrid("L"));
      versionId = (await createBoundaryVersion(steward, { uploadId, setName, objectName: "regions", idProperty: "code" }, { enqueueJob: false })).id;
    } else {
      const grid = await publishedBoundaries(slug, topoGrid("P"), setName, "p.topojson");
      const uploadId = await uploadThroughRoutes(slug, "panel", "late.csv", longPanel({ size: SIZE, indicators: ["late_rate"] }).replace(/G(\d+),/g, "P$1,"));
      versionId = (await createPanelVersion(steward, { uploadId, panelName: "Late panel", boundarySetId: grid.setId, decimal: ".", mapping: LONG_MAPPING, remember: false }, { enqueueJob: false })).id;
    }
    const table = kind === "panel" ? "panel_versions" : "boundary_versions";
    const f = await versionFile(table, versionId);
    const bytes = (await getObjectBytes(f.file_key ?? "")).toString("utf8");
    await putObject(f.file_key ?? "", kind === "panel" ? bytes.replace(/,([0-9.]+)\n/, ",999\n") : bytes.replace('"L1"', '"Q1"'), "text/plain");

    const outcome = kind === "panel" ? await ingestPanelVersion(versionId) : await ingestBoundaryVersion(versionId);
    expect(outcome.state).toBe("rejected");
    const [row] = await db().query<{ message: string; stored: number }>(
      `SELECT report->'errors'->0->>'message' AS message,
              ${kind === "panel" ? "(SELECT count(*)::int FROM observations WHERE panel_version_id = $1)" : "(SELECT count(*)::int FROM regions WHERE boundary_version_id = $1)"} AS stored
         FROM ${table} WHERE id = $1`,
      { bind: [versionId], type: QueryTypes.SELECT },
    );
    expect(row.stored).toBe(0);
    expect(row.message).toMatch(/the stored file changed after its upload was checked \(checksum [0-9a-f]{12}… instead of [0-9a-f]{12}…\); upload it again$/);
  });
});

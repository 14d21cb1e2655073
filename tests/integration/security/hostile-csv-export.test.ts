import { QueryTypes } from "sequelize";
import { POST as postUpload } from "@/app/api/w/[slug]/intake/uploads/route";
import { POST as postComplete } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/complete/route";
import { POST as postBoundaries } from "@/app/api/w/[slug]/intake/boundaries/route";
import { POST as postPanels } from "@/app/api/w/[slug]/intake/panels/route";
import { POST as postPublish } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/publish/route";
import { POST as postRun } from "@/app/api/w/[slug]/runs/route";
import { GET as getExport } from "@/app/api/w/[slug]/catalogue/export/route";
import { GET as getCatalogue } from "@/app/api/w/[slug]/catalogue/route";
import { getSessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { catalogueRowsOf, type CatalogueAnswer } from "@/lib/runs/catalogue-wire";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { models } from "@/lib/models";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitFor } from "@/tests/helpers/wait";
import { makeWorkspace } from "../auth/fixtures";
import { asSession, ctx, jsonRequest, sha256 } from "../intake/fixtures";
import { parseCsv } from "@/tests/helpers/csv";
import {
  FORMULA,
  HOSTILE_FILE_STEM,
  HOSTILE_INDICATORS,
  HOSTILE_PANEL_NAME,
  HOSTILE_REGION_CODES,
  HOSTILE_SET_NAME,
  TEMPLATE,
  XSS_ATTR,
  XSS_SCRIPT,
  hostileBoundaries,
  hostilePanel,
  hostileTag,
} from "./hostile-data";

// Hostile names through the whole path — upload, validation in the worker,
// publication, a run, the catalogue and its CSV export — with the real route
// handlers, S3, PostgreSQL and the worker. Only "who is signed in" is stood in
// for. Names are stored exactly as written; the export neutralises formulas.

jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(240_000);

let slug: string;
let runId: number;

async function upload(kind: "boundaries" | "panel", fileName: string, text: string): Promise<string> {
  const bytes = Buffer.from(text, "utf8");
  const ticketResponse = await postUpload(jsonRequest("POST", { kind, fileName, size: bytes.length, sha256: sha256(bytes) }), ctx({ slug }));
  expect(ticketResponse.status).toBe(201);
  const ticket = (await ticketResponse.json()) as { uploadId: string; url: string; contentType: string };
  const put = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: new Uint8Array(bytes) });
  expect(put.ok).toBe(true);
  const complete = await postComplete(jsonRequest("POST"), ctx({ slug, uploadId: ticket.uploadId }));
  expect(((await complete.json()) as { state: string }).state).toBe("received");
  return ticket.uploadId;
}

async function settled(table: "boundary_versions" | "panel_versions", id: number): Promise<string> {
  return waitFor(`${table} ${id} to be validated or rejected`, async () => {
    const [row] = await db().query<{ state: string }>(`SELECT state FROM ${table} WHERE id = $1`, { bind: [id], type: QueryTypes.SELECT });
    return row && row.state !== "uploaded" ? row.state : null;
  }, { timeoutMs: 60_000, intervalMs: 250 });
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ steward: "steward" });
  slug = made.workspace.slug;
  sessionMock.mockResolvedValue(asSession(made.users.steward));
  const tag = hostileTag();

  const boundaryUpload = await upload("boundaries", `${HOSTILE_FILE_STEM}.geojson`, hostileBoundaries(tag));
  const boundaries = await postBoundaries(
    jsonRequest("POST", { uploadId: boundaryUpload, setName: HOSTILE_SET_NAME, objectName: "regions", idProperty: "code", nameProperty: "name" }),
    ctx({ slug }),
  );
  expect(boundaries.status).toBe(202);
  const boundaryVersion = (await boundaries.json()) as { id: number; parentId: number };
  expect(await settled("boundary_versions", boundaryVersion.id)).toBe("validated");
  expect((await postPublish(jsonRequest("POST"), ctx({ slug, kind: "boundaries", versionId: String(boundaryVersion.id) }))).status).toBe(200);

  const panelUpload = await upload("panel", `${HOSTILE_FILE_STEM}.csv`, hostilePanel(tag));
  const mapping = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };
  const panel = await postPanels(jsonRequest("POST", { uploadId: panelUpload, panelName: HOSTILE_PANEL_NAME, boundarySetId: boundaryVersion.parentId, decimal: ".", mapping }), ctx({ slug }));
  expect(panel.status).toBe(202);
  const panelVersion = (await panel.json()) as { id: number };
  expect(await settled("panel_versions", panelVersion.id)).toBe("validated");
  expect((await postPublish(jsonRequest("POST"), ctx({ slug, kind: "panel", versionId: String(panelVersion.id) }))).status).toBe(200);

  const started = await postRun(jsonRequest("POST", { panelVersionId: panelVersion.id, permutations: 99, seed: 7, weights: "queen" }), ctx({ slug }));
  expect(started.status).toBe(201);
  runId = ((await started.json()) as { runId: number }).runId;
  const state = await waitFor(`run ${runId} to finish`, async () => {
    const run = await models().Run.findByPk(runId);
    return run && run.state !== "queued" && run.state !== "running" ? run.state : null;
  }, { timeoutMs: 180_000, intervalMs: 500 });
  expect(state).toBe("completed");
}, 240_000);

afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("hostile names from upload to export", () => {
  it("stores file, set, panel, region and indicator names exactly as written (no path or markup is stripped or run)", async () => {
    const [panel] = await db().query<{ name: string; file_name: string }>(
      `SELECT p.name, pv.file_name FROM panels p JOIN panel_versions pv ON pv.panel_id = p.id JOIN runs r ON r.panel_version_id = pv.id WHERE r.id = $1`,
      { bind: [runId], type: QueryTypes.SELECT },
    );
    expect(panel).toEqual({ name: HOSTILE_PANEL_NAME, file_name: `${HOSTILE_FILE_STEM}.csv` });
    const catalogue = await getCatalogue(new Request(`http://tessera.test/api?run=${runId}`), ctx({ slug }));
    const rows = catalogueRowsOf((await catalogue.json()) as CatalogueAnswer);
    expect(new Set(rows.map((r) => r.indicator))).toEqual(new Set(HOSTILE_INDICATORS));
    const regions = await db().query<{ code: string }>(
      `SELECT DISTINCT o.region_code AS code FROM observations o JOIN runs r ON r.panel_version_id = o.panel_version_id WHERE r.id = $1`,
      { bind: [runId], type: QueryTypes.SELECT },
    );
    expect(new Set(regions.map((r) => r.code))).toEqual(new Set(HOSTILE_REGION_CODES));
  });

  it("exports the hostile indicator codes with the formula neutralised, markup untouched, numbers unprefixed, as a download", async () => {
    const response = await getExport(new Request(`http://tessera.test/api?run=${runId}`), ctx({ slug }));
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toBe("text/csv; charset=utf-8");
    expect(response.headers.get("content-disposition")).toMatch(/^attachment; filename="tessera-[a-z0-9-]+-catalogue-run-\d+\.csv"$/);
    const rows = parseCsv(await response.text());
    const [header, ...data] = rows;
    const col = (name: string) => header.indexOf(name);
    expect(data).toHaveLength(HOSTILE_INDICATORS.length * 3);

    const indicators = new Set(data.map((r) => r[col("indicator")]));
    expect(indicators).toEqual(new Set([`'${FORMULA}`, XSS_SCRIPT, XSS_ATTR, TEMPLATE]));
    for (const row of data) {
      for (const cell of row) {
        const numeric = cell !== "" && !Number.isNaN(Number(cell));
        if (!numeric) expect(cell).not.toMatch(/^[=+\-@\t\r\n]/);
      }
      expect(Number(row[col("moran_i")])).not.toBeNaN();
    }
    const negatives = data.map((r) => r[col("expected_i")]).filter((v) => v.startsWith("-"));
    expect(negatives.length).toBe(data.length); // E[I] = −1/(n−1): every one is a plain negative number
  });
});

import { QueryTypes } from "sequelize";
import { POST as postUpload } from "@/app/api/w/[slug]/intake/uploads/route";
import { POST as postComplete } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/complete/route";
import { GET as getPreview } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/preview/route";
import { POST as postBoundaries } from "@/app/api/w/[slug]/intake/boundaries/route";
import { POST as postPanels } from "@/app/api/w/[slug]/intake/panels/route";
import { GET as getOverview } from "@/app/api/w/[slug]/intake/route";
import { GET as getVersion } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/route";
import { POST as postPublish } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/publish/route";
import { POST as postArchive } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/archive/route";
import { GET as getWeights } from "@/app/api/w/[slug]/intake/boundaries/[versionId]/weights/route";
import { PUT as putIndicator } from "@/app/api/w/[slug]/intake/indicators/[code]/route";
import { getSessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { loadPanelMatrix } from "@/lib/intake/published-panel";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitFor } from "@/tests/helpers/wait";
import { makeWorkspace } from "../auth/fixtures";
import { asSession, ctx, gridGeoJson, jsonRequest, longPanel, sha256 } from "./fixtures";

// The whole path a steward takes, through the real route handlers, S3
// (presigned PUT), pg-boss and the worker (started by `npm test`), and
// PostgreSQL. Only "who is signed in" is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(60_000);

type Users = Awaited<ReturnType<typeof makeWorkspace>>["users"];
let slug: string;
let users: Users;

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ steward: "steward", economist: "economist", subscriber: "subscriber", manager: "manager" });
  slug = made.workspace.slug;
  users = made.users;
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

function as(label: keyof Users) {
  sessionMock.mockResolvedValue(asSession(users[label]));
}

/** Browser-like upload: ticket, PUT of `sent` (default: all of `bytes`), complete. */
async function upload(kind: "boundaries" | "panel", fileName: string, content: string | Buffer, options: { sent?: Buffer; declaredSha?: string } = {}) {
  const bytes = Buffer.isBuffer(content) ? content : Buffer.from(content, "utf8");
  const ticketResponse = await postUpload(jsonRequest("POST", { kind, fileName, size: bytes.length, sha256: options.declaredSha ?? sha256(bytes) }), ctx({ slug }));
  const ticket = (await ticketResponse.json()) as { uploadId: string; url: string; contentType: string; error?: string };
  if (ticketResponse.status !== 201) return { ticketStatus: ticketResponse.status, ticket, complete: null, completeStatus: 0 };
  const put = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: new Uint8Array(options.sent ?? bytes) });
  expect(put.ok).toBe(true);
  const completeResponse = await postComplete(jsonRequest("POST"), ctx({ slug, uploadId: ticket.uploadId }));
  const complete = (await completeResponse.json()) as { state: string; error: string | null };
  return { ticketStatus: 201, ticket, complete, completeStatus: completeResponse.status };
}

async function versionState(kind: "boundaries" | "panel", id: number): Promise<string> {
  const table = kind === "panel" ? "panel_versions" : "boundary_versions";
  const rows = await db().query<{ state: string }>(`SELECT state FROM ${table} WHERE id = :id`, { replacements: { id }, type: QueryTypes.SELECT });
  return rows[0]?.state ?? "missing";
}

async function settled(kind: "boundaries" | "panel", id: number): Promise<string> {
  return waitFor(`${kind} version ${id} to leave 'uploaded'`, async () => {
    const state = await versionState(kind, id);
    return state !== "uploaded" ? state : null;
  }, { timeoutMs: 45_000, intervalMs: 250 });
}

async function observationCount(panelVersionId: number): Promise<number> {
  const rows = await db().query<{ n: string }>("SELECT count(*) AS n FROM observations WHERE panel_version_id = :id", { replacements: { id: panelVersionId }, type: QueryTypes.SELECT });
  return Number(rows[0]?.n ?? 0);
}

let boundaryVersionId = 0;
let boundarySetId = 0;
let panelId = 0;
let firstPanelVersionId = 0;

describe("intake: boundaries and panels from upload to publication", () => {
  it("uploads GeoJSON boundaries through a presigned URL, converts and validates them in the worker, and publishes", async () => {
    as("steward");
    const up = await upload("boundaries", "grid.geojson", gridGeoJson());
    expect(up.completeStatus).toBe(200);
    expect(up.complete?.state).toBe("received");

    const preview = await getPreview(new Request("http://tessera.test"), ctx({ slug, uploadId: up.ticket.uploadId }));
    const previewBody = (await preview.json()) as { kind: string; preview: { summary: { sourceFormat: string; objects: { name: string; candidateIdProperties: string[] }[] } } };
    expect(previewBody.kind).toBe("boundaries");
    expect(previewBody.preview.summary.sourceFormat).toBe("geojson");
    expect(previewBody.preview.summary.objects[0].candidateIdProperties).toContain("code");

    const created = await postBoundaries(
      jsonRequest("POST", { uploadId: up.ticket.uploadId, setName: "Grid", objectName: "regions", idProperty: "code", nameProperty: "name" }),
      ctx({ slug }),
    );
    expect(created.status).toBe(202);
    const version = (await created.json()) as { id: number; version: number; parentId: number };
    expect(version.version).toBe(1);
    expect(await settled("boundaries", version.id)).toBe("validated");
    boundaryVersionId = version.id;
    boundarySetId = version.parentId;

    const detail = await getVersion(new Request("http://tessera.test"), ctx({ slug, kind: "boundaries", versionId: String(version.id) }));
    const body = (await detail.json()) as { count: number; report: { ok: boolean; contiguity: { islands: string[] } }; settings: { format: string } };
    expect(body.count).toBe(9);
    expect(body.report.ok).toBe(true);
    expect(body.report.contiguity.islands).toEqual([]);
    expect(body.settings.format).toBe("geojson");

    const weights = await getWeights(new Request(`http://tessera.test/x?rule=rook`), ctx({ slug, versionId: String(version.id) }));
    const w = (await weights.json()) as { links: [number, number][]; histogram: { neighbours: number; regions: number }[] };
    expect(w.links).toHaveLength(12); // a 3 × 3 rook lattice
    expect(w.histogram).toEqual([
      { neighbours: 2, regions: 4 },
      { neighbours: 3, regions: 4 },
      { neighbours: 4, regions: 1 },
    ]);

    const published = await postPublish(jsonRequest("POST"), ctx({ slug, kind: "boundaries", versionId: String(version.id) }));
    expect(published.status).toBe(200);
    expect(await versionState("boundaries", version.id)).toBe("published");
  });

  it("ingests a long panel with COPY, remembers its mapping, and publishes it", async () => {
    as("steward");
    const csv = longPanel();
    const up = await upload("panel", "grid-panel.csv", csv);
    expect(up.complete?.state).toBe("received");
    const previewResponse = await getPreview(new Request("http://tessera.test"), ctx({ slug, uploadId: up.ticket.uploadId }));
    const preview = ((await previewResponse.json()) as { preview: { header: string[]; remembered: unknown } }).preview;
    expect(preview.header).toEqual(["region", "period", "indicator", "value"]);
    expect(preview.remembered).toBeNull();

    const mapping = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };
    const created = await postPanels(jsonRequest("POST", { uploadId: up.ticket.uploadId, panelName: "Grid indicators", boundarySetId, decimal: ".", mapping }), ctx({ slug }));
    expect(created.status).toBe(202);
    const version = (await created.json()) as { id: number; parentId: number };
    expect(await settled("panel", version.id)).toBe("validated");
    expect(await observationCount(version.id)).toBe(2 * 3 * 9);
    panelId = version.parentId;
    firstPanelVersionId = version.id;

    const matrix = await loadPanelMatrix(version.id);
    expect(matrix.indicators).toEqual(["income", "jobless_rate"]);
    expect(matrix.periods.map((p) => p.key)).toEqual(["2019", "2020", "2021"]);
    expect(matrix.regionCodes).toHaveLength(9);
    expect(matrix.values.get("income")?.get("2020")?.get("G2")).toBeCloseTo(2 * 1.5 + 20 * 0.25 + 6, 10);

    expect((await postPublish(jsonRequest("POST"), ctx({ slug, kind: "panel", versionId: String(version.id) }))).status).toBe(200);

    // The same header next time: the mapping is offered from memory.
    const again = await upload("panel", "grid-panel-2.csv", longPanel({ years: [2019] }));
    const secondPreview = await getPreview(new Request("http://tessera.test"), ctx({ slug, uploadId: again.ticket.uploadId }));
    expect(((await secondPreview.json()) as { preview: { remembered: { mapping: unknown } } }).preview.remembered?.mapping).toEqual(mapping);
  });

  it("shows a new version's difference from the previous one", async () => {
    as("steward");
    const csv = longPanel({ years: [2020, 2021, 2022], shift: { region: "G5", year: 2021, by: 3 } });
    const up = await upload("panel", "grid-panel-v2.csv", csv);
    const mapping = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };
    const created = await postPanels(jsonRequest("POST", { uploadId: up.ticket.uploadId, panelId, decimal: ".", mapping }), ctx({ slug }));
    const version = (await created.json()) as { id: number; version: number };
    expect(version.version).toBe(2);
    expect(await settled("panel", version.id)).toBe("validated");
    const detail = (await (await getVersion(new Request("http://tessera.test"), ctx({ slug, kind: "panel", versionId: String(version.id) }))).json()) as {
      diff: { previousVersion: number; periods: { added: string[]; removed: string[] }; changedValues: number; changedExamples: { region: string }[] };
      diffSummary: string;
    };
    expect(detail.diff.previousVersion).toBe(1);
    expect(detail.diff.periods).toEqual({ added: ["2022"], removed: ["2019"] });
    expect(detail.diff.changedValues).toBe(2); // G5 in 2021, both indicators
    expect(detail.diff.changedExamples.every((e) => e.region === "G5")).toBe(true);
    expect(detail.diffSummary).toContain("2 values changed");
  });

  it("rejects a broken CSV with a report naming rows and columns, and stores no observations", async () => {
    as("steward");
    const csv = "region,period,indicator,value\nG1,2019,jobless_rate,4.5\nG2,2019,jobless_rate,lots\nG99,2019,jobless_rate,3\nG1,2019,jobless_rate,4.6\nG3,20X9,jobless_rate,1\n";
    const up = await upload("panel", "broken.csv", csv);
    const mapping = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };
    const created = await postPanels(jsonRequest("POST", { uploadId: up.ticket.uploadId, panelId, decimal: ".", mapping }), ctx({ slug }));
    const version = (await created.json()) as { id: number };
    expect(await settled("panel", version.id)).toBe("rejected");
    expect(await observationCount(version.id)).toBe(0);
    const detail = (await (await getVersion(new Request("http://tessera.test"), ctx({ slug, kind: "panel", versionId: String(version.id) }))).json()) as {
      report: { ok: boolean; errors: { row: number; column: string | null; message: string }[]; errorCount: number; regions: { inPanelNotInBoundaries: string[] }; duplicates: { count: number } };
    };
    expect(detail.report.ok).toBe(false);
    const at = (row: number) => detail.report.errors.filter((e) => e.row === row);
    expect(at(2).some((e) => e.column === "value" && /lots/.test(e.message))).toBe(true);
    expect(at(3).some((e) => e.column === "region" && /G99/.test(e.message))).toBe(true);
    expect(at(4).some((e) => /duplicate/.test(e.message) && /row 1/.test(e.message))).toBe(true);
    expect(at(5).some((e) => e.column === "period")).toBe(true);
    expect(detail.report.regions.inPanelNotInBoundaries).toContain("G99");
    expect(detail.report.duplicates.count).toBe(1);
    // A rejected version cannot be published.
    expect((await postPublish(jsonRequest("POST"), ctx({ slug, kind: "panel", versionId: String(version.id) }))).status).toBe(409);
  });

  it.each([
    ["a header only", Buffer.from("region,period,indicator,value\n"), /no data rows|header only|no rows/i],
    ["UTF-16 text", Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from("region,period,indicator,value\nG1,2019,x,1\n", "utf16le")]), /UTF-16/],
  ])("rejects %s with a sentence saying why, storing nothing", async (_label, bytes, message) => {
    as("steward");
    const up = await upload("panel", `odd-${Date.now()}.csv`, bytes);
    expect(up.complete?.state).toBe("received");
    const mapping = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };
    const created = await postPanels(jsonRequest("POST", { uploadId: up.ticket.uploadId, panelId, decimal: ".", mapping, remember: false }), ctx({ slug }));
    const version = (await created.json()) as { id: number };
    expect(await settled("panel", version.id)).toBe("rejected");
    expect(await observationCount(version.id)).toBe(0);
    const detail = (await (await getVersion(new Request("http://tessera.test"), ctx({ slug, kind: "panel", versionId: String(version.id) }))).json()) as {
      report: { errors: { message: string }[] };
    };
    expect(detail.report.errors.map((e) => e.message).join(" ")).toMatch(message);
  });

  it("accepts semicolons with decimal commas when the steward says so", async () => {
    as("steward");
    const csv = "region;period;indicator;value\n" + Array.from({ length: 9 }, (_, i) => `G${i + 1};2019;jobless_rate;${i + 1},5`).join("\n") + "\n";
    const up = await upload("panel", "semicolons.csv", csv);
    const mapping = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };
    const created = await postPanels(jsonRequest("POST", { uploadId: up.ticket.uploadId, panelName: "Semicolons", boundarySetId, decimal: ",", mapping }), ctx({ slug }));
    const version = (await created.json()) as { id: number };
    expect(await settled("panel", version.id)).toBe("validated");
    const matrix = await loadPanelMatrix(version.id);
    expect(matrix.values.get("jobless_rate")?.get("2019")?.get("G3")).toBe(3.5);
  });

  it("rejects boundaries whose object or id property does not exist, naming them", async () => {
    as("steward");
    const up = await upload("boundaries", "grid-b.geojson", gridGeoJson(3, "H"));
    const created = await postBoundaries(jsonRequest("POST", { uploadId: up.ticket.uploadId, setName: "Grid", objectName: "regions", idProperty: "kod" }), ctx({ slug }));
    const version = (await created.json()) as { id: number };
    expect(await settled("boundaries", version.id)).toBe("rejected");
    const detail = (await (await getVersion(new Request("http://tessera.test"), ctx({ slug, kind: "boundaries", versionId: String(version.id) }))).json()) as {
      report: { errors: { feature: number | null; message: string }[] };
    };
    expect(detail.report.errors[0].message).toMatch(/property 'kod' is missing on feature 1/);
    const regions = await db().query<{ n: string }>("SELECT count(*) AS n FROM regions WHERE boundary_version_id = :id", { replacements: { id: version.id }, type: QueryTypes.SELECT });
    expect(Number(regions[0].n)).toBe(0);
  });

  it("rejects invalid geometry, naming the feature", async () => {
    as("steward");
    const topology = {
      type: "Topology",
      objects: {
        districts: {
          type: "GeometryCollection",
          geometries: [
            { type: "Polygon", arcs: [[0]], properties: { code: "A" } },
            { type: "Polygon", arcs: [[7]], properties: { code: "B" } },
          ],
        },
      },
      arcs: [[[0, 0], [1, 0], [1, 1], [0, 0]]],
    };
    const up = await upload("boundaries", "broken.topojson", JSON.stringify(topology));
    const created = await postBoundaries(jsonRequest("POST", { uploadId: up.ticket.uploadId, setName: "Broken", objectName: "districts", idProperty: "code" }), ctx({ slug }));
    const version = (await created.json()) as { id: number };
    expect(await settled("boundaries", version.id)).toBe("rejected");
    const detail = (await (await getVersion(new Request("http://tessera.test"), ctx({ slug, kind: "boundaries", versionId: String(version.id) }))).json()) as {
      report: { errors: { feature: number | null; message: string }[] };
    };
    expect(detail.report.errors[0]).toMatchObject({ feature: 2 });
    expect(detail.report.errors[0].message).toMatch(/feature 2 \(region 'B'\) refers to arc 7/);
  });
});

describe("intake: uploads that must not count", () => {
  it("refuses a file over 200 MB before anything is signed", async () => {
    as("steward");
    const response = await postUpload(jsonRequest("POST", { kind: "panel", fileName: "huge.csv", size: 200 * 1024 * 1024 + 1, sha256: "a".repeat(64) }), ctx({ slug }));
    expect(response.status).toBe(400);
    expect(((await response.json()) as { field: string }).field).toBe("size");
  });

  it("refuses a file that is not CSV or not TopoJSON/GeoJSON by its name", async () => {
    as("steward");
    const panel = await postUpload(jsonRequest("POST", { kind: "panel", fileName: "panel.xlsx", size: 100, sha256: "b".repeat(64) }), ctx({ slug }));
    expect(panel.status).toBe(400);
    const shapes = await postUpload(jsonRequest("POST", { kind: "boundaries", fileName: "map.shp", size: 100, sha256: "c".repeat(64) }), ctx({ slug }));
    expect(shapes.status).toBe(400);
  });

  it("marks an upload interrupted half-way as failed, deletes it and records no version", async () => {
    as("steward");
    const csv = Buffer.from(longPanel({ years: [2015, 2016] }));
    const up = await upload("panel", "cut.csv", csv, { sent: csv.subarray(0, Math.floor(csv.length / 2)) });
    expect(up.completeStatus).toBe(422);
    expect(up.complete?.state).toBe("failed");
    expect(up.complete?.error).toMatch(/interrupted half-way/);
    const mapping = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };
    const created = await postPanels(jsonRequest("POST", { uploadId: up.ticket.uploadId, panelId, decimal: ".", mapping }), ctx({ slug }));
    expect(created.status).toBe(409);
  });

  it("marks an upload whose checksum differs as failed", async () => {
    as("steward");
    const csv = longPanel({ years: [2014] });
    const up = await upload("panel", "tampered.csv", csv, { declaredSha: sha256("something else") });
    expect(up.complete?.state).toBe("failed");
    expect(up.complete?.error).toMatch(/checksum/);
  });

  it("recognises the same file uploaded twice by its checksum", async () => {
    as("steward");
    const response = await postUpload(jsonRequest("POST", { kind: "panel", fileName: "again.csv", size: Buffer.byteLength(longPanel()), sha256: sha256(longPanel()) }), ctx({ slug }));
    expect(response.status).toBe(409);
    expect(((await response.json()) as { error: string }).error).toMatch(/already uploaded as version 1 of panel 'Grid indicators'/);
  });
});

describe("intake: roles", () => {
  it("hides unpublished versions from an economist (404) and lists only published ones", async () => {
    as("steward");
    const up = await upload("panel", "grid-panel-v3.csv", longPanel({ years: [2023] }));
    const mapping = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };
    const version = (await (await postPanels(jsonRequest("POST", { uploadId: up.ticket.uploadId, panelId, decimal: ".", mapping }), ctx({ slug }))).json()) as { id: number };
    expect(await settled("panel", version.id)).toBe("validated");

    as("economist");
    const hidden = await getVersion(new Request("http://tessera.test"), ctx({ slug, kind: "panel", versionId: String(version.id) }));
    expect(hidden.status).toBe(404);
    const visible = await getVersion(new Request("http://tessera.test"), ctx({ slug, kind: "panel", versionId: String(firstPanelVersionId) }));
    expect(visible.status).toBe(200);
    const overview = (await (await getOverview(new Request("http://tessera.test"), ctx({ slug }))).json()) as { panels: { versions: { state: string }[] }[]; canCurate: boolean };
    expect(overview.canCurate).toBe(false);
    expect(overview.panels.flatMap((p) => p.versions).every((v) => v.state === "published")).toBe(true);
    // Nor can an economist publish or upload.
    expect((await postPublish(jsonRequest("POST"), ctx({ slug, kind: "panel", versionId: String(version.id) }))).status).toBe(403);
    expect((await postUpload(jsonRequest("POST", { kind: "panel", fileName: "x.csv", size: 10, sha256: "d".repeat(64) }), ctx({ slug }))).status).toBe(403);
  });

  it("answers 403 to a subscriber who tries to upload or edit indicators", async () => {
    as("subscriber");
    const response = await postUpload(jsonRequest("POST", { kind: "panel", fileName: "x.csv", size: 10, sha256: "e".repeat(64) }), ctx({ slug }));
    expect(response.status).toBe(403);
    const edit = await putIndicator(jsonRequest("PUT", { label: "Jobless" }), ctx({ slug, code: "jobless_rate" }));
    expect(edit.status).toBe(403);
  });

  it("lets a steward edit indicator metadata", async () => {
    as("steward");
    const response = await putIndicator(jsonRequest("PUT", { label: "Jobless rate", unit: "%", higherIsBetter: false }), ctx({ slug, code: "jobless_rate" }));
    expect(response.status).toBe(200);
    expect(await response.json()).toMatchObject({ code: "jobless_rate", label: "Jobless rate", unit: "%", higherIsBetter: false });
  });

  it("archives boundaries only when no published panel uses them", async () => {
    as("manager");
    const refused = await postArchive(jsonRequest("POST"), ctx({ slug, kind: "boundaries", versionId: String(boundaryVersionId) }));
    expect(refused.status).toBe(409);
    expect((await postArchive(jsonRequest("POST"), ctx({ slug, kind: "panel", versionId: String(firstPanelVersionId) }))).status).toBe(200);
    expect(await versionState("panel", firstPanelVersionId)).toBe("archived");
  });
});

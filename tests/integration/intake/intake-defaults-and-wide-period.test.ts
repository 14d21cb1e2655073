import { QueryTypes } from "sequelize";
import { POST as postUpload } from "@/app/api/w/[slug]/intake/uploads/route";
import { POST as postComplete } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/complete/route";
import { GET as getPreview } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/preview/route";
import { POST as postBoundaries } from "@/app/api/w/[slug]/intake/boundaries/route";
import { POST as postPanels } from "@/app/api/w/[slug]/intake/panels/route";
import { GET as getVersion } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/route";
import { POST as postPublish } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/publish/route";
import { getSessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import type { TargetSuggestion } from "@/lib/intake/version-target";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitFor } from "@/tests/helpers/wait";
import { makeWorkspace } from "../auth/fixtures";
import { asSession, ctx, gridGeoJson, jsonRequest, longPanel, sha256 } from "./fixtures";

// Safe defaults and the wide-by-period layout, through the real routes, S3,
// pg-boss and the worker: a file proposes "new version of" a boundary set or
// panel only when its codes match it; a wide file with the periods in the
// header is detected, validated and stored with the same observations as the
// long file it stands for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(90_000);

let slug: string;
let boundarySetId = 0;

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ steward: "steward" });
  slug = made.workspace.slug;
  sessionMock.mockResolvedValue(asSession(made.users.steward));
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

async function upload(kind: "boundaries" | "panel", fileName: string, content: string): Promise<string> {
  const bytes = Buffer.from(content, "utf8");
  const ticketResponse = await postUpload(jsonRequest("POST", { kind, fileName, size: bytes.length, sha256: sha256(bytes) }), ctx({ slug }));
  expect(ticketResponse.status).toBe(201);
  const ticket = (await ticketResponse.json()) as { uploadId: string; url: string; contentType: string };
  const put = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: new Uint8Array(bytes) });
  expect(put.ok).toBe(true);
  const complete = await postComplete(jsonRequest("POST"), ctx({ slug, uploadId: ticket.uploadId }));
  expect(((await complete.json()) as { state: string }).state).toBe("received");
  return ticket.uploadId;
}

async function preview<T>(uploadId: string): Promise<T> {
  const response = await getPreview(new Request("http://tessera.test"), ctx({ slug, uploadId }));
  expect(response.status).toBe(200);
  return ((await response.json()) as { preview: T }).preview;
}

async function settled(kind: "boundaries" | "panel", id: number): Promise<string> {
  const table = kind === "panel" ? "panel_versions" : "boundary_versions";
  return waitFor(
    `${kind} version ${id} to leave 'uploaded'`,
    async () => {
      const rows = await db().query<{ state: string }>(`SELECT state FROM ${table} WHERE id = :id`, { replacements: { id }, type: QueryTypes.SELECT });
      const state = rows[0]?.state ?? "missing";
      return state !== "uploaded" ? state : null;
    },
    { timeoutMs: 60_000, intervalMs: 250 },
  );
}

async function observations(panelVersionId: number) {
  return db().query<{ region: string; period: string; indicator: string; value: number | null }>(
    `SELECT region_code AS region, period_key AS period, indicator_code AS indicator, value FROM observations WHERE panel_version_id = :id ORDER BY indicator_code, period_key, region_code`,
    { replacements: { id: panelVersionId }, type: QueryTypes.SELECT },
  );
}

type BoundaryPreview = { targets: { object: string; idProperty: string; suggestion: TargetSuggestion }[] };
type PanelPreviewBody = { suggestion: { mapping: unknown }; periodIndicator: string; target: TargetSuggestion };

/** The wide-by-period twin of longPanel(): one row per region, one column per indicator and year. */
function widePeriodPanel(years: number[], indicators: string[]): string {
  const long = longPanel({ years, indicators });
  const values = new Map<string, string>();
  for (const line of long.trim().split("\n").slice(1)) {
    const [region, year, indicator, value] = line.split(",");
    values.set(`${region}|${year}|${indicator}`, value);
  }
  const columns = indicators.flatMap((indicator) => years.map((year) => ({ indicator, year })));
  const lines = [["region", ...columns.map(({ indicator, year }) => `${indicator}_${year}`)].join(",")];
  for (let i = 1; i <= 9; i++) lines.push([`G${i}`, ...columns.map(({ indicator, year }) => values.get(`G${i}|${year}|${indicator}`) ?? "")].join(","));
  return `${lines.join("\n")}\n`;
}

describe("intake defaults: a new set unless the codes match", () => {
  it("proposes a new boundary set for the first file and for a file of other regions; a new version only for a file whose codes match", async () => {
    const first = await upload("boundaries", "grid.geojson", gridGeoJson(3, "G"));
    const firstPreview = await preview<BoundaryPreview>(first);
    // One suggestion per object and candidate code property (code and name are both unique here); nothing to match yet.
    expect(firstPreview.targets.map((t) => [t.object, t.idProperty, t.suggestion.choice, t.suggestion.candidates.length])).toEqual([
      ["regions", "code", "new", 0],
      ["regions", "name", "new", 0],
    ]);
    const created = await postBoundaries(jsonRequest("POST", { uploadId: first, setName: "Grid", objectName: "regions", idProperty: "code", nameProperty: "name" }), ctx({ slug }));
    const version = (await created.json()) as { id: number; parentId: number };
    expect(await settled("boundaries", version.id)).toBe("validated");
    boundarySetId = version.parentId;
    expect((await postPublish(jsonRequest("POST"), ctx({ slug, kind: "boundaries", versionId: String(version.id) }))).status).toBe(200);

    // Other regions (H1..H9): a new set, and the overlap with Grid is there to say how few match.
    const other = await preview<BoundaryPreview>(await upload("boundaries", "other.geojson", gridGeoJson(3, "H")));
    const otherTarget = other.targets.find((t) => t.idProperty === "code")?.suggestion;
    expect(otherTarget?.choice).toBe("new");
    expect(otherTarget?.candidates).toEqual([expect.objectContaining({ id: boundarySetId, name: "Grid", version: 1, matched: 0, total: 9, matches: false })]);

    // A revised grid (G1..G16): 9 of 16 codes are Grid's, so it proposes a new version of Grid.
    const revised = await preview<BoundaryPreview>(await upload("boundaries", "grid-4.geojson", gridGeoJson(4, "G")));
    expect(revised.targets.find((t) => t.idProperty === "code")?.suggestion).toMatchObject({ choice: "version", target: { id: boundarySetId, name: "Grid", matched: 9, total: 16 } });
    // Under the name property no code matches, so that choice would start a new set.
    expect(revised.targets.find((t) => t.idProperty === "name")?.suggestion.choice).toBe("new");
  });
});

describe("wide by period through the routes", () => {
  let longVersionId = 0;
  let panelId = 0;

  it("stores a long panel first; its preview proposed a new panel", async () => {
    const uploadId = await upload("panel", "grid-long.csv", longPanel({ years: [2019, 2020], indicators: ["jobless_rate", "income"] }));
    expect((await preview<PanelPreviewBody>(uploadId)).target).toMatchObject({ choice: "new", candidates: [] });
    const mapping = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };
    const created = await postPanels(jsonRequest("POST", { uploadId, panelName: "Grid long", boundarySetId, decimal: ".", mapping }), ctx({ slug }));
    const version = (await created.json()) as { id: number; parentId: number };
    expect(await settled("panel", version.id)).toBe("validated");
    longVersionId = version.id;
    panelId = version.parentId;
  });

  it("detects the header as wide-by-period, proposes a version of the panel with the same indicators, and reads back the long file's observations", async () => {
    const uploadId = await upload("panel", "grid-wide-by-year.csv", widePeriodPanel([2019, 2020], ["jobless_rate", "income"]));
    const body = await preview<PanelPreviewBody>(uploadId);
    expect(body.suggestion.mapping).toEqual({
      layout: "wide-period",
      region: "region",
      columns: [
        { column: "jobless_rate_2019", indicator: "jobless_rate", period: "2019" },
        { column: "jobless_rate_2020", indicator: "jobless_rate", period: "2020" },
        { column: "income_2019", indicator: "income", period: "2019" },
        { column: "income_2020", indicator: "income", period: "2020" },
      ],
    });
    expect(body.target).toMatchObject({ choice: "version", target: { id: panelId, name: "Grid long", matched: 2, total: 2 } });

    // Stored as a new panel so both versions can be compared side by side.
    const created = await postPanels(jsonRequest("POST", { uploadId, panelName: "Grid wide by year", boundarySetId, decimal: ".", mapping: body.suggestion.mapping }), ctx({ slug }));
    expect(created.status).toBe(202);
    const version = (await created.json()) as { id: number };
    expect(await settled("panel", version.id)).toBe("validated");
    const stored = await observations(version.id);
    expect(stored).toHaveLength(2 * 2 * 9);
    expect(stored).toEqual(await observations(longVersionId));

    const detail = (await (await getVersion(new Request("http://tessera.test"), ctx({ slug, kind: "panel", versionId: String(version.id) }))).json()) as {
      report: { ok: boolean; layout: string; periods: string[] };
      settings: { layout: string };
    };
    expect(detail.report).toMatchObject({ ok: true, layout: "wide-period", periods: ["2019", "2020"] });
    expect(detail.settings.layout).toBe("wide-period");

    // The same header next time: the wide-period mapping is remembered.
    const again = await upload("panel", "grid-wide-by-year-2.csv", widePeriodPanel([2019, 2020], ["jobless_rate", "income"]).replace("G1,", "G1,9"));
    expect((await preview<{ remembered: { mapping: unknown } | null }>(again)).remembered?.mapping).toEqual(body.suggestion.mapping);
  });

  it("reads region,2019,2020 with the indicator code proposed from the file name", async () => {
    const csv = ["region,2019,2020", ...Array.from({ length: 9 }, (_, i) => `G${i + 1},${i + 1}.5,${i + 2}`)].join("\n");
    const uploadId = await upload("panel", "Jobless rate.csv", csv);
    const body = await preview<PanelPreviewBody>(uploadId);
    expect(body.periodIndicator).toBe("jobless_rate");
    expect(body.suggestion.mapping).toMatchObject({ layout: "wide-period", columns: [{ column: "2019", indicator: "jobless_rate" }, { column: "2020", indicator: "jobless_rate" }] });
    // The steward names the indicator otherwise.
    const mapping = { layout: "wide-period", region: "region", columns: [{ column: "2019", indicator: "unemployment", period: "2019" }, { column: "2020", indicator: "unemployment", period: "2020" }] };
    const created = await postPanels(jsonRequest("POST", { uploadId, panelName: "Bare years", boundarySetId, decimal: ".", mapping }), ctx({ slug }));
    const version = (await created.json()) as { id: number };
    expect(await settled("panel", version.id)).toBe("validated");
    const stored = await observations(version.id);
    expect(stored).toHaveLength(18);
    expect(stored.find((o) => o.region === "G3" && o.period === "2019")).toEqual({ region: "G3", period: "2019", indicator: "unemployment", value: 3.5 });
  });

  it("rejects a wide-by-period file with errors naming the file's row and the header column, storing nothing", async () => {
    const csv = ["region,jobless_rate_2019,jobless_rate_2020", "G1,1,2", "G2,lots,3", "G99,1,1", "G1,5,6"].join("\n");
    const uploadId = await upload("panel", "broken-wide.csv", csv);
    const mapping = (await preview<PanelPreviewBody>(uploadId)).suggestion.mapping;
    const created = await postPanels(jsonRequest("POST", { uploadId, panelName: "Broken wide", boundarySetId, decimal: ".", mapping }), ctx({ slug }));
    const version = (await created.json()) as { id: number };
    expect(await settled("panel", version.id)).toBe("rejected");
    expect(await observations(version.id)).toEqual([]);
    const detail = (await (await getVersion(new Request("http://tessera.test"), ctx({ slug, kind: "panel", versionId: String(version.id) }))).json()) as {
      report: { errors: { row: number | null; column: string | null; message: string }[] };
    };
    const errors = detail.report.errors;
    expect(errors).toEqual(
      expect.arrayContaining([
        expect.objectContaining({ row: 2, column: "jobless_rate_2019", message: expect.stringMatching(/lots/) }),
        expect.objectContaining({ row: 3, column: "region", message: expect.stringMatching(/'G99'/) }),
        expect.objectContaining({ row: 4, column: "region", message: expect.stringMatching(/already given on row 1/) }),
      ]),
    );
  });
});

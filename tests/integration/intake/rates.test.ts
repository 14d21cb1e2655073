import { QueryTypes } from "sequelize";
import { POST as postUpload } from "@/app/api/w/[slug]/intake/uploads/route";
import { POST as postComplete } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/complete/route";
import { GET as getPreview } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/preview/route";
import { POST as postBoundaries } from "@/app/api/w/[slug]/intake/boundaries/route";
import { POST as postPanels } from "@/app/api/w/[slug]/intake/panels/route";
import { GET as getVersion } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/route";
import { POST as postPublish } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/publish/route";
import { GET as getIndicators } from "@/app/api/w/[slug]/intake/indicators/route";
import { PUT as putIndicator } from "@/app/api/w/[slug]/intake/indicators/[code]/route";
import { getSessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { loadPanelColumns, rateColumnsOf, rateDeclarationsOf } from "@/lib/intake/published-panel";
import type { RatesReport } from "@/lib/intake/rates";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitFor } from "@/tests/helpers/wait";
import { makeWorkspace } from "../auth/fixtures";
import { asSession, ctx, gridGeoJson, jsonRequest, sha256 } from "./fixtures";

// Rates through the whole intake path (route handlers, S3, the worker,
// PostgreSQL): a panel file declaring a rate in a `# rate:` line, its problems
// named by region and period in the stored report, the derived rate values in
// the observations, and the steward's declaration through the indicator API.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(60_000);

type Users = Awaited<ReturnType<typeof makeWorkspace>>["users"];
let slug: string;
let workspaceId: number;
let users: Users;
let boundarySetId = 0;
let panelId = 0;

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ steward: "steward" });
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  users = made.users;
  sessionMock.mockResolvedValue(asSession(users.steward));
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

async function upload(kind: "boundaries" | "panel", fileName: string, content: string): Promise<string> {
  const bytes = Buffer.from(content, "utf8");
  const ticket = (await (await postUpload(jsonRequest("POST", { kind, fileName, size: bytes.length, sha256: sha256(bytes) }), ctx({ slug }))).json()) as {
    uploadId: string;
    url: string;
    contentType: string;
  };
  const put = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: new Uint8Array(bytes) });
  expect(put.ok).toBe(true);
  const complete = (await (await postComplete(jsonRequest("POST"), ctx({ slug, uploadId: ticket.uploadId }))).json()) as { state: string };
  expect(complete.state).toBe("received");
  return ticket.uploadId;
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
    { timeoutMs: 45_000, intervalMs: 250 },
  );
}

async function stored(panelVersionId: number, indicator: string): Promise<Record<string, number | null>> {
  const rows = await db().query<{ key: string; value: number | null }>(
    "SELECT region_code || '/' || period_key AS key, value FROM observations WHERE panel_version_id = :id AND indicator_code = :indicator ORDER BY 1",
    { replacements: { id: panelVersionId, indicator }, type: QueryTypes.SELECT },
  );
  return Object.fromEntries(rows.map((r) => [r.key, r.value]));
}

const LONG = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };

/** Closures and workforce for G1..G9 in 2020 and 2021; `edit` changes single cells ("G2/2020/closures" → "12"). */
function countsPanel(edit: Record<string, string> = {}, head: string[] = []): string {
  const lines = [...head, "region,period,indicator,value"];
  for (const year of [2020, 2021]) {
    for (let i = 1; i <= 9; i += 1) {
      const cells = { closures: String(i + (year - 2020)), workforce: String(1000 + 100 * i) };
      for (const [indicator, value] of Object.entries(cells)) lines.push(`G${i},${year},${indicator},${edit[`G${i}/${year}/${indicator}`] ?? value}`);
    }
  }
  return `${lines.join("\n")}\n`;
}

async function report(versionId: number) {
  const detail = (await (await getVersion(new Request("http://tessera.test"), ctx({ slug, kind: "panel", versionId: String(versionId) }))).json()) as {
    report: { ok: boolean; indicators: string[]; rates: RatesReport; warnings: { message: string }[]; errors: unknown[] };
  };
  return detail.report;
}

describe("rates through intake", () => {
  it("publishes the grid boundaries", async () => {
    const uploadId = await upload("boundaries", "grid.geojson", gridGeoJson());
    const created = await postBoundaries(jsonRequest("POST", { uploadId, setName: "Grid", objectName: "regions", idProperty: "code", nameProperty: "name" }), ctx({ slug }));
    const version = (await created.json()) as { id: number; parentId: number };
    expect(await settled("boundaries", version.id)).toBe("validated");
    expect((await postPublish(jsonRequest("POST"), ctx({ slug, kind: "boundaries", versionId: String(version.id) }))).status).toBe(200);
    boundarySetId = version.parentId;
  });

  it("a file declaring a rate: problems by region and period in the stored report, every row kept, the rate derived and stored", async () => {
    const csv = countsPanel(
      { "G2/2020/closures": "1500", "G3/2020/workforce": "0", "G4/2021/workforce": "", "G5/2021/closures": "-2" },
      ["# rate: closures_per_1000 = closures / workforce * 1000"],
    );
    const uploadId = await upload("panel", "closures.csv", csv);
    const preview = ((await (await getPreview(new Request("http://tessera.test"), ctx({ slug, uploadId }))).json()) as { preview: { header: string[]; rates: unknown[] } }).preview;
    expect(preview.header).toEqual(["region", "period", "indicator", "value"]);
    expect(preview.rates).toEqual([{ indicator: "closures_per_1000", events: "closures", population: "workforce", multiplier: 1000 }]);

    const created = await postPanels(jsonRequest("POST", { uploadId, panelName: "Closures", boundarySetId, decimal: ".", mapping: LONG }), ctx({ slug }));
    const version = (await created.json()) as { id: number; parentId: number };
    panelId = version.parentId;
    expect(await settled("panel", version.id)).toBe("validated");

    const r = await report(version.id);
    expect(r.ok).toBe(true);
    expect(r.indicators).toEqual(["closures", "workforce", "closures_per_1000"]);
    expect(r.rates.declarations).toEqual([
      { indicator: "closures_per_1000", events: "closures", population: "workforce", multiplier: 1000, source: "file", derived: true, values: 14, missing: 4, problems: 4 },
    ]);
    expect(r.rates.problems.map((p) => [p.region, p.period, p.indicator, p.kind])).toEqual([
      ["G2", "2020", "closures_per_1000", "events-exceed-population"],
      ["G3", "2020", "closures_per_1000", "zero-population"],
      ["G4", "2021", "closures_per_1000", "missing-population"],
      ["G5", "2021", "closures_per_1000", "negative-events"],
    ]);
    expect(r.rates.problems[0]?.message).toBe("region 'G2', period 2020, indicator 'closures_per_1000': closures (1500) exceeds workforce (1200); no rate derived");
    expect(r.warnings.some((w) => /4 region-period\(s\) of the rate 'closures_per_1000'/.test(w.message))).toBe(true);

    // Every given cell stays, the problem cells too; the rate is stored for every region-period, missing where it cannot be computed.
    expect(Object.keys(await stored(version.id, "closures"))).toHaveLength(18);
    expect((await stored(version.id, "closures"))["G5/2021"]).toBe(-2);
    const rate = await stored(version.id, "closures_per_1000");
    expect(Object.keys(rate)).toHaveLength(18);
    expect(rate["G1/2020"]).toBeCloseTo((1 / 1100) * 1000, 12);
    expect(rate["G9/2021"]).toBeCloseTo((10 / 1900) * 1000, 12);
    expect([rate["G2/2020"], rate["G3/2020"], rate["G4/2021"], rate["G5/2021"]]).toEqual([null, null, null, null]);

    // The file's declaration became the indicator record's, visible through the indicators API.
    const indicators = ((await (await getIndicators(new Request("http://tessera.test"), ctx({ slug }))).json()) as { indicators: { code: string; rate: unknown }[] }).indicators;
    expect(indicators.find((i) => i.code === "closures_per_1000")?.rate).toEqual({ events: "closures", population: "workforce", multiplier: 1000 });
    expect(indicators.find((i) => i.code === "closures")?.rate).toBeNull();

    // What a run on the rate reads: its events and population columns of the version.
    expect((await postPublish(jsonRequest("POST"), ctx({ slug, kind: "panel", versionId: String(version.id) }))).status).toBe(200);
    const [declaration] = await rateDeclarationsOf(workspaceId);
    expect(declaration).toEqual({ indicator: "closures_per_1000", events: "closures", population: "workforce", multiplier: 1000 });
    const panel = await loadPanelColumns(version.id, { indicators: [declaration.events, declaration.population] });
    const columns = rateColumnsOf(panel, declaration);
    const g1 = panel.regionCodes.indexOf("G1");
    expect(columns.periods.map((p) => p.key)).toEqual(["2020", "2021"]);
    expect([columns.events[1][g1], columns.population[1][g1], columns.multiplier]).toEqual([2, 1100, 1000]);
    expect(Number.isNaN(columns.population[1][panel.regionCodes.indexOf("G4")])).toBe(true);
    expect(() => rateColumnsOf({ ...panel, columns: new Map() }, declaration)).toThrow(`panel version ${version.id} has no indicator 'closures' or 'workforce', which the rate 'closures_per_1000' divides`);
  });

  it("the indicator API checks a steward's declaration: zod, not itself, both codes in one panel, no chained rates", async () => {
    const put = async (code: string, body: unknown) => {
      const response = await putIndicator(jsonRequest("PUT", body), ctx({ slug, code }));
      return { status: response.status, body: (await response.json()) as { error?: string; rate?: unknown } };
    };
    const label = { label: "Closures per cent" };
    expect((await put("closures_pct", { ...label, rate: { events: "closures", population: "workforce", multiplier: 50 } })).status).toBe(400);
    expect((await put("closures_pct", { ...label, rate: { events: "closures", population: "closures", multiplier: 100 } })).body.error).toMatch(/two different indicators/);
    const self = await put("closures_pct", { ...label, rate: { events: "closures_pct", population: "workforce", multiplier: 100 } });
    expect([self.status, self.body.error]).toEqual([400, "rate: 'closures_pct' cannot be its own events"]);
    const apart = await put("closures_pct", { ...label, rate: { events: "closures", population: "residents", multiplier: 100 } });
    expect([apart.status, apart.body.error]).toEqual([400, "rate: 'closures' and 'residents' are not both indicators of one panel of this workspace (a validated or published version)"]);
    const chained = await put("closures_pct", { ...label, rate: { events: "closures_per_1000", population: "workforce", multiplier: 100 } });
    expect([chained.status, chained.body.error]).toEqual([400, "rate: 'closures_per_1000' is itself a rate; a rate's events and population are counts"]);
    // A refused declaration leaves nothing behind.
    expect((await rateDeclarationsOf(workspaceId)).map((d) => d.indicator)).toEqual(["closures_per_1000"]);

    const ok = await put("closures_pct", { ...label, rate: { events: "closures", population: "workforce", multiplier: 100 } });
    expect([ok.status, ok.body.rate]).toEqual([200, { events: "closures", population: "workforce", multiplier: 100 }]);
    // Saving metadata without `rate` keeps the declaration; null clears it.
    expect((await put("closures_pct", { label: "Closures (%)" })).body.rate).toEqual({ events: "closures", population: "workforce", multiplier: 100 });
    expect((await put("closures_pct", { label: "Closures (%)", rate: null })).body.rate).toBeNull();
    expect((await put("closures_pct", { label: "Closures (%)", rate: { events: "closures", population: "workforce", multiplier: 100 } })).status).toBe(200);

    const audit = await db().query<{ detail: { changed: string[] } }>(
      "SELECT detail FROM audit_events WHERE workspace_id = :workspaceId AND action = 'indicator.updated' ORDER BY id DESC LIMIT 3",
      { replacements: { workspaceId }, type: QueryTypes.SELECT },
    );
    expect(audit.map((a) => a.detail.changed.includes("rate"))).toEqual([true, true, false]);
  });

  it("a next version without the rate lines: checked with the workspace's declarations; a rate given in the file that disagrees is named", async () => {
    const base = countsPanel().trimEnd().split("\n");
    // closures_pct given for 2020: G1 correct to one decimal, G6 wrong.
    const given = Array.from({ length: 9 }, (_, i) => {
      const value = i === 5 ? "0.9" : (((i + 1) / (1000 + 100 * (i + 1))) * 100).toFixed(1);
      return `G${i + 1},2020,closures_pct,${value}`;
    });
    const uploadId = await upload("panel", "closures-v2.csv", `${[...base, ...given].join("\n")}\n`);
    const created = await postPanels(jsonRequest("POST", { uploadId, panelId, decimal: ".", mapping: LONG }), ctx({ slug }));
    const version = (await created.json()) as { id: number };
    expect(await settled("panel", version.id)).toBe("validated");
    const r = await report(version.id);
    expect(r.ok).toBe(true);
    expect(r.rates.declarations.map((d) => [d.indicator, d.source, d.derived, d.values, d.problems])).toEqual([
      ["closures_pct", "workspace", false, 9, 1],
      ["closures_per_1000", "workspace", true, 18, 0],
    ]);
    expect(r.rates.problems).toEqual([
      {
        kind: "rate-disagrees",
        region: "G6",
        period: "2020",
        indicator: "closures_pct",
        row: 42,
        message: "region 'G6', period 2020, indicator 'closures_pct': the file gives 0.9 but closures / workforce × 100 is 0.375",
      },
    ]);
    // The file's own rate values are stored as given (2020 only); the other rate is derived for both years.
    expect(Object.keys(await stored(version.id, "closures_pct"))).toHaveLength(9);
    expect((await stored(version.id, "closures_pct"))["G6/2020"]).toBe(0.9);
    expect(Object.values(await stored(version.id, "closures_per_1000")).every((v) => v !== null)).toBe(true);
  });
});

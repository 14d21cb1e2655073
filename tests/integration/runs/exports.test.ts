import { readFileSync } from "node:fs";
import path from "node:path";
import { QueryTypes } from "sequelize";
import type { GeometryCollection, Topology } from "topojson-specification";
import { GET as getExport } from "@/app/api/w/[slug]/runs/[runId]/export/[kind]/route";
import { GET as getMap } from "@/app/api/w/[slug]/map/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { GLOBAL_COLUMNS, LOCAL_COLUMNS } from "@/lib/runs/exports";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { resolveRunParams } from "@/lib/runs/service";
import { insertRun } from "@/lib/runs/store";
import type { LocalFields, GiStarFields } from "@/lib/runs/types";
import { runPiece } from "@/lib/runs/worker";
import { transformWeights, weightsFromTopology } from "@/lib/spatial";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "./fixtures";
import { parseCsv } from "@/tests/helpers/csv";

// Exports of a run (docs/exports.md): the global and local results and the
// weights, as CSV and JSON, streamed from the route handler. Checked against
// the stored rows, the map API's answer for the same run, and the weights the
// engine builds from the same topology (lib/spatial weightsFromTopology,
// transformWeights). One region gets a spreadsheet formula as its code, so
// the CSV formula guard (lib/runs/csv) is exercised on every export.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(300_000);

const HOSTILE = '=HYPERLINK("https://example.invalid","x")';
const rename = (code: string) => (code === "VM-001" ? HOSTILE : code);
const INDICATORS = ["unemployment_rate", "broadband_coverage"];
const PERIODS = ["2008", "2009", "2010", "2011", "2012", "2013", "2014", "2015", "2016", "2017"];
const DATA = path.join(__dirname, "..", "..", "..", "seeders", "data", "veldmark");

type Made = Awaited<ReturnType<typeof makeWorkspace>>;
let a: Made;
let b: Made;
let panel: LoadedPanel;
let runId: number;
let runNumber: number;
let queuedKnnRun: number;

const ctx = (p: Record<string, string>) => ({ params: Promise.resolve(p) });
const as = (user: { id: number; email: string; name: string }) => sessionMock.mockResolvedValue({ id: user.id, email: user.email, name: user.name } satisfies SessionUser);

async function exportOf(slug: string, run: number, kind: string, format: "csv" | "json") {
  return getExport(new Request(`http://tessera.test/api?format=${format}`), ctx({ slug, runId: String(run), kind }));
}

/** Reads a body, counting the chunks it arrives in. */
async function readBody(response: Response): Promise<{ text: string; chunks: number }> {
  const reader = response.body!.getReader();
  const decoder = new TextDecoder();
  let text = "";
  let chunks = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    chunks++;
    text += decoder.decode(value, { stream: true });
  }
  return { text: text + decoder.decode(), chunks };
}

interface JsonExport {
  format: string;
  kind: string;
  run: number;
  columns: string[];
  readme?: string;
  weights?: { rule: string; transform: string; islandPolicy: string; boundaryVersionId: number };
  rows: Record<string, unknown>[];
}

/** The CSV cell a JSON value must have been written as (numbers in JS's shortest form, booleans TRUE/FALSE). */
function asCsv(value: unknown): string {
  if (value === null) return "";
  if (typeof value === "boolean") return value ? "TRUE" : "FALSE";
  return String(value);
}

async function startRun(workspaceId: number, userId: number, choice: Record<string, unknown>): Promise<number> {
  const resolved = await resolveRunParams(workspaceId, panel.panelVersionId, runParamsInputSchema.parse({ indicators: INDICATORS, periods: PERIODS, ...choice }));
  return insertRun({ workspaceId, params: resolved, createdBy: userId, origin: "user" });
}

beforeAll(async () => {
  await requireTestServices();
  a = await makeWorkspace({ economist: "economist", subscriber: "subscriber" });
  b = await makeWorkspace({ manager: "manager" });
  panel = await loadVeldmarkPanel(a.workspace.id, { indicators: INDICATORS, periods: PERIODS, regionCode: rename });
  runId = await startRun(a.workspace.id, a.users.economist.id, { seed: 99, permutations: 199, correction: "fdr", alpha: 0.05, local: true });
  for (const indicator of INDICATORS) await runPiece(runId, indicator);
  const [row] = await db().query<{ state: string; number: number }>("SELECT state, number FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
  expect(row.state).toBe("completed");
  runNumber = row.number;
  queuedKnnRun = await startRun(a.workspace.id, a.users.economist.id, { weights: "knn:4", transform: "binary", local: false });
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

beforeEach(() => as(a.users.economist));

describe("global results", () => {
  test("JSON parses, has one row per indicator × period, and every value equals the stored row", async () => {
    const response = await exportOf(a.workspace.slug, runId, "global", "json");
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toBe("application/json; charset=utf-8");
    expect(response.headers.get("cache-control")).toBe("no-store");
    expect(response.headers.get("content-disposition")).toBe(`attachment; filename="tessera-${a.workspace.slug}-run-${runNumber}-global.json"`);
    const body = JSON.parse((await readBody(response)).text) as JsonExport;
    expect(body.format).toBe("tessera-export/1");
    expect(body.columns).toEqual(GLOBAL_COLUMNS.map((c) => c.name));
    expect(body.rows).toHaveLength(INDICATORS.length * PERIODS.length);
    const stored = await db().query<Record<string, unknown>>("SELECT * FROM run_results WHERE run_id = $1 ORDER BY indicator_code, period_index", {
      bind: [runId],
      type: QueryTypes.SELECT,
    });
    body.rows.forEach((row, k) => {
      const s = stored[k];
      expect(Object.keys(row)).toEqual(body.columns);
      expect([row.indicator, row.period, row.run]).toEqual([s.indicator_code, s.period_key, runNumber]);
      expect(row.moran_i).toBe(s.i);
      expect(row.expected_i).toBe(s.expected_i);
      expect(row.variance_normality).toBe(s.variance_normality);
      expect(row.variance_randomisation).toBe(s.variance_randomisation);
      expect(row.z_normality).toBe(s.z_normality);
      expect(row.p_randomisation).toBe(s.p_randomisation);
      expect(row.permutation_mean).toBe(s.perm_mean);
      expect(row.permutation_sd).toBe(s.perm_sd);
      expect(row.pseudo_p_greater).toBe(s.perm_p_greater);
      expect(row.pseudo_p_less).toBe(s.perm_p_less);
      expect(row.pseudo_p_two_sided).toBe(s.perm_p);
      expect(row.adjusted_p).toBe(s.adjusted_p);
      expect(row.significance).toBe(s.significance);
      expect(row.geary_c).toBe(s.geary_c);
      expect(row.general_g_pseudo_p).toBe(s.general_g_pseudo_p);
      const weights = s.weights as { S0: number; links: number; rule: string };
      expect([row.weights_s0, row.weights_links, row.weights_rule]).toEqual([weights.S0, weights.links, weights.rule]);
      expect(row.eb_standardised).toBe(false);
      expect(row.residual_moran_i).toBeNull();
      expect(row.note).toBe(s.note);
    });
    // The two p conventions the screens show are both there and differ: two-sided = min(1, 2·min(greater, less)).
    for (const row of body.rows) {
      if (row.pseudo_p_two_sided === null) continue;
      expect(row.pseudo_p_two_sided).toBeCloseTo(Math.min(1, 2 * Math.min(row.pseudo_p_greater as number, row.pseudo_p_less as number)), 12);
    }
  });

  test("CSV has the same header and values as the JSON", async () => {
    const json = JSON.parse((await readBody(await exportOf(a.workspace.slug, runId, "global", "json"))).text) as JsonExport;
    const response = await exportOf(a.workspace.slug, runId, "global", "csv");
    expect(response.headers.get("content-type")).toBe("text/csv; charset=utf-8");
    expect(response.headers.get("content-disposition")).toBe(`attachment; filename="tessera-${a.workspace.slug}-run-${runNumber}-global.csv"`);
    const [header, ...rows] = parseCsv((await readBody(response)).text);
    expect(header).toEqual(json.columns);
    expect(rows).toEqual(json.rows.map((r) => json.columns.map((c) => asCsv(r[c]))));
  });

  test("a run that has not completed answers 409 for its results", async () => {
    const response = await exportOf(a.workspace.slug, queuedKnnRun, "global", "csv");
    expect(response.status).toBe(409);
  });
});

describe("local results", () => {
  test("JSON rows equal the map API's local Moran and Gi* for every period of the run", async () => {
    const response = await exportOf(a.workspace.slug, runId, "local", "json");
    expect(response.status).toBe(200);
    const body = JSON.parse((await readBody(response)).text) as JsonExport;
    expect(body.columns).toEqual(LOCAL_COLUMNS.map((c) => c.name));
    let k = 0;
    // Rows come by indicator code, then period, then the run's region order.
    for (const indicator of [...INDICATORS].sort()) {
      for (const period of PERIODS) {
        const map = await getMap(new Request(`http://tessera.test/api?indicator=${indicator}&period=${period}&run=${runId}`), ctx({ slug: a.workspace.slug }));
        expect(map.status).toBe(200);
        const { map: answer } = (await map.json()) as { map: { local: LocalFields; giStar: GiStarFields } };
        const local = answer.local;
        local.ids.forEach((id, i) => {
          const row = body.rows[k++];
          expect([row.indicator, row.period, row.region]).toEqual([indicator, period, id]);
          expect(row.local_i).toBe(local.Ii[i]);
          expect(row.local_z).toBe(local.z[i]);
          expect(row.local_pseudo_p).toBe(local.pseudoP[i]);
          expect(row.local_adjusted_p).toBe(local.adjustedP[i]);
          expect(row.quadrant).toBe(local.quadrant[i]);
          expect(row.cluster).toBe(local.cluster[i]);
          expect(row.standardised_value).toBe(local.standardised[i]);
          expect(row.spatial_lag).toBe(local.lag[i]);
          expect(row.correction).toBe("fdr");
          expect(answer.giStar.ids[i]).toBe(id);
          expect(row.gi_star_z).toBe(answer.giStar.z[i]);
          expect(row.gi_star_p).toBe(answer.giStar.p[i]);
          expect(row.gi_star_pseudo_p).toBe(answer.giStar.pseudoP[i]);
          expect(row.gi_star_class).toBe(answer.giStar.classes[i]);
        });
      }
    }
    expect(body.rows).toHaveLength(k);
    expect(k).toBeGreaterThan(4_000);
    expect(body.rows.find((r) => r.region === HOSTILE)?.region_name).toBe("Leltwyde");
  });

  test("the CSV guards the hostile region code and arrives in more than one chunk", async () => {
    const response = await exportOf(a.workspace.slug, runId, "local", "csv");
    const { text, chunks } = await readBody(response);
    // 2 indicators × 10 periods × up to 238 regions: over 4,000 rows, read from PostgreSQL 2,000 at a time, after the header.
    expect(chunks).toBeGreaterThan(2);
    expect(text).toContain(`"'=HYPERLINK(""https://example.invalid"",""x"")"`);
    const [header, ...rows] = parseCsv(text);
    expect(header).toEqual(LOCAL_COLUMNS.map((c) => c.name));
    const regionAt = header.indexOf("region");
    expect(rows.filter((r) => r[regionAt] === `'${HOSTILE}`)).toHaveLength(INDICATORS.length * PERIODS.length);
    expect(rows.some((r) => r[regionAt] === HOSTILE)).toBe(false);
  });
});

describe("weights", () => {
  const topology = (): { topology: Topology; object: string } => {
    const t = JSON.parse(readFileSync(path.join(DATA, "veldmark.topojson"), "utf8")) as Topology;
    for (const g of (t.objects.districts as GeometryCollection<{ code: string }>).geometries) if (g.properties && "code" in g.properties) g.properties.code = rename(g.properties.code);
    return { topology: t, object: "districts" };
  };
  const engineEdges = (rule: string, transform: "row-standardised" | "binary") => {
    const { topology: t, object } = topology();
    const wts = transformWeights(weightsFromTopology(t, rule, { object, idProperty: "code" }), transform);
    const edges: [string, string, number][] = [];
    for (let i = 0; i < wts.ids.length; i++) for (let k = wts.offsets[i]; k < wts.offsets[i + 1]; k++) edges.push([wts.ids[i], wts.ids[wts.neighbours[k]], wts.weights[k]]);
    return edges;
  };

  test("the JSON edge list equals the engine's queen weights, row-standardised, and says they are the base weights", async () => {
    const body = JSON.parse((await readBody(await exportOf(a.workspace.slug, runId, "weights", "json"))).text) as JsonExport;
    expect(body.columns).toEqual(["from", "to", "weight"]);
    expect(body.weights).toEqual({ rule: "queen", transform: "row-standardised", islandPolicy: "exclude", boundaryVersionId: panel.boundaryVersionId });
    expect(body.readme).toMatch(/restricted to the regions with a value and re-standardised/);
    const expected = engineEdges("queen", "row-standardised");
    expect(expected.length).toBeGreaterThan(panel.regions.length);
    expect(body.rows.map((r) => [r.from, r.to, r.weight])).toEqual(expected);
  });

  test("a queued run's knn:4 binary weights export as CSV, equal to the engine's, with the hostile code guarded", async () => {
    const response = await exportOf(a.workspace.slug, queuedKnnRun, "weights", "csv");
    expect(response.status).toBe(200);
    const [header, ...rows] = parseCsv((await readBody(response)).text);
    expect(header).toEqual(["from", "to", "weight"]);
    const expected = engineEdges("knn:4", "binary");
    expect(rows).toHaveLength(expected.length);
    const guard = (code: string) => (code === HOSTILE ? `'${HOSTILE}` : code);
    expect(rows).toEqual(expected.map(([f, t, v]) => [guard(f), guard(t), String(v)]));
  });
});

describe("access", () => {
  test("a subscriber may not export (403); a bad kind or format is a 400", async () => {
    as(a.users.subscriber);
    expect((await exportOf(a.workspace.slug, runId, "global", "csv")).status).toBe(403);
    as(a.users.economist);
    expect((await exportOf(a.workspace.slug, runId, "regions", "csv")).status).toBe(400);
    const bad = await getExport(new Request("http://tessera.test/api?format=xlsx"), ctx({ slug: a.workspace.slug, runId: String(runId), kind: "local" }));
    expect(bad.status).toBe(400);
  });

  test("another workspace's run is 404 through one's own workspace, and the other workspace is 404 too", async () => {
    as(b.users.manager);
    for (const kind of ["global", "local", "weights"]) {
      const own = await exportOf(b.workspace.slug, runId, kind, "csv");
      expect(own.status).toBe(404);
      expect(await own.text()).not.toContain("VM-");
      expect((await exportOf(a.workspace.slug, runId, kind, "json")).status).toBe(404);
    }
  });
});

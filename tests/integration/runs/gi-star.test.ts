import { readFileSync } from "node:fs";
import path from "node:path";
import { QueryTypes } from "sequelize";
import type { Topology } from "topojson-specification";
import { GET as getMap } from "@/app/api/w/[slug]/map/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { loadPanelMatrix } from "@/lib/intake/published-panel";
import { statisticSeed } from "@/lib/runs/compute";
import { runParamsInputSchema, type ResolvedRunParams } from "@/lib/runs/schemas";
import { resolveRunParams } from "@/lib/runs/service";
import { insertRun } from "@/lib/runs/store";
import type { GiStarFields, LocalFields } from "@/lib/runs/types";
import { runPiece } from "@/lib/runs/worker";
import { adjustPValues, createRandomSource, localGetisOrd, prepareAnalysis, weightsFromTopology } from "@/lib/spatial";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "./fixtures";

// Local Gi* (hot and cold spots) stored by a run (issue 15, item 3): the stored
// numbers equal the engine's local Getis–Ord on the same data, weights and
// seed, classed under the run's correction; the map answer carries them; the
// rows are frozen once the run completes; and a run that stored no Gi* still
// maps. The run is computed in this process (stored, not queued), so no worker
// is involved.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(240_000);

const PERIODS = ["2012", "2014", "2016"];
const INDICATORS = ["unemployment_rate", "broadband_coverage"];
const DATA = path.join(__dirname, "..", "..", "..", "seeders", "data", "veldmark");
let slug: string;
let workspaceId: number;
let userId: number;
let panel: LoadedPanel;
let runId: number;
let params: ResolvedRunParams;

const ctx = (p: Record<string, string>) => ({ params: Promise.resolve(p) });
const get = (query: string) => new Request(`http://tessera.test/api?${query}`);

type Row = { indicator_code: string; period_key: string; local: LocalFields | null; gi_star: GiStarFields | null };
async function rowsOf(id: number): Promise<Row[]> {
  return db().query<Row>("SELECT indicator_code, period_key, local, gi_star FROM run_results WHERE run_id = $1 ORDER BY indicator_code, period_index", {
    bind: [id],
    type: QueryTypes.SELECT,
  });
}
async function stateOf(id: number): Promise<string> {
  const [row] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [id], type: QueryTypes.SELECT });
  return row.state;
}
async function startRun(choice: Record<string, unknown>): Promise<{ id: number; params: ResolvedRunParams }> {
  const resolved = await resolveRunParams(workspaceId, panel.panelVersionId, runParamsInputSchema.parse({ indicators: INDICATORS, periods: PERIODS, ...choice }));
  return { id: await insertRun({ workspaceId, params: resolved, createdBy: userId, origin: "user" }), params: resolved };
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ analyst: "economist" });
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  const analyst = made.users.analyst;
  userId = analyst.id;
  sessionMock.mockResolvedValue({ id: analyst.id, email: analyst.email, name: analyst.name } satisfies SessionUser);
  panel = await loadVeldmarkPanel(workspaceId, { indicators: INDICATORS, periods: PERIODS });
  const run = await startRun({ seed: 4242, permutations: 999, correction: "fdr", alpha: 0.05, local: true });
  runId = run.id;
  params = run.params;
  for (const indicator of INDICATORS) await runPiece(runId, indicator);
  expect(await stateOf(runId)).toBe("completed");
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("a run with local results stores local Gi*", () => {
  it("equal to the engine's local Getis–Ord on the same values, weights and seed, classed under the run's correction", async () => {
    // The engine straight from the boundary file and the published values, not through the run's code.
    const topology = JSON.parse(readFileSync(path.join(DATA, "veldmark.topojson"), "utf8")) as Topology;
    const base = weightsFromTopology(topology, params.weights, { object: "districts", idProperty: "code" });
    const matrix = await loadPanelMatrix(params.panelVersionId, { indicators: INDICATORS, periods: PERIODS });
    const rows = await rowsOf(runId);
    expect(rows).toHaveLength(INDICATORS.length * PERIODS.length);
    let hot = 0;
    let cold = 0;
    for (const row of rows) {
      const gi = row.gi_star;
      expect(gi).not.toBeNull();
      if (!gi) continue;
      const prepared = prepareAnalysis(base, matrix.values.get(row.indicator_code)?.get(row.period_key) ?? new Map(), {
        islandPolicy: params.islandPolicy,
        transform: params.transform,
      });
      const engine = localGetisOrd(prepared.values, prepared.weights, {
        star: true,
        permutations: params.permutations,
        random: createRandomSource(statisticSeed(params.seed, "local")),
      });
      const adjusted = adjustPValues(
        engine.regions.map((r) => (r.neighbours > 0 ? r.pseudoP : null)),
        params.correction,
      );
      const label = `${row.indicator_code} ${row.period_key}`;
      expect([label, gi.ids]).toEqual([label, engine.regions.map((r) => r.id)]);
      expect([label, gi.z]).toEqual([label, engine.regions.map((r) => r.z)]);
      expect([label, gi.p]).toEqual([label, engine.regions.map((r) => r.p)]);
      expect([label, gi.pseudoP]).toEqual([label, engine.regions.map((r) => r.pseudoP)]);
      expect([label, gi.adjustedP]).toEqual([label, adjusted]);
      const classes = engine.regions.map((r, i) => {
        if (r.neighbours === 0) return "no-neighbours";
        const p = adjusted[i];
        return p !== null && p <= params.alpha && r.z !== null && r.z !== 0 ? (r.z > 0 ? "hot" : "cold") : "not-significant";
      });
      expect([label, gi.classes]).toEqual([label, classes]);
      expect(gi).toMatchObject({ alpha: 0.05, correction: "fdr", pValueSource: "permutation" });
      // Aligned with local Moran's regions, so a map shows both views of the same regions.
      expect(gi.ids).toEqual(row.local?.ids);
      if (row.indicator_code === "unemployment_rate") {
        hot += gi.counts.hot;
        cold += gi.counts.cold;
      }
    }
    // Veldmark's unemployment clusters after the invented shipyard closure: both kinds appear.
    expect(hot).toBeGreaterThan(0);
    expect(cold).toBeGreaterThan(0);
  });

  it("the map answer carries each period's Gi* as stored", async () => {
    const rows = await rowsOf(runId);
    for (const period of PERIODS) {
      const response = await getMap(get(`indicator=unemployment_rate&run=${runId}&period=${period}`), ctx({ slug }));
      expect(response.status).toBe(200);
      const body = (await response.json()) as { map: { giStar: GiStarFields | null } };
      expect(body.map.giStar).toEqual(rows.find((r) => r.indicator_code === "unemployment_rate" && r.period_key === period)?.gi_star);
    }
  });

  it("the rows are frozen with the completed run: PostgreSQL refuses a change to Gi*, naming the run", async () => {
    const before = await rowsOf(runId);
    const refused = (sql: string) =>
      db()
        .query(sql, { bind: [runId] })
        .then(
          () => "accepted",
          (error: unknown) => (error as Error).message,
        );
    const message = `Results of run ${runId} cannot be changed (update): the run is completed. Rerun it for new results.`;
    expect(await refused("UPDATE run_results SET gi_star = NULL WHERE run_id = $1")).toBe(message);
    expect(await refused(`UPDATE run_results SET gi_star = jsonb_set(gi_star, '{classes,0}', '"hot"') WHERE run_id = $1`)).toBe(message);
    expect(await rowsOf(runId)).toEqual(before);
  });
});

describe("runs that stored no Gi*", () => {
  it("a run without local results stores none, and its map answers with giStar null", async () => {
    const run = await startRun({ seed: 4242, permutations: 99, local: false });
    for (const indicator of INDICATORS) await runPiece(run.id, indicator);
    expect((await rowsOf(run.id)).every((r) => r.gi_star === null && r.local === null)).toBe(true);
    const response = await getMap(get(`indicator=unemployment_rate&run=${run.id}&period=2014`), ctx({ slug }));
    expect(response.status).toBe(200);
    expect(((await response.json()) as { map: { giStar: unknown } }).map.giStar).toBeNull();
  });

  it("a run stored before Gi* existed (local Moran only) still maps, with giStar null beside its clusters", async () => {
    // Such a row is made the way an old worker left it: while the run is still running (not yet
    // frozen), the first indicator's Gi* is cleared; the last piece then completes the run.
    const run = await startRun({ seed: 4242, permutations: 99, local: true });
    await runPiece(run.id, INDICATORS[0]);
    expect(await stateOf(run.id)).toBe("running");
    await db().query("UPDATE run_results SET gi_star = NULL WHERE run_id = $1 AND indicator_code = $2", { bind: [run.id, INDICATORS[0]] });
    await runPiece(run.id, INDICATORS[1]);
    expect(await stateOf(run.id)).toBe("completed");
    const response = await getMap(get(`indicator=${INDICATORS[0]}&run=${run.id}&period=2014`), ctx({ slug }));
    expect(response.status).toBe(200);
    const body = (await response.json()) as { map: { giStar: unknown; local: LocalFields | null } };
    expect(body.map.giStar).toBeNull();
    expect(body.map.local?.cluster.length).toBeGreaterThan(100);
  });
});

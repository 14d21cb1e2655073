import { QueryTypes } from "sequelize";
import { POST as postRun } from "@/app/api/w/[slug]/runs/route";
import { POST as postRerun } from "@/app/api/w/[slug]/runs/[runId]/rerun/route";
import { GET as getOptions } from "@/app/api/w/[slug]/runs/options/route";
import { GET as getMap } from "@/app/api/w/[slug]/map/route";
import { GET as getCatalogue } from "@/app/api/w/[slug]/catalogue/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { loadPanelMatrix } from "@/lib/intake/published-panel";
import { catalogueRowsOf, type CatalogueAnswer } from "@/lib/runs/catalogue-wire";
import { computePeriod } from "@/lib/runs/compute";
import type { RunOption } from "@/lib/runs/queries";
import type { ReachabilityWarning } from "@/lib/runs/reachability";
import type { ResolvedRunParams } from "@/lib/runs/schemas";
import type { LocalFields } from "@/lib/runs/types";
import { geometryFor } from "@/lib/runs/worker";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "./fixtures";

// Sequential Monte Carlo p-values (Besag & Clifford 1991) as a run option,
// through the start route, the queue and the test bring-up's worker; and the
// reachability warning the options, map and catalogue answers carry for a run
// whose 999 permutations cannot pass Bonferroni over Veldmark's regions.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(240_000);

const PERIODS = ["2015", "2016"];
const INDICATOR = "unemployment_rate";
let slug: string;
let panel: LoadedPanel;
let sequentialRun: number;
let fixedRun: number;

const ctx = (params: Record<string, string>) => ({ params: Promise.resolve(params) });
const post = (body: unknown) => new Request("http://tessera.test/api", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
const get = (query: string) => new Request(`http://tessera.test/api?${query}`);

async function waitForRun(runId: number, timeoutMs = 200_000): Promise<string> {
  const started = Date.now();
  for (;;) {
    const [row] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
    if (row && ["completed", "failed", "cancelled"].includes(row.state)) return row.state;
    if (Date.now() - started > timeoutMs) throw new Error(`run ${runId} still ${row?.state} after ${timeoutMs} ms: is the test worker running?`);
    await new Promise((r) => setTimeout(r, 500));
  }
}

type StoredRow = {
  period_key: string;
  i: number | null;
  perm_p: number | null;
  perm_mean: number | null;
  geary_pseudo_p: number | null;
  general_g_pseudo_p: number | null;
  band_low: number | null;
  local: LocalFields | null;
};
async function stored(runId: number): Promise<StoredRow[]> {
  return db().query<StoredRow>(
    "SELECT period_key, i, perm_p, perm_mean, geary_pseudo_p, general_g_pseudo_p, band_low, local FROM run_results WHERE run_id = $1 ORDER BY period_index",
    { bind: [runId], type: QueryTypes.SELECT },
  );
}
async function paramsOf(runId: number): Promise<Record<string, unknown>> {
  const [row] = await db().query<{ params: Record<string, unknown> }>("SELECT params FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
  return row.params;
}
async function start(body: Record<string, unknown>): Promise<{ runId: number; params: Record<string, unknown> }> {
  const response = await postRun(post({ panelVersionId: panel.panelVersionId, seed: 2718, permutations: 999, correction: "bonferroni", ...body }), ctx({ slug }));
  expect(response.status).toBe(201);
  return (await response.json()) as { runId: number; params: Record<string, unknown> };
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ analyst: "economist", reader: "subscriber" });
  slug = made.workspace.slug;
  const analyst = made.users.analyst;
  sessionMock.mockResolvedValue({ id: analyst.id, email: analyst.email, name: analyst.name } satisfies SessionUser);
  panel = await loadVeldmarkPanel(made.workspace.id, { indicators: [INDICATOR], periods: PERIODS });
  const sequential = await start({ sequential: true });
  const fixed = await start({});
  sequentialRun = sequential.runId;
  fixedRun = fixed.runId;
  expect(sequential.params.sequentialExtremes).toBe(20);
  expect("sequentialExtremes" in fixed.params).toBe(false);
  expect(await waitForRun(sequentialRun)).toBe("completed");
  expect(await waitForRun(fixedRun)).toBe("completed");
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("sequential p-values as a run option", () => {
  it("stores h = 20 in the run's parameters only when asked, and a rerun keeps it", async () => {
    expect(await paramsOf(sequentialRun)).toMatchObject({ sequentialExtremes: 20, permutations: 999, correction: "bonferroni", local: true });
    expect(Object.keys(await paramsOf(fixedRun))).not.toContain("sequentialExtremes");
    // With local statistics off there is nothing to stop, so nothing is stored.
    const noLocal = await start({ sequential: true, local: false });
    expect("sequentialExtremes" in noLocal.params).toBe(false);
    await waitForRun(noLocal.runId);
    const rerun = await postRerun(post({}), ctx({ slug, runId: String(sequentialRun) }));
    expect(rerun.status).toBe(201);
    const { runId } = (await rerun.json()) as { runId: number };
    expect(await paramsOf(runId)).toMatchObject({ sequentialExtremes: 20 });
    expect(await waitForRun(runId)).toBe("completed");
    expect(await stored(runId)).toEqual(await stored(sequentialRun));
  });

  it("stores local results with the permutations each region used; unstopped regions equal the fixed-count run bit for bit", async () => {
    const sequential = await stored(sequentialRun);
    const fixed = await stored(fixedRun);
    expect(sequential.map((r) => r.period_key)).toEqual(PERIODS);
    let stoppedSomewhere = 0;
    sequential.forEach((row, k) => {
      const local = row.local as LocalFields;
      const reference = fixed[k].local as LocalFields;
      expect(local.sequentialExtremes).toBe(20);
      expect(local.permutationsUsed).toHaveLength(local.ids.length);
      const stopped = (local.permutationsUsed ?? []).filter((u) => u !== null && u < 999).length;
      expect(local.stopped).toBe(stopped);
      stoppedSomewhere += stopped;
      expect(local.ids).toEqual(reference.ids);
      expect(local.Ii).toEqual(reference.Ii);
      (local.permutationsUsed ?? []).forEach((used, i) => {
        if (used === 999) expect(local.pseudoP[i]).toBe(reference.pseudoP[i]);
        else if (used !== null) expect(local.pseudoP[i] ?? 0).toBeGreaterThanOrEqual(40 / 999);
      });
      // The global statistics do not depend on the option.
      expect([row.i, row.perm_p, row.perm_mean, row.geary_pseudo_p, row.general_g_pseudo_p, row.band_low]).toEqual([
        fixed[k].i,
        fixed[k].perm_p,
        fixed[k].perm_mean,
        fixed[k].geary_pseudo_p,
        fixed[k].general_g_pseudo_p,
        fixed[k].band_low,
      ]);
    });
    expect(stoppedSomewhere).toBeGreaterThan(0);
  });

  it("with the option off, the stored numbers are the fixed-count computation's, and carry no sequential fields", async () => {
    const params = (await paramsOf(fixedRun)) as unknown as ResolvedRunParams;
    const geometry = await geometryFor(params);
    const matrix = await loadPanelMatrix(params.panelVersionId, { indicators: [INDICATOR], periods: PERIODS });
    const rows = await stored(fixedRun);
    for (const [k, period] of PERIODS.entries()) {
      const expected = computePeriod(geometry, params, INDICATOR, period, matrix.values.get(INDICATOR)?.get(period) ?? new Map());
      const local = rows[k].local as LocalFields;
      expect(local.pseudoP).toEqual(expected.local?.pseudoP);
      expect(local.cluster).toEqual(expected.local?.cluster);
      expect(local.adjustedP).toEqual(expected.local?.adjustedP);
      expect(Object.keys(local)).not.toContain("permutationsUsed");
      expect(Object.keys(local)).not.toContain("sequentialExtremes");
      expect(rows[k].perm_p).toBe(expected.permutation?.pTwoSided);
    }
  });
});

describe("reachable significance in the answers", () => {
  it("the start form's options give the boundary version's regions", async () => {
    const response = await getOptions(get(""), ctx({ slug }));
    expect(response.status).toBe(200);
    const { options } = (await response.json()) as { options: RunOption[] };
    const option = options.find((o) => o.panelVersionId === panel.panelVersionId);
    expect(option?.regions).toBe(panel.regions.length);
  });

  it("the map answer warns for a run with 999 permutations under Bonferroni over more regions than 0.05/0.002", async () => {
    const response = await getMap(get(`indicator=${INDICATOR}&run=${fixedRun}&period=${PERIODS[1]}`), ctx({ slug }));
    expect(response.status).toBe(200);
    const body = (await response.json()) as { reachability: ReachabilityWarning | null; map: { local: LocalFields } };
    const tests = body.map.local.cluster.filter((c) => c !== "no-neighbours").length;
    expect(tests).toBeGreaterThan(25);
    expect(body.reachability).toMatchObject({ scope: "local", tests, permutations: 999, correction: "bonferroni", loneReachable: false, regionsNeeded: null });
    expect(body.reachability?.note).toContain(`no region can pass Bonferroni over ${tests} regions`);
    expect(body.reachability?.note).toContain("9,999 permutations needed");
    expect(body.reachability?.text).toContain("turn on sequential p-values");
    // Which is true: no region of that run is a significant cluster.
    expect(body.map.local.cluster.every((c) => c === "not-significant" || c === "no-neighbours")).toBe(true);

    const sequential = await getMap(get(`indicator=${INDICATOR}&run=${sequentialRun}&period=${PERIODS[1]}`), ctx({ slug }));
    const sequentialBody = (await sequential.json()) as { reachability: ReachabilityWarning | null };
    expect(sequentialBody.reachability?.text).toContain("Sequential p-values are on");
  });

  it("a run whose lone region can pass carries no warning", async () => {
    const fdr = await start({ permutations: 9999, correction: "fdr" });
    expect(await waitForRun(fdr.runId)).toBe("completed");
    const response = await getMap(get(`indicator=${INDICATOR}&run=${fdr.runId}&period=${PERIODS[0]}`), ctx({ slug }));
    expect(((await response.json()) as { reachability: unknown }).reachability).toBeNull();
  });

  it("the catalogue's rows of that run say so beside the result", async () => {
    const response = await getCatalogue(get(`run=${fixedRun}`), ctx({ slug }));
    expect(response.status).toBe(200);
    const answer = (await response.json()) as CatalogueAnswer;
    expect(answer.runs).toEqual([expect.objectContaining({ id: fixedRun, permutations: 999, correction: "bonferroni", sequentialExtremes: null, globalTests: 2 })]);
    const rows = catalogueRowsOf(answer);
    expect(rows).toHaveLength(PERIODS.length);
    for (const row of rows) {
      expect(row.localTests).toBeGreaterThan(25);
      expect(row.clusterReachability).toContain("9,999 permutations needed");
      expect(row.classReachability).toBeNull(); // 2 indicator-periods: 0.025 is above 0.002
    }
  });
});

import { QueryTypes } from "sequelize";
import { GET as getRates } from "@/app/api/w/[slug]/map/rates/route";
import { GET as getMap } from "@/app/api/w/[slug]/map/route";
import { GET as getRobustness } from "@/app/api/w/[slug]/timeline/robustness/route";
import type { RobustnessEntry } from "@/lib/runs/compare";
import { getSessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import type { MapPeriod, MapRates } from "@/lib/runs/on-demand";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { resolveRunParams } from "@/lib/runs/service";
import { insertRun } from "@/lib/runs/store";
import { globalEmpiricalBayesRates } from "@/lib/spatial";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { completeRunInProcess } from "@/tests/integration/security/fixtures-world";
import { loadVeldmarkPanel, RATE, type LoadedPanel } from "./fixtures";
import { asSession, ctx, getRequest } from "@/tests/integration/intake/fixtures";

// A run with empirical-Bayes standardised rates and the map's rate layers
// (GET /api/w/[slug]/map/rates) against the real services: the Veldmark
// closures rate over two periods, computed in this process.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(240_000);

const PERIODS = ["2014", "2015"];
const OTHER = "unemployment_rate";
// The western isle (three districts linked to one another) and the northern islet without neighbours (seeders/data/veldmark/README.md).
const ISLE = "VM-125";
const ISLET = "VM-027";

type UserRow = { id: number; email: string; name: string };
const signedInAs = (user: UserRow) => sessionMock.mockResolvedValue(asSession(user));

let slug: string;
let workspaceId: number;
let analyst: UserRow;
let reader: UserRow;
let outsider: UserRow;
let otherSlug: string;
let panel: LoadedPanel;
let runId: number;

async function counts(period: string): Promise<Map<string, { events: number | null; population: number | null }>> {
  const rows = await db().query<{ region_code: string; indicator_code: string; value: number | null }>(
    "SELECT region_code, indicator_code, value FROM observations WHERE panel_version_id = $1 AND period_key = $2 AND indicator_code IN ($3, $4)",
    { bind: [panel.panelVersionId, period, RATE.events, RATE.population], type: QueryTypes.SELECT },
  );
  const out = new Map<string, { events: number | null; population: number | null }>();
  for (const r of rows) {
    const entry = out.get(r.region_code) ?? { events: null, population: null };
    if (r.indicator_code === RATE.events) entry.events = r.value;
    else entry.population = r.value;
    out.set(r.region_code, entry);
  }
  return out;
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ analyst: "economist", reader: "subscriber" });
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  analyst = made.users.analyst;
  reader = made.users.reader;
  const other = await makeWorkspace({ outsider: "manager" });
  otherSlug = other.workspace.slug;
  outsider = other.users.outsider;
  panel = await loadVeldmarkPanel(workspaceId, { indicators: [RATE.events, RATE.population, OTHER], periods: PERIODS, withRate: true });
  const choice = runParamsInputSchema.parse({ seed: 7, permutations: 99, indicators: [RATE.indicator, OTHER], periods: PERIODS, rates: "empirical-bayes" });
  const params = await resolveRunParams(workspaceId, panel.panelVersionId, choice);
  runId = await insertRun({ workspaceId, params, createdBy: analyst.id, origin: "user" });
  await completeRunInProcess(runId, params.indicators);
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("a run with empirical-Bayes standardised rates", () => {
  it("records the standardised rate with its events and population, and only that indicator", async () => {
    const [run] = await db().query<{ params: { empiricalBayes?: unknown } }>("SELECT params FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
    expect(run.params.empiricalBayes).toEqual([{ indicator: RATE.indicator, events: RATE.events, population: RATE.population, multiplier: RATE.multiplier }]);
  });

  it("says so beside the rate's results and not beside the other indicator's", async () => {
    signedInAs(reader);
    const rate = (await (await getMap(getRequest(`indicator=${RATE.indicator}&period=2014&run=${runId}`), ctx({ slug }))).json()) as { map: MapPeriod };
    expect(rate.map.status).toBe("computed");
    expect(rate.map.note).toMatch(/^EB-standardised: /);
    const other = (await (await getMap(getRequest(`indicator=${OTHER}&period=2014&run=${runId}`), ctx({ slug }))).json()) as { map: MapPeriod };
    expect(other.map.note ?? "").not.toMatch(/EB-standardised/);
  });

  it("checks the rate's robustness to the weights on the same standardised values: the run's own rule gives the stored I", async () => {
    signedInAs(reader);
    const rate = (await (await getMap(getRequest(`indicator=${RATE.indicator}&period=2014&run=${runId}`), ctx({ slug }))).json()) as { map: MapPeriod };
    const response = await getRobustness(getRequest(`indicator=${RATE.indicator}&period=2014&run=${runId}`), ctx({ slug }));
    expect(response.status).toBe(200);
    const { entries } = (await response.json()) as { entries: RobustnessEntry[] };
    const queen = entries.find((e) => e.rule === "queen");
    expect(queen?.I).toBeCloseTo(rate.map.I ?? Number.NaN, 12);
    expect(queen?.pseudoP).toBe(rate.map.pseudoP);
  });

  it("is refused (422, field rates) when no chosen indicator is a declared rate", async () => {
    const choice = runParamsInputSchema.parse({ indicators: [OTHER], periods: PERIODS, rates: "empirical-bayes" });
    await expect(resolveRunParams(workspaceId, panel.panelVersionId, choice)).rejects.toMatchObject({ status: 422, field: "rates" });
  });
});

describe("GET map/rates", () => {
  it("answers raw, global and local empirical-Bayes rates per region from the panel's counts", async () => {
    signedInAs(reader);
    const response = await getRates(getRequest(`indicator=${RATE.indicator}&period=2014&run=${runId}`), ctx({ slug }));
    expect(response.status).toBe(200);
    const { rates } = (await response.json()) as { rates: MapRates };
    expect(rates.rate).toEqual({ events: RATE.events, population: RATE.population, multiplier: RATE.multiplier });
    const data = await counts("2014");
    const ids = [...data.keys()].filter((id) => {
      const c = data.get(id);
      return c?.events !== null && c?.population !== null && (c?.population ?? 0) > 0;
    });
    // Every region with both counts has all three; the global layer is the engine's on those regions (ids in boundary order).
    const order = panel.regions.filter((id) => ids.includes(id));
    const engine = globalEmpiricalBayesRates(
      order.map((id) => data.get(id)?.events as number),
      order.map((id) => data.get(id)?.population as number),
    );
    order.forEach((id, i) => {
      const r = rates.regions[id];
      expect(r).not.toBeNull();
      expect(r?.raw).toBeCloseTo((1000 * (data.get(id)?.events as number)) / (data.get(id)?.population as number), 10);
      expect(r?.global).toBeCloseTo(1000 * engine.smoothed[i], 10);
    });
    // The small island districts move; the islet has no neighbours, so its local rate is its raw rate.
    expect(Math.abs((rates.regions[ISLE]?.global ?? 0) - (rates.regions[ISLE]?.raw ?? 0))).toBeGreaterThan(1e-6);
    expect(Math.abs((rates.regions[ISLE]?.local ?? 0) - (rates.regions[ISLE]?.raw ?? 0))).toBeGreaterThan(1e-6);
    expect(rates.regions[ISLET]?.neighbourhood).toBe(1);
    expect(rates.regions[ISLET]?.local).toBeCloseTo(rates.regions[ISLET]?.raw ?? Number.NaN, 12);
  });

  it("answers no rate layers for an indicator that is not a rate", async () => {
    signedInAs(reader);
    const response = await getRates(getRequest(`indicator=${OTHER}&period=2014&run=${runId}`), ctx({ slug }));
    expect(response.status).toBe(200);
    const { rates } = (await response.json()) as { rates: MapRates };
    expect(rates.rate).toBeNull();
    expect(rates.regions).toEqual({});
  });

  it("is 404 for a run of another workspace, for a period the run lacks, and 400 without a period", async () => {
    signedInAs(outsider);
    expect((await getRates(getRequest(`indicator=${RATE.indicator}&period=2014&run=${runId}`), ctx({ slug: otherSlug }))).status).toBe(404);
    signedInAs(reader);
    expect((await getRates(getRequest(`indicator=${RATE.indicator}&period=2001&run=${runId}`), ctx({ slug }))).status).toBe(404);
    expect((await getRates(getRequest(`indicator=${RATE.indicator}&run=${runId}`), ctx({ slug }))).status).toBe(400);
  });
});

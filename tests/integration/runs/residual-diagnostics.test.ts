import { readFileSync } from "node:fs";
import path from "node:path";
import { QueryTypes } from "sequelize";
import type { Topology } from "topojson-specification";
import { POST as postRun } from "@/app/api/w/[slug]/runs/route";
import { GET as getCatalogue } from "@/app/api/w/[slug]/catalogue/route";
import { GET as getExport } from "@/app/api/w/[slug]/catalogue/export/route";
import { GET as getTimeline } from "@/app/api/w/[slug]/timeline/route";
import { GET as getMap } from "@/app/api/w/[slug]/map/route";
import { getSessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { loadPanelMatrix } from "@/lib/intake/published-panel";
import { catalogueRowsOf, type CatalogueAnswer } from "@/lib/runs/catalogue-wire";
import type { Timeline } from "@/lib/runs/queries";
import type { MapPeriod } from "@/lib/runs/on-demand";
import type { ResolvedRunParams } from "@/lib/runs/schemas";
import type { RegressionFields } from "@/lib/runs/types";
import { prepareAnalysis, weightsFromTopology } from "@/lib/spatial";
import { regressionDiagnostics } from "@/lib/spatial/regression";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "./fixtures";
import { asSession, ctx, getRequest } from "@/tests/integration/intake/fixtures";

// A run that controls for covariates, through the route handlers, pg-boss and
// the test bring-up's worker: the start form's checks at the edge, the stored
// regression of each indicator-period (equal to the engine's on the same
// inputs, so this test does not depend on the engine's exact numbers), the
// period a singular design leaves unfitted with the covariate named, and the
// catalogue, timeline and period answers, by role and across workspaces.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(240_000);

const PERIODS = ["2012", "2014"];
const INDICATORS = ["unemployment_rate", "heavy_industry_share", "population_change"];
const CONTROL_FOR = ["heavy_industry_share", "population_change"];
const DATA = path.join(process.cwd(), "seeders", "data", "veldmark");

type Users = Awaited<ReturnType<typeof makeWorkspace>>["users"];
let slug: string;
let workspaceId: number;
let users: Users;
let otherSlug: string;
let otherUser: Users[string];
let panel: LoadedPanel;
let runId: number;

const signedInAs = (user: { id: number; email: string; name: string }) => sessionMock.mockResolvedValue(asSession(user));
const post = (body: unknown) => new Request("http://tessera.test/api", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });

async function waitForRun(id: number, timeoutMs = 200_000): Promise<string> {
  const started = Date.now();
  for (;;) {
    const [row] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [id], type: QueryTypes.SELECT });
    if (row && ["completed", "failed", "cancelled"].includes(row.state)) return row.state;
    if (Date.now() - started > timeoutMs) throw new Error(`run ${id} still ${row?.state} after ${timeoutMs} ms: is the test worker running?`);
    await new Promise((r) => setTimeout(r, 500));
  }
}

type StoredRow = { indicator_code: string; period_key: string; regression: RegressionFields | null; residual_i: number | null; residual_p: number | null; model_suggestion: string | null };
async function storedRows(): Promise<StoredRow[]> {
  return db().query<StoredRow>(
    "SELECT indicator_code, period_key, regression, residual_i, residual_p, model_suggestion FROM run_results WHERE run_id = $1 ORDER BY indicator_code, period_index",
    { bind: [runId], type: QueryTypes.SELECT },
  );
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ analyst: "economist", reader: "subscriber" });
  users = made.users;
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  const other = await makeWorkspace({ stranger: "economist" });
  otherSlug = other.workspace.slug;
  otherUser = other.users.stranger;
  // Population change made constant in 2012: with it as a covariate, that period's design is singular (collinear with the intercept).
  panel = await loadVeldmarkPanel(workspaceId, {
    indicators: INDICATORS,
    periods: PERIODS,
    mutate: (indicator, period, _region, value) => (indicator === "population_change" && period === "2012" ? 0.5 : value),
  });
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("a run that controls for covariates", () => {
  it("refuses at the edge what it can: unknown covariates, the run's only indicator, too many, twice the same", async () => {
    signedInAs(users.reader);
    expect((await postRun(post({ panelVersionId: panel.panelVersionId, controlFor: ["heavy_industry_share"] }), ctx({ slug }))).status).toBe(403);
    signedInAs(users.analyst);
    const unknown = await postRun(post({ panelVersionId: panel.panelVersionId, controlFor: ["shipyard_jobs"] }), ctx({ slug }));
    expect(unknown.status).toBe(422);
    const unknownBody = (await unknown.json()) as { field: string; error: string };
    expect(unknownBody.field).toBe("controlFor");
    expect(unknownBody.error).toContain('"shipyard_jobs"');
    const only = await postRun(post({ panelVersionId: panel.panelVersionId, indicators: ["heavy_industry_share"], controlFor: ["heavy_industry_share"] }), ctx({ slug }));
    expect(only.status).toBe(422);
    expect(JSON.stringify(await only.json())).toContain("the run's only indicator");
    const many = await postRun(post({ panelVersionId: panel.panelVersionId, controlFor: Array.from({ length: 11 }, (_, i) => `x${i}`) }), ctx({ slug }));
    expect(many.status).toBe(400);
    expect(JSON.stringify(await many.json())).toContain("at most 10");
    const twice = await postRun(post({ panelVersionId: panel.panelVersionId, controlFor: ["heavy_industry_share", "heavy_industry_share"] }), ctx({ slug }));
    expect(twice.status).toBe(400);
    expect(JSON.stringify(await twice.json())).toContain("twice");
  });

  it("stores each indicator-period's regression as the engine computes it on the same regions and weights", async () => {
    signedInAs(users.analyst);
    const response = await postRun(
      post({ panelVersionId: panel.panelVersionId, seed: 77, permutations: 99, local: false, indicators: INDICATORS, periods: PERIODS, controlFor: CONTROL_FOR }),
      ctx({ slug }),
    );
    expect(response.status).toBe(201);
    const started = (await response.json()) as { runId: number; params: ResolvedRunParams };
    runId = started.runId;
    expect(started.params.controlFor).toEqual(CONTROL_FOR);
    expect(await waitForRun(runId)).toBe("completed");

    const rows = await storedRows();
    // The covariates' own rows carry no regression; a covariate of this run is not explained by the others.
    for (const r of rows.filter((r) => CONTROL_FOR.includes(r.indicator_code))) expect(r).toMatchObject({ regression: null, residual_i: null, model_suggestion: null });

    // 2014: fitted. Recompute independently: queen weights of the boundaries, restricted to regions with every value.
    const fitted = rows.find((r) => r.indicator_code === "unemployment_rate" && r.period_key === "2014");
    expect(fitted?.regression?.message).toBeNull();
    const topology = JSON.parse(readFileSync(path.join(DATA, "veldmark.topojson"), "utf8")) as Topology;
    const base = weightsFromTopology(topology, "queen", { object: "districts", idProperty: "code" });
    const matrix = await loadPanelMatrix(panel.panelVersionId, { indicators: INDICATORS, periods: ["2014"] });
    const column = (code: string) => matrix.values.get(code)?.get("2014") ?? new Map<string, number | null>();
    const y = column("unemployment_rate");
    const all = new Map([...y].map(([id, v]) => [id, CONTROL_FOR.every((c) => column(c).get(id) !== null) ? v : null]));
    const prepared = prepareAnalysis(base, all, { islandPolicy: "exclude", transform: "row-standardised" });
    const expected = regressionDiagnostics(
      prepared.values,
      CONTROL_FOR.map((c) => ({ name: c, values: prepared.ids.map((id) => column(c).get(id) as number) })),
      prepared.weights,
      { alpha: 0.05 },
    );
    const r = fitted?.regression as RegressionFields;
    expect(r.n).toBe(prepared.ids.length);
    expect(r.covariates).toEqual(CONTROL_FOR);
    expect(r.coefficients?.map((c) => c.name)).toEqual(["intercept", ...CONTROL_FOR]);
    expect(r.coefficients?.map((c) => c.estimate)).toEqual(expected.fit.coefficients.map((c) => c.estimate));
    expect(r.rSquared).toBe(expected.fit.rSquared);
    expect(r.moran).toEqual({ ...expected.moran });
    expect(r.lagrange?.error).toEqual(expected.lagrange.error);
    expect(r.lagrange?.combined).toEqual(expected.lagrange.combined);
    expect(r.suggestion).toBe(expected.suggestion);
    expect(fitted).toMatchObject({ residual_i: expected.moran.I, residual_p: expected.moran.pTwoSided, model_suggestion: expected.suggestion });

    // 2012: population change is constant, so the design is singular: the period says so and names it; the run did not fail.
    const singular = rows.find((r) => r.indicator_code === "unemployment_rate" && r.period_key === "2012");
    expect(singular?.regression?.coefficients).toBeNull();
    expect(singular?.regression?.message).toContain('"population_change"');
    expect(singular?.regression?.message).toMatch(/collinear|constant/);
    expect(singular).toMatchObject({ residual_i: null, model_suggestion: null });
  });

  it("answers the catalogue (with the suggestion filter and the CSV), the timeline and the period view", async () => {
    signedInAs(users.reader);
    const catalogue = await getCatalogue(getRequest(`run=${runId}`), ctx({ slug }));
    expect(catalogue.status).toBe(200);
    const rows = catalogueRowsOf((await catalogue.json()) as CatalogueAnswer);
    const stored = await storedRows();
    for (const row of rows) {
      const s = stored.find((x) => x.indicator_code === row.indicator && x.period_key === row.period);
      expect([row.residualI, row.residualP, row.modelSuggestion]).toEqual([s?.residual_i, s?.residual_p, s?.model_suggestion]);
    }
    const suggestion = stored.find((s) => s.model_suggestion !== null)?.model_suggestion as string;
    const filtered = catalogueRowsOf((await (await getCatalogue(getRequest(`run=${runId}&suggestion=${suggestion}`), ctx({ slug }))).json()) as CatalogueAnswer);
    expect(filtered.length).toBe(stored.filter((s) => s.model_suggestion === suggestion).length);
    expect(filtered.every((r) => r.modelSuggestion === suggestion)).toBe(true);
    const bad = await getCatalogue(getRequest(`run=${runId}&suggestion=maybe`), ctx({ slug }));
    expect(bad.status).toBe(400);
    expect(JSON.stringify(await bad.json())).toContain("suggestion must be error, lag, both or neither");
    // Export is an economist's: the subscriber is refused, the economist gets the residual columns.
    expect((await getExport(getRequest(`run=${runId}`), ctx({ slug }))).status).toBe(403);
    signedInAs(users.analyst);
    const csv = await (await getExport(getRequest(`run=${runId}`), ctx({ slug }))).text();
    const [header, ...lines] = csv.trim().split("\r\n");
    const columns = header.split(",");
    expect(columns).toEqual(expect.arrayContaining(["residual_moran_i", "residual_p", "suggested_model"]));
    const fittedLine = lines.map((l) => l.split(",")).find((cells) => cells[columns.indexOf("indicator")] === "unemployment_rate" && cells[columns.indexOf("period")] === "2014");
    const fitted = stored.find((s) => s.indicator_code === "unemployment_rate" && s.period_key === "2014");
    expect(Number(fittedLine?.[columns.indexOf("residual_moran_i")])).toBe(fitted?.residual_i);

    signedInAs(users.reader);
    const timeline = (await (await getTimeline(getRequest(`indicator=unemployment_rate&run=${runId}`), ctx({ slug }))).json()) as Timeline;
    expect(timeline.run.params.controlFor).toEqual(CONTROL_FOR);
    expect(timeline.points.map((p) => [p.period, p.residualI])).toEqual([
      ["2012", null],
      ["2014", fitted?.residual_i],
    ]);
    expect(timeline.points[0].regressionMessage).toContain('"population_change"');
    const map = (await (await getMap(getRequest(`indicator=unemployment_rate&run=${runId}&period=2014`), ctx({ slug }))).json()) as { map: MapPeriod };
    expect(map.map.regression).toEqual(fitted?.regression);
  });

  it("is not found from another workspace", async () => {
    signedInAs(otherUser);
    expect((await getTimeline(getRequest(`indicator=unemployment_rate&run=${runId}`), ctx({ slug: otherSlug }))).status).toBe(404);
    expect((await getMap(getRequest(`indicator=unemployment_rate&run=${runId}&period=2014`), ctx({ slug: otherSlug }))).status).toBe(404);
    expect((await getCatalogue(getRequest(`run=${runId}`), ctx({ slug }))).status).toBe(404);
    const foreign = catalogueRowsOf((await (await getCatalogue(getRequest(`run=${runId}`), ctx({ slug: otherSlug }))).json()) as CatalogueAnswer);
    expect(foreign).toEqual([]);
  });
});

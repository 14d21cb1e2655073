import { QueryTypes } from "sequelize";
import { POST as postRun, GET as getRuns } from "@/app/api/w/[slug]/runs/route";
import { POST as postRerun } from "@/app/api/w/[slug]/runs/[runId]/rerun/route";
import { POST as postCancel } from "@/app/api/w/[slug]/runs/[runId]/cancel/route";
import { GET as getCatalogue } from "@/app/api/w/[slug]/catalogue/route";
import { GET as getExport } from "@/app/api/w/[slug]/catalogue/export/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { insertRun } from "@/lib/runs/store";
import { resolveRunParams } from "@/lib/runs/service";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { runPiece } from "@/lib/runs/worker";
import { CATALOGUE_FIELDS, catalogueRowsOf, type CatalogueAnswer } from "@/lib/runs/catalogue-wire";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "./fixtures";

// Runs against the real services: route handlers with real Requests, pg-boss
// and the test bring-up's worker, PostgreSQL and S3. Only the signed-in user
// (the next-auth cookie) is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(240_000);

const PERIODS = ["2011", "2012", "2013", "2014"];
type Users = Awaited<ReturnType<typeof makeWorkspace>>["users"];
let slug: string;
let workspaceId: number;
let users: Users;
let panel: LoadedPanel;

function signedInAs(user: { id: number; email: string; name: string } | null) {
  sessionMock.mockResolvedValue(user ? ({ id: user.id, email: user.email, name: user.name } satisfies SessionUser) : null);
}
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

async function resultsOf(runId: number) {
  return db().query<Record<string, unknown>>(
    `SELECT indicator_code, period_key, status, note, n, i, expected_i, variance_normality, variance_randomisation, z_randomisation, p_randomisation,
            perm_mean, perm_sd, perm_p, band_low, band_high, geary_c, geary_pseudo_p, general_g, general_g_pseudo_p, delta_i, adjusted_p, significance, local
       FROM run_results WHERE run_id = $1 ORDER BY indicator_code, period_index`,
    { bind: [runId], type: QueryTypes.SELECT },
  );
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ analyst: "economist", reader: "subscriber", steward: "steward" });
  users = made.users;
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  // Veldmark, with the business-births indicator made constant in 2012 (a stored explanation, not a failure).
  panel = await loadVeldmarkPanel(workspaceId, {
    indicators: ["unemployment_rate", "broadband_coverage", "business_births_per_1000"],
    periods: PERIODS,
    mutate: (indicator, period, _region, value) => (indicator === "business_births_per_1000" && period === "2012" ? 5 : value),
  });
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("a run through the job queue", () => {
  let firstRun: number;

  it("refuses a subscriber (403) and a body with a bad field (400 naming it)", async () => {
    signedInAs(users.reader);
    expect((await postRun(post({ panelVersionId: panel.panelVersionId }), ctx({ slug }))).status).toBe(403);
    signedInAs(users.analyst);
    const bad = await postRun(post({ panelVersionId: panel.panelVersionId, permutations: 10 }), ctx({ slug }));
    expect(bad.status).toBe(400);
    expect(await bad.json()).toMatchObject({ field: "permutations" });
  });

  it("completes with exactly one result per indicator-period, and explains the constant period", async () => {
    signedInAs(users.analyst);
    const response = await postRun(post({ panelVersionId: panel.panelVersionId, seed: 4242, permutations: 199 }), ctx({ slug }));
    expect(response.status).toBe(201);
    firstRun = ((await response.json()) as { runId: number }).runId;
    expect(await waitForRun(firstRun)).toBe("completed");
    const [counts] = await db().query<{ total: string; distinct: string }>(
      "SELECT count(*) AS total, count(DISTINCT (indicator_code, period_key)) AS distinct FROM run_results WHERE run_id = $1",
      { bind: [firstRun], type: QueryTypes.SELECT },
    );
    expect(Number(counts.total)).toBe(3 * PERIODS.length);
    expect(Number(counts.distinct)).toBe(3 * PERIODS.length);
    const rows = await resultsOf(firstRun);
    const constant = rows.find((r) => r.indicator_code === "business_births_per_1000" && r.period_key === "2012");
    expect(constant).toMatchObject({ status: "not-computed", i: null, significance: null });
    expect(String(constant?.note)).toContain("The indicator is constant in 2012");
    const computed = rows.filter((r) => r.status === "computed");
    expect(computed.every((r) => r.significance !== null && r.adjusted_p !== null)).toBe(true);
    const [run] = await db().query<{ significance_basis: string; progress: number; pieces_done: number }>(
      "SELECT significance_basis, progress, pieces_done FROM runs WHERE id = $1",
      { bind: [firstRun], type: QueryTypes.SELECT },
    );
    expect(run).toMatchObject({ progress: 1, pieces_done: 3 });
    expect(run.significance_basis).toContain(`across the ${computed.length} computed indicator-periods`);
  });

  it("a rerun reproduces every stored number exactly", async () => {
    signedInAs(users.analyst);
    const response = await postRerun(post({}), ctx({ slug, runId: String(firstRun) }));
    expect(response.status).toBe(201);
    const rerunId = ((await response.json()) as { runId: number }).runId;
    expect(await waitForRun(rerunId)).toBe("completed");
    expect(await resultsOf(rerunId)).toEqual(await resultsOf(firstRun));
  });

  it("a piece executed twice at once (a re-delivered job) never duplicates rows or counts", async () => {
    const params = await resolveRunParams(workspaceId, panel.panelVersionId, runParamsInputSchema.parse({ seed: 9, permutations: 99, indicators: ["unemployment_rate", "broadband_coverage"], local: false }));
    const runId = await insertRun({ workspaceId, params, createdBy: users.analyst.id, origin: "user" });
    await Promise.all([runPiece(runId, "unemployment_rate"), runPiece(runId, "unemployment_rate")]);
    await runPiece(runId, "unemployment_rate"); // a late third delivery is skipped
    await runPiece(runId, "broadband_coverage");
    const [row] = await db().query<{ state: string; pieces_done: number; results: string }>(
      "SELECT state, pieces_done, (SELECT count(*) FROM run_results WHERE run_id = $1) AS results FROM runs WHERE id = $1",
      { bind: [runId], type: QueryTypes.SELECT },
    );
    expect(row).toMatchObject({ state: "completed", pieces_done: 2 });
    expect(Number(row.results)).toBe(2 * PERIODS.length);
  });

  it("cancels a queued run, and a cancelled run's late pieces store nothing", async () => {
    const params = await resolveRunParams(workspaceId, panel.panelVersionId, runParamsInputSchema.parse({ seed: 1, permutations: 99 }));
    const runId = await insertRun({ workspaceId, params, createdBy: users.analyst.id, origin: "user" });
    signedInAs(users.reader);
    expect((await postCancel(post({}), ctx({ slug, runId: String(runId) }))).status).toBe(403);
    signedInAs(users.analyst);
    expect((await postCancel(post({}), ctx({ slug, runId: String(runId) }))).status).toBe(200);
    expect(await runPiece(runId, "unemployment_rate")).toBe("skipped");
    const again = await postCancel(post({}), ctx({ slug, runId: String(runId) }));
    expect(again.status).toBe(409);
    const [count] = await db().query<{ n: string }>("SELECT count(*) AS n FROM run_results WHERE run_id = $1", { bind: [runId], type: QueryTypes.SELECT });
    expect(Number(count.n)).toBe(0);
  });

  it("lists runs for a subscriber (view only)", async () => {
    signedInAs(users.reader);
    const response = await getRuns(new Request("http://tessera.test"), ctx({ slug }));
    expect(response.status).toBe(200);
    const body = (await response.json()) as { runs: { id: number }[] };
    expect(body.runs.map((r) => r.id)).toContain(firstRun);
  });

  it("filters the catalogue by class, period range and indicator text", async () => {
    signedInAs(users.reader);
    const catalogueOf = async (search: string) => {
      const response = await getCatalogue(get(search), ctx({ slug }));
      expect(response.status).toBe(200);
      const answer = (await response.json()) as CatalogueAnswer;
      expect(answer.fields).toEqual(CATALOGUE_FIELDS);
      return catalogueRowsOf(answer);
    };
    const all = await catalogueOf(`run=${firstRun}`);
    expect(all).toHaveLength(3 * PERIODS.length);
    // The tuples carry the stored numbers unchanged, in the stored order.
    const stored = await resultsOf(firstRun);
    expect(all.map((r) => [r.indicator, r.period, r.status, r.n, r.I, r.z, r.pseudoP, r.adjustedP, r.significance, r.gearyC, r.generalG])).toEqual(
      stored.map((s) => [s.indicator_code, s.period_key, s.status, s.n, s.i, s.z_randomisation, s.perm_p, s.adjusted_p, s.significance, s.geary_c, s.general_g]),
    );
    const clustering = await catalogueOf(`run=${firstRun}&class=clustering`);
    expect(clustering.length).toBeGreaterThan(0);
    expect(clustering.every((r) => r.significance === "clustering")).toBe(true);
    const range = await catalogueOf(`run=${firstRun}&from=2012&to=2013`);
    expect(new Set(range.map((r) => r.period))).toEqual(new Set(["2012", "2013"]));
    const text = await catalogueOf(`run=${firstRun}&q=UNEMPLOY`);
    expect(new Set(text.map((r) => r.indicator))).toEqual(new Set(["unemployment_rate"]));
    const latest = await catalogueOf("");
    expect(latest).toHaveLength(3 * PERIODS.length);
    expect(new Set(latest.map((r) => r.runId)).size).toBeGreaterThanOrEqual(1);
    const badClass = await getCatalogue(get("class=sometimes"), ctx({ slug }));
    expect(badClass.status).toBe(400);
  });

  it("exports CSV for economists only", async () => {
    signedInAs(users.reader);
    expect((await getExport(get(`run=${firstRun}`), ctx({ slug }))).status).toBe(403);
    signedInAs(users.analyst);
    const response = await getExport(get(`run=${firstRun}&q=unemployment`), ctx({ slug }));
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toContain("text/csv");
    const lines = (await response.text()).trim().split("\r\n");
    expect(lines[0]).toContain("indicator,indicator_label,period");
    expect(lines).toHaveLength(1 + PERIODS.length);
  });
});

describe("only published panel versions run", () => {
  it.each(["validated", "archived"] as const)("refuses a %s version with 409 and a plain sentence", async (state) => {
    const other = await loadVeldmarkPanel(workspaceId, { state, indicators: ["unemployment_rate"], periods: ["2011", "2012"] });
    signedInAs(users.analyst);
    const response = await postRun(post({ panelVersionId: other.panelVersionId }), ctx({ slug }));
    expect(response.status).toBe(409);
    expect(((await response.json()) as { error: string }).error).toMatch(new RegExp(`is ${state}; only published panel versions can be analysed`));
  });

  it("answers 404 for another workspace's panel version", async () => {
    const elsewhere = await makeWorkspace({ owner: "manager" });
    const foreign = await loadVeldmarkPanel(elsewhere.workspace.id, { indicators: ["unemployment_rate"], periods: ["2011", "2012"] });
    signedInAs(users.analyst);
    expect((await postRun(post({ panelVersionId: foreign.panelVersionId }), ctx({ slug }))).status).toBe(404);
  });

  it("answers 422 naming an indicator the version lacks", async () => {
    signedInAs(users.analyst);
    const response = await postRun(post({ panelVersionId: panel.panelVersionId, indicators: ["gdp_growth"] }), ctx({ slug }));
    expect(response.status).toBe(422);
    expect(await response.json()).toMatchObject({ field: "indicators", error: expect.stringContaining('has no indicator "gdp_growth"') });
  });
});

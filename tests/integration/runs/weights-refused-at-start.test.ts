import { QueryTypes } from "sequelize";
import { POST as postRun } from "@/app/api/w/[slug]/runs/route";
import { POST as postRerun } from "@/app/api/w/[slug]/runs/[runId]/rerun/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { resolveRunParams } from "@/lib/runs/service";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { insertRun } from "@/lib/runs/store";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "./fixtures";

// A run whose weights cannot be built for its panel's boundaries is refused by
// the start route with 422 naming the rule and the number of regions, and
// nothing is stored or queued: no run row, no piece, no pg-boss job.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(120_000);

let slug: string;
let workspaceId: number;
let analyst: { id: number; email: string; name: string };
let panel: LoadedPanel;

const ctx = (params: Record<string, string>) => ({ params: Promise.resolve(params) });
const post = (body: unknown) => new Request("http://tessera.test/api", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });

async function counts() {
  const [row] = await db().query<{ runs: string; pieces: string; jobs: string }>(
    `SELECT (SELECT count(*) FROM runs WHERE workspace_id = $1) AS runs,
            (SELECT count(*) FROM run_pieces rp JOIN runs r ON r.id = rp.run_id WHERE r.workspace_id = $1) AS pieces,
            (SELECT count(*) FROM pgboss.job WHERE name = 'run-piece') AS jobs`,
    { bind: [workspaceId], type: QueryTypes.SELECT },
  );
  return { runs: Number(row.runs), pieces: Number(row.pieces), jobs: Number(row.jobs) };
}

async function expectRefused(body: Record<string, unknown>, ...fragments: string[]) {
  const before = await counts();
  const response = await postRun(post({ panelVersionId: panel.panelVersionId, permutations: 99, ...body }), ctx({ slug }));
  expect(response.status).toBe(422);
  const answer = (await response.json()) as { error: string; field: string };
  expect(answer.field).toBe("weights");
  for (const fragment of fragments) expect(answer.error).toContain(fragment);
  expect(await counts()).toEqual(before);
  return answer.error;
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ analyst: "economist" });
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  analyst = made.users.analyst;
  sessionMock.mockResolvedValue({ id: analyst.id, email: analyst.email, name: analyst.name } satisfies SessionUser);
  panel = await loadVeldmarkPanel(workspaceId, { indicators: ["unemployment_rate"], periods: ["2011", "2012"] });
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("weights that cannot be built are refused at start", () => {
  it("k nearest neighbours with k ≥ n: 422 naming the rule, the region count and the largest k", async () => {
    const n = panel.regions.length;
    await expectRefused({ weights: `knn:${n}` }, `"knn:${n}"`, `${n} regions`, `k from 1 to ${n - 1}`);
    await expectRefused({ weights: `knn:${n + 50}` }, `"knn:${n + 50}"`, `${n} regions`);
  });

  it("a distance band that links nothing: 422 naming the band and the region count", async () => {
    const message = await expectRefused({ weights: "band:0.001" }, `"band:0.001"`, `links none of the ${panel.regions.length} regions`, "band:auto");
    expect(message).toContain("boundaries");
  });

  it("the same band is refused under every island policy (attaching islands would invent the neighbours the rule left out)", async () => {
    for (const islandPolicy of ["exclude", "keep", "attach"]) {
      await expectRefused({ weights: "band:0.001", islandPolicy }, "links none of");
    }
  });

  it("a rule that can be built for these boundaries still starts (201)", async () => {
    const n = panel.regions.length;
    const before = await counts();
    const response = await postRun(post({ panelVersionId: panel.panelVersionId, permutations: 99, weights: `knn:${n - 1}`, local: false }), ctx({ slug }));
    expect(response.status).toBe(201);
    const after = await counts();
    expect(after.runs).toBe(before.runs + 1);
    expect(after.jobs).toBeGreaterThan(before.jobs);
  });

  it("a rerun of stored parameters that cannot be built is refused the same way", async () => {
    // Stored directly: the start route would refuse these parameters.
    const params = await resolveRunParams(workspaceId, panel.panelVersionId, runParamsInputSchema.parse({ weights: "band:0.001", permutations: 99 }));
    const runId = await insertRun({ workspaceId, params, createdBy: analyst.id, origin: "user" });
    const before = await counts();
    const response = await postRerun(post({}), ctx({ slug, runId: String(runId) }));
    expect(response.status).toBe(422);
    expect(((await response.json()) as { error: string }).error).toContain(`links none of the ${panel.regions.length} regions`);
    expect(await counts()).toEqual(before);
  });
});

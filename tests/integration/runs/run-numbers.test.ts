import { Client } from "pg";
import { QueryTypes } from "sequelize";
import { POST as postRun, GET as getRuns } from "@/app/api/w/[slug]/runs/route";
import { POST as postRerun } from "@/app/api/w/[slug]/runs/[runId]/rerun/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { runLabel } from "@/lib/runs/label";
import type { RunSummary } from "@/lib/runs/queries";
import { resolveRunParams } from "@/lib/runs/service";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { insertRun } from "@/lib/runs/store";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "./fixtures";

// Runs are numbered per workspace (issue 13, item 7; migration
// 20261211000400): the first run of every workspace is Run 1, concurrent
// starts in one workspace never share a number, and labels show the number,
// never the global id. Real PostgreSQL; only the signed-in user is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(120_000);

interface Side {
  slug: string;
  workspaceId: number;
  analyst: { id: number; email: string; name: string };
  panel: LoadedPanel;
}
let a: Side;
let b: Side;

function signedInAs(user: { id: number; email: string; name: string }) {
  sessionMock.mockResolvedValue({ id: user.id, email: user.email, name: user.name } satisfies SessionUser);
}
const ctx = (params: Record<string, string>) => ({ params: Promise.resolve(params) });
const post = (body: unknown) => new Request("http://tessera.test/api", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
// Small and quick: the worker computes these while the test goes on.
const CHEAP = { permutations: 99, local: false, indicators: ["unemployment_rate"], periods: ["2011", "2012"] };

async function side(): Promise<Side> {
  const made = await makeWorkspace({ analyst: "economist" });
  const panel = await loadVeldmarkPanel(made.workspace.id, { indicators: ["unemployment_rate"], periods: ["2011", "2012"] });
  return { slug: made.workspace.slug, workspaceId: made.workspace.id, analyst: made.users.analyst, panel };
}

async function start(s: Side): Promise<{ runId: number; number: number }> {
  signedInAs(s.analyst);
  const response = await postRun(post({ panelVersionId: s.panel.panelVersionId, ...CHEAP }), ctx({ slug: s.slug }));
  expect(response.status).toBe(201);
  return (await response.json()) as { runId: number; number: number };
}

async function numbersOf(workspaceId: number): Promise<number[]> {
  const rows = await db().query<{ number: number }>("SELECT number FROM runs WHERE workspace_id = $1 ORDER BY number", { bind: [workspaceId], type: QueryTypes.SELECT });
  return rows.map((r) => r.number);
}

async function listed(s: Side): Promise<RunSummary[]> {
  signedInAs(s.analyst);
  const response = await getRuns(new Request("http://tessera.test/api"), ctx({ slug: s.slug }));
  expect(response.status).toBe(200);
  return ((await response.json()) as { runs: RunSummary[] }).runs;
}

beforeAll(async () => {
  await requireTestServices();
  a = await side();
  b = await side();
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("run numbers per workspace", () => {
  it("gives the first run of each of two workspaces the number 1, and the runs list labels it by that number", async () => {
    const first = await start(a);
    const other = await start(b);
    expect(first.number).toBe(1);
    expect(other.number).toBe(1);
    expect(first.runId).not.toBe(other.runId);
    for (const [s, started] of [
      [a, first],
      [b, other],
    ] as const) {
      const run = (await listed(s)).find((r) => r.id === started.runId);
      expect(run?.number).toBe(1);
      expect(runLabel(run as RunSummary)).toMatch(/^Run 1 · .+ v1 · queen, row-standardised · 99 perm\.$/);
    }
  });

  it("numbers a rerun as the workspace's next run and keeps the number of the run it repeats", async () => {
    const [first] = (await listed(a)).filter((r) => r.number === 1);
    signedInAs(a.analyst);
    const response = await postRerun(post({}), ctx({ slug: a.slug, runId: String(first.id) }));
    expect(response.status).toBe(201);
    const rerun = (await response.json()) as { runId: number; number: number };
    expect(rerun.number).toBe(2);
    const summary = (await listed(a)).find((r) => r.id === rerun.runId);
    expect(summary).toMatchObject({ number: 2, rerunOf: first.id, rerunOfNumber: 1 });
    // The other workspace's count is its own.
    expect(await numbersOf(b.workspaceId)).toEqual([1]);
  });

  it("gives concurrent starts in one workspace distinct numbers, with no gap, and leaves the other workspace alone", async () => {
    const params = await resolveRunParams(a.workspaceId, a.panel.panelVersionId, runParamsInputSchema.parse(CHEAP));
    const before = await numbersOf(a.workspaceId);
    const starts = await Promise.all([
      ...Array.from({ length: 8 }, () => insertRun({ workspaceId: a.workspaceId, params, createdBy: a.analyst.id, origin: "user" })),
      start(a).then((r) => r.runId),
      start(a).then((r) => r.runId),
    ]);
    expect(new Set(starts).size).toBe(10);
    const after = await numbersOf(a.workspaceId);
    const added = after.filter((n) => !before.includes(n));
    expect(added).toHaveLength(10);
    expect(new Set(after).size).toBe(after.length);
    expect(after).toEqual(Array.from({ length: after.length }, (_, i) => i + 1));
    expect(await numbersOf(b.workspaceId)).toEqual([1]);
  });

  it("holds the next number for a start whose transaction is still open, so a second start waits and takes the one after", async () => {
    const params = await resolveRunParams(b.workspaceId, b.panel.panelVersionId, runParamsInputSchema.parse(CHEAP));
    const insert = (client: Client) =>
      client.query<{ number: number }>(
        `INSERT INTO runs (workspace_id, panel_version_id, boundary_version_id, origin, params, seed, state, progress, pieces_total, pieces_done, results_total)
         VALUES ($1, $2, $3, 'user', $4::jsonb, 1, 'queued', 0, 1, 0, 2) RETURNING number`,
        [b.workspaceId, params.panelVersionId, params.boundaryVersionId, JSON.stringify(params)],
      );
    const first = new Client({ connectionString: process.env.DATABASE_URL });
    const second = new Client({ connectionString: process.env.DATABASE_URL });
    await first.connect();
    await second.connect();
    try {
      await first.query("BEGIN");
      await second.query("BEGIN");
      const firstNumber = (await insert(first)).rows[0].number;
      let secondDone = false;
      const secondInsert = insert(second).then((r) => {
        secondDone = true;
        return r.rows[0].number;
      });
      await new Promise((r) => setTimeout(r, 500));
      // Still waiting for the first transaction's hold on the workspace's counter.
      expect(secondDone).toBe(false);
      await first.query("COMMIT");
      const secondNumber = await secondInsert;
      await second.query("COMMIT");
      expect([firstNumber, secondNumber]).toEqual([2, 3]);
    } finally {
      await first.end();
      await second.end();
    }
  });

  it("ignores a number the caller writes: the database assigns it", async () => {
    const params = await resolveRunParams(b.workspaceId, b.panel.panelVersionId, runParamsInputSchema.parse(CHEAP));
    const [row] = await db().query<{ number: number }>(
      `INSERT INTO runs (workspace_id, panel_version_id, boundary_version_id, origin, params, seed, state, progress, pieces_total, pieces_done, results_total, number)
       VALUES ($1, $2, $3, 'user', $4::jsonb, 1, 'queued', 0, 1, 0, 2, 1) RETURNING number`,
      { bind: [b.workspaceId, params.panelVersionId, params.boundaryVersionId, JSON.stringify(params)], type: QueryTypes.SELECT },
    );
    expect(row.number).toBe(4);
    expect(await numbersOf(b.workspaceId)).toEqual([1, 2, 3, 4]);
  });
});

import { QueryTypes } from "sequelize";
import { POST as postCancel } from "@/app/api/w/[slug]/runs/[runId]/cancel/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { resolveRunParams } from "@/lib/runs/service";
import { runParamsInputSchema, type ResolvedRunParams } from "@/lib/runs/schemas";
import { completePiece, insertRun, startPiece } from "@/lib/runs/store";
import { PIECE_ATTEMPTS, abandonPiece, runPiece } from "@/lib/runs/worker";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "./fixtures";

// No run piece is left "queued" (or "running") under a run that failed or was
// cancelled: the pieces follow the run in the same transaction, and a worker
// that was still computing one when the run ended stores nothing.
// Runs are stored with insertRun (no pg-boss job), and pieces are run in this
// process, so the test worker of the bring-up does not take part.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(120_000);

const INDICATORS = ["broadband_coverage", "business_births_per_1000", "unemployment_rate"];
let slug: string;
let workspaceId: number;
let analyst: { id: number; email: string; name: string };
let panel: LoadedPanel;
let params: ResolvedRunParams;

const ctx = (p: Record<string, string>) => ({ params: Promise.resolve(p) });
const post = () => new Request("http://tessera.test/api", { method: "POST", headers: { "content-type": "application/json" }, body: "{}" });

async function runState(runId: number) {
  const [run] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
  const pieces = await db().query<{ indicator_code: string; state: string; error: string | null }>(
    "SELECT indicator_code, state, error FROM run_pieces WHERE run_id = $1 ORDER BY indicator_code",
    { bind: [runId], type: QueryTypes.SELECT },
  );
  const [results] = await db().query<{ n: string }>("SELECT count(*) AS n FROM run_results WHERE run_id = $1", { bind: [runId], type: QueryTypes.SELECT });
  return { run: run.state, pieces: Object.fromEntries(pieces.map((p) => [p.indicator_code, p.state])), errors: pieces, results: Number(results.n) };
}

/** Stores a run over the panel plus a piece for `extra`, an indicator the panel does not have, so that piece fails on every attempt. */
async function runWithFailingPiece(extra: string): Promise<number> {
  const withExtra: ResolvedRunParams = { ...params, indicators: [...params.indicators, extra].sort() };
  return insertRun({ workspaceId, params: withExtra, createdBy: analyst.id, origin: "user" });
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ analyst: "economist" });
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  analyst = made.users.analyst;
  sessionMock.mockResolvedValue({ id: analyst.id, email: analyst.email, name: analyst.name } satisfies SessionUser);
  panel = await loadVeldmarkPanel(workspaceId, { indicators: INDICATORS, periods: ["2011", "2012"] });
  params = await resolveRunParams(workspaceId, panel.panelVersionId, runParamsInputSchema.parse({ seed: 5, permutations: 99, local: false }));
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("a failed run leaves no piece queued", () => {
  it("the last failed attempt of one piece fails the run and cancels its queued and running pieces; the late worker stores nothing", async () => {
    const runId = await runWithFailingPiece("aa_missing_indicator");
    // One piece completes, one is taken by a worker that will finish late, one stays queued.
    expect(await runPiece(runId, "unemployment_rate")).toBe("completed-piece");
    const late = await startPiece(runId, "broadband_coverage", "late-worker");
    expect(late?.pieceState).toBe("running");
    for (let attempt = 1; attempt <= PIECE_ATTEMPTS; attempt++) {
      await expect(runPiece(runId, "aa_missing_indicator")).rejects.toThrow(`attempt ${attempt} of ${PIECE_ATTEMPTS} failed`);
      const state = await runState(runId);
      if (attempt < PIECE_ATTEMPTS) expect(state).toMatchObject({ run: "running", pieces: { aa_missing_indicator: "queued", business_births_per_1000: "queued" } });
    }
    const failed = await runState(runId);
    expect(failed.run).toBe("failed");
    expect(failed.pieces).toEqual({
      aa_missing_indicator: "failed",
      broadband_coverage: "cancelled",
      business_births_per_1000: "cancelled",
      unemployment_rate: "completed",
    });
    expect(failed.errors.find((p) => p.indicator_code === "business_births_per_1000")?.error).toContain('the run failed on indicator "aa_missing_indicator"');
    const stored = failed.results;

    // The late worker ends its piece: nothing is written, the piece stays cancelled.
    const outcome = await completePiece(runId, "broadband_coverage", "late-worker", new Map(params.periods.map((p, i) => [p, i])), []);
    expect(outcome).toBe("run-closed");
    // A redelivered job for the cancelled piece is skipped.
    expect(await runPiece(runId, "business_births_per_1000")).toBe("skipped");
    const after = await runState(runId);
    expect(after.pieces).toEqual(failed.pieces);
    expect(after.results).toBe(stored);
  });

  it("a piece abandoned by dead workers fails the run the same way", async () => {
    const runId = await insertRun({ workspaceId, params, createdBy: analyst.id, origin: "user" });
    await abandonPiece(runId, "unemployment_rate", "the worker died on every attempt");
    const state = await runState(runId);
    expect(state.run).toBe("failed");
    expect(Object.values(state.pieces).filter((s) => s === "queued" || s === "running")).toEqual([]);
    expect(state.pieces.unemployment_rate).toBe("failed");
  });
});

describe("a cancelled run leaves no piece queued", () => {
  it("cancelling a running run cancels its queued and running pieces; the running one stores nothing when it ends", async () => {
    const runId = await insertRun({ workspaceId, params, createdBy: analyst.id, origin: "user" });
    expect(await runPiece(runId, "unemployment_rate")).toBe("completed-piece");
    await startPiece(runId, "broadband_coverage", "late-worker");
    expect((await postCancel(post(), ctx({ slug, runId: String(runId) }))).status).toBe(200);
    const cancelled = await runState(runId);
    expect(cancelled.run).toBe("cancelled");
    expect(cancelled.pieces).toEqual({ broadband_coverage: "cancelled", business_births_per_1000: "cancelled", unemployment_rate: "completed" });
    expect(await completePiece(runId, "broadband_coverage", "late-worker", new Map(params.periods.map((p, i) => [p, i])), [])).toBe("run-closed");
    expect(await runPiece(runId, "business_births_per_1000")).toBe("skipped");
    expect((await runState(runId)).results).toBe(cancelled.results);
  });

  it("no run of this file is over with a piece still queued or running", async () => {
    const [row] = await db().query<{ n: string }>(
      `SELECT count(*) AS n FROM run_pieces rp JOIN runs r ON r.id = rp.run_id
        WHERE r.workspace_id = $1 AND r.state IN ('failed','cancelled') AND rp.state IN ('queued','running')`,
      { bind: [workspaceId], type: QueryTypes.SELECT },
    );
    expect(Number(row.n)).toBe(0);
  });
});

import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import { getBoss } from "@/lib/jobs/boss";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { resolveRunParams, startRun } from "@/lib/runs/service";
import { completePiece, failPiece, insertRun, recordPieceProgress, startPiece } from "@/lib/runs/store";
import { abandonPiece, runPiece } from "@/lib/runs/worker";
import type { PublishedLattice } from "@/scripts/bench/lattice-panel";
import { startWorkerProcess, type WorkerProcess } from "@/scripts/bench/worker-processes";
import { waitFor } from "@/tests/helpers/wait";
import { multiplicity, piecesOf, runState, stageLatticeRun, storedOnce, storedResults, waitForRunEnd, type LatticeStage, type PieceRow } from "./worker-run-checks";

// Issue 7, faults: a worker SIGKILLed in the middle of a run. Real worker
// processes (worker/main.ts) on the test PostgreSQL and S3, serving a jobs
// schema only this file's workers use, so the test bring-up's worker cannot
// take a piece and every kill lands on a piece this file chose.

jest.setTimeout(900_000);

const SCHEMA = "pgboss_worker_kill";
// A short heartbeat so the test sees a dead worker's job handed back within seconds (default 2 s).
const WORKER_ENV = { JOBS_SCHEMA: SCHEMA, WORKER_CONCURRENCY: "1", WORKER_POLL_SECONDS: "0.5", WORKER_HEARTBEAT_SECONDS: "0.5", WORKER_LEASE_SECONDS: "60" };
// 3,600 squares × 12 periods, global + local with 999 permutations: a piece takes seconds, so a kill lands mid-piece.
const LATTICE = { columns: 60, rows: 60, indicators: 3, periods: 12, seed: 77 };
const CHOICE = runParamsInputSchema.parse({ seed: 424_242, permutations: 999, weights: "queen", local: true });

let workspaceId: number;
let analystId: number;
let lattice: PublishedLattice;
let teardown: LatticeStage["teardown"] | undefined;
const workers: WorkerProcess[] = [];

async function worker(label: string): Promise<WorkerProcess> {
  const started = await startWorkerProcess(label, WORKER_ENV);
  workers.push(started);
  return started;
}

async function run(): Promise<number> {
  const { runId } = await startRun({ workspaceId, userId: analystId, panelVersionId: lattice.panelVersionId, choice: CHOICE });
  return runId;
}

/** Waits until a piece of the run (one that `also` accepts) is part-way — some periods done, not all — and returns it. */
async function pieceMidway(runId: number, also: (piece: PieceRow) => boolean = () => true, timeoutMs = 240_000): Promise<PieceRow> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const midway = (await piecesOf(runId)).find((p) => p.state === "running" && p.periods_done > 0 && p.periods_done < p.periods_total && also(p));
    if (midway) return midway;
    if (Date.now() > deadline) throw new Error(`no piece of run ${runId} was part-way within ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 40));
  }
}

async function jobState(jobId: string): Promise<string | undefined> {
  return (await (await getBoss()).getJobById("run-piece", jobId, { includeArchive: true }))?.state;
}

async function waitForAttempt(runId: number, indicator: string, attempt: number, timeoutMs = 120_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while ((await piecesOf(runId)).find((p) => p.indicator_code === indicator)!.attempts < attempt) {
    if (Date.now() > deadline) throw new Error(`piece "${indicator}" of run ${runId} did not start attempt ${attempt} within ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
}

/** The database's clock (the lease timestamps are the database's). */
async function databaseNow(): Promise<string> {
  const [row] = await db().query<{ now: string }>("SELECT clock_timestamp()::text AS now", { type: QueryTypes.SELECT });
  return row.now;
}

/** How a worker's lease ended: the reason recorded, and seconds from `since` until another worker presumed it dead and handed its jobs back. */
async function leaseEnd(label: string, since: string): Promise<{ reason: string | null; seconds: number | null }> {
  const [row] = await db().query<{ stop_reason: string | null; seconds: number | null }>(
    "SELECT stop_reason, EXTRACT(EPOCH FROM stopped_at - $3::timestamptz)::float8 AS seconds FROM job_workers WHERE jobs_schema = $1 AND label = $2 ORDER BY id DESC LIMIT 1",
    { bind: [SCHEMA, label, since], type: QueryTypes.SELECT },
  );
  return { reason: row?.stop_reason ?? null, seconds: row?.seconds ?? null };
}

async function expectStoredOnceAndEqual(runId: number, referenceId: number): Promise<void> {
  expect(await multiplicity(runId)).toEqual(storedOnce(LATTICE));
  const [ours, reference] = [await storedResults(runId), await storedResults(referenceId)];
  expect(ours).toHaveLength(LATTICE.indicators * LATTICE.periods);
  // Every stored statistic, global and local, to the last bit.
  expect(ours).toEqual(reference);
}

let referenceRun: number;

beforeAll(async () => {
  ({ workspaceId, analystId, lattice, teardown } = await stageLatticeRun(SCHEMA, LATTICE, "Kill test lattice"));
});

afterAll(async () => {
  await teardown?.(workers);
});

describe("a worker killed (SIGKILL) in the middle of a run", () => {
  it("an uninterrupted run on one worker completes (the reference)", async () => {
    const w1 = await worker("kill-w1");
    referenceRun = await run();
    expect(await waitForRunEnd(referenceRun, [w1])).toBe("completed");
    expect((await piecesOf(referenceRun)).map((p) => [p.state, p.attempts, p.worker_label])).toEqual(Array(LATTICE.indicators).fill(["completed", 1, "kill-w1"]));
  });

  it("on restart the run completes, the killed piece is run again by the new worker, and every result is stored once and equals the uninterrupted run", async () => {
    const w1 = workers.find((w) => w.label === "kill-w1")!;
    const runId = await run();
    const victim = await pieceMidway(runId);
    expect(await jobState(victim.job_id!)).toBe("active");
    w1.child.kill("SIGKILL");
    const killedAt = Date.now();
    const killedAtDb = await databaseNow();
    expect(await w1.exited).toBe("SIGKILL");

    // Nothing of the killed attempt is stored: rows are written only when a piece ends.
    const [{ n: rowsOfVictim }] = await db().query<{ n: string }>("SELECT count(*)::text AS n FROM run_results WHERE run_id = $1 AND indicator_code = $2", {
      bind: [runId, victim.indicator_code],
      type: QueryTypes.SELECT,
    });
    expect(rowsOfVictim).toBe("0");
    expect(await jobState(victim.job_id!)).toBe("active");

    const w2 = await worker("kill-w2");
    const readyAt = Date.now();
    await waitForAttempt(runId, victim.indicator_code, 2);
    const restartedAt = Date.now();
    expect(await waitForRunEnd(runId, [w2])).toBe("completed");
    const completedAt = Date.now();
    const end = await leaseEnd("kill-w1", killedAtDb);
    console.log(
      `worker-kill recovery: killed at "${victim.indicator_code}" period ${victim.periods_done}/${victim.periods_total}; ` +
        `new worker ready ${((readyAt - killedAt) / 1000).toFixed(1)} s after the kill, the dead worker's job handed back ${end.seconds?.toFixed(1)} s after it (on the new worker's start), ` +
        `the piece restarted ${((restartedAt - killedAt) / 1000).toFixed(1)} s after it (once the new worker, one piece at a time, had a free slot), run completed ${((completedAt - killedAt) / 1000).toFixed(1)} s after it`,
    );

    const pieces = await piecesOf(runId);
    const killed = pieces.find((p) => p.indicator_code === victim.indicator_code)!;
    expect(killed).toMatchObject({ state: "completed", attempts: 2, worker_label: "kill-w2" });
    expect(pieces.every((p) => p.state === "completed")).toBe(true);
    // The killed job was handed back by the new worker and then completed, not left to pg-boss's expiry.
    await waitFor(`job ${victim.job_id} completed`, async () => (await jobState(victim.job_id!)) === "completed", { timeoutMs: 30_000 });
    expect(end.reason).toMatch(/^presumed dead by worker kill-w2: its database session is gone/);

    await expectStoredOnceAndEqual(runId, referenceRun);
  });

  it("with a second worker still running, the survivor takes the killed worker's piece over without any restart", async () => {
    const survivor = workers.find((w) => w.label === "kill-w2")!;
    const doomed = await worker("kill-w3");
    const runId = await run();
    // A piece part-way on the worker about to be killed (the survivor is busy with another one).
    const victim = await pieceMidway(runId, (p) => p.worker_label === doomed.label);
    doomed.child.kill("SIGKILL");
    const killedAt = Date.now();
    const killedAtDb = await databaseNow();
    expect(await doomed.exited).toBe("SIGKILL");
    await waitForAttempt(runId, victim.indicator_code, 2);
    const restartedAt = Date.now();
    expect(await waitForRunEnd(runId, [survivor])).toBe("completed");
    const end = await leaseEnd(doomed.label, killedAtDb);
    expect(end.reason).toMatch(/^presumed dead by worker kill-w2: its database session is gone/);
    console.log(
      `worker-kill recovery with a surviving worker: the dead worker's job handed back ${end.seconds?.toFixed(1)} s after the kill ` +
        `(heartbeat ${WORKER_ENV.WORKER_HEARTBEAT_SECONDS} s, dead after 3 missed heartbeats); piece "${victim.indicator_code}" restarted ${((restartedAt - killedAt) / 1000).toFixed(1)} s after the kill ` +
        "(the queue's 2 s retry delay, then the survivor's next free slot)",
    );
    expect((await piecesOf(runId)).find((p) => p.indicator_code === victim.indicator_code)).toMatchObject({ state: "completed", attempts: 2, worker_label: survivor.label });
    await expectStoredOnceAndEqual(runId, referenceRun);
  });
});

describe("overlapping attempts of one piece (a worker presumed dead that was only slow)", () => {
  it("the older attempt, finishing last, stores nothing and can neither reset, fail nor double-count the piece", async () => {
    const params = await resolveRunParams(workspaceId, lattice.panelVersionId, runParamsInputSchema.parse({ seed: 5, permutations: 99, local: false, indicators: lattice.indicators.slice(0, 2), periods: lattice.periods.slice(0, 3) }));
    const runId = await insertRun({ workspaceId, params, createdBy: analystId, origin: "user" });
    const [first, second] = params.indicators;
    const slow = await startPiece(runId, first, "slow-worker");
    expect(slow?.attempts).toBe(1);
    expect(await runPiece(runId, first, () => undefined, "fresh-worker")).toBe("completed-piece");
    const before = await db().query<{ id: string }>("SELECT id::text FROM run_results WHERE run_id = $1 ORDER BY id", { bind: [runId], type: QueryTypes.SELECT });
    expect(before).toHaveLength(3);

    // The slow attempt wakes up: its progress, its failure and its rows are all ignored.
    await recordPieceProgress(runId, first, 1, 1);
    await failPiece(runId, first, 1, "late failure of the slow attempt", true);
    expect(await completePiece(runId, first, "slow-worker", new Map(params.periods.map((p, i) => [p, i])), [])).toBe("already-completed");

    const after = await db().query<{ id: string }>("SELECT id::text FROM run_results WHERE run_id = $1 ORDER BY id", { bind: [runId], type: QueryTypes.SELECT });
    expect(after).toEqual(before);
    expect((await piecesOf(runId)).find((p) => p.indicator_code === first)).toMatchObject({ state: "completed", attempts: 2, periods_done: 3, worker_label: "fresh-worker" });
    expect(await runState(runId)).toBe("running");

    expect(await runPiece(runId, second, () => undefined, "fresh-worker")).toBe("completed-run");
    const [run] = await db().query<{ pieces_done: number }>("SELECT pieces_done FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
    expect(run.pieces_done).toBe(2);
    expect((await multiplicity(runId)).mostPerIndicatorPeriod).toBe(1);
  });

});

describe("a piece that never finishes", () => {
  it("a piece that throws on every attempt is queued again with its error, then fails its run on the last attempt", async () => {
    const params = await resolveRunParams(workspaceId, lattice.panelVersionId, runParamsInputSchema.parse({ seed: 7, permutations: 99, local: false, periods: lattice.periods.slice(0, 2) }));
    // A stored run naming an indicator the panel version lacks: loading its values throws inside the piece.
    const runId = await insertRun({ workspaceId, params: { ...params, indicators: ["no_such_indicator"] }, createdBy: analystId, origin: "user" });
    const expected = `panel version ${lattice.panelVersionId} has no indicator 'no_such_indicator'; it has ${lattice.indicators.join(", ")}`;
    await expect(runPiece(runId, "no_such_indicator")).rejects.toThrow(`attempt 1 of 3 failed: ${expected}`);
    const [afterFirst] = await db().query<{ state: string; error: string }>("SELECT state, error FROM run_pieces WHERE run_id = $1", { bind: [runId], type: QueryTypes.SELECT });
    expect(afterFirst).toEqual({ state: "queued", error: expected });
    expect(await runState(runId)).toBe("running");
    await expect(runPiece(runId, "no_such_indicator")).rejects.toThrow("attempt 2 of 3");
    await expect(runPiece(runId, "no_such_indicator")).rejects.toThrow("attempt 3 of 3");
    const [run] = await db().query<{ state: string; error: string }>("SELECT state, error FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
    expect(run).toEqual({ state: "failed", error: `Indicator "no_such_indicator": ${expected}` });
  });

  it("a piece whose worker died on every attempt fails its run with a message saying so", async () => {
    const params = await resolveRunParams(workspaceId, lattice.panelVersionId, runParamsInputSchema.parse({ seed: 6, permutations: 99, local: false, periods: lattice.periods.slice(0, 2) }));
    const runId = await insertRun({ workspaceId, params, createdBy: analystId, origin: "user" });
    await startPiece(runId, params.indicators[0], "doomed-worker");
    await abandonPiece(runId, params.indicators[0], "the worker running it (doomed-worker) stopped before it finished, on every attempt");
    const [run] = await db().query<{ state: string; error: string }>("SELECT state, error FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
    expect(run.state).toBe("failed");
    expect(run.error).toBe(`Indicator "${params.indicators[0]}": the worker running it (doomed-worker) stopped before it finished, on every attempt`);
  });
});

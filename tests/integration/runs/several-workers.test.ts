import { runParamsInputSchema } from "@/lib/runs/schemas";
import { startRun } from "@/lib/runs/service";
import type { PublishedLattice } from "@/scripts/bench/lattice-panel";
import { startWorkerProcess, type WorkerProcess } from "@/scripts/bench/worker-processes";
import { multiplicity, piecesOf, stageLatticeRun, storedOnce, storedResults, waitForRunEnd, type LatticeStage } from "@/tests/integration/faults/worker-run-checks";

// Issue 7, item 5: two worker processes share one large run. Real workers
// (worker/main.ts) on a jobs schema only this file's workers serve, so the
// test bring-up's worker takes no piece and the two workers below are the only
// ones. Whether two finish faster than one is a benchmark (`npm run bench --
// --only workers --services`), never a timed test.

jest.setTimeout(900_000);

const SCHEMA = "pgboss_several_workers";
// One piece at a time per worker, so every piece is taken by whichever worker is free.
const WORKER_ENV = { JOBS_SCHEMA: SCHEMA, WORKER_CONCURRENCY: "1", WORKER_POLL_SECONDS: "0.5" };
// 1,600 squares × 6 periods × 12 indicators (12 pieces), global + local, 999 permutations.
const LATTICE = { columns: 40, rows: 40, indicators: 12, periods: 6, seed: 2024 };
const CHOICE = runParamsInputSchema.parse({ seed: 97_531, permutations: 999, weights: "queen", local: true });

let workspaceId: number;
let analystId: number;
let lattice: PublishedLattice;
let teardown: LatticeStage["teardown"] | undefined;
const workers: WorkerProcess[] = [];
let singleWorkerRun: number;

async function run(): Promise<number> {
  const { runId } = await startRun({ workspaceId, userId: analystId, panelVersionId: lattice.panelVersionId, choice: CHOICE });
  return runId;
}

beforeAll(async () => {
  ({ workspaceId, analystId, lattice, teardown } = await stageLatticeRun(SCHEMA, LATTICE, "Several workers lattice"));
});

afterAll(async () => {
  await teardown?.(workers);
});

describe("several workers sharing one run", () => {
  it("one worker alone computes every piece of the run", async () => {
    workers.push(await startWorkerProcess("worker-a", WORKER_ENV));
    singleWorkerRun = await run();
    expect(await waitForRunEnd(singleWorkerRun, workers)).toBe("completed");
    const pieces = await piecesOf(singleWorkerRun);
    expect(pieces).toHaveLength(LATTICE.indicators);
    expect(new Set(pieces.map((p) => p.worker_label))).toEqual(new Set(["worker-a"]));
  });

  it("two worker processes both take pieces of one run, each piece is stored once, and every result equals the single-worker run", async () => {
    workers.push(await startWorkerProcess("worker-b", WORKER_ENV));
    const runId = await run();
    expect(await waitForRunEnd(runId, workers)).toBe("completed");

    const pieces = await piecesOf(runId);
    const byWorker = new Map<string, string[]>();
    for (const piece of pieces) byWorker.set(piece.worker_label ?? "(none)", [...(byWorker.get(piece.worker_label ?? "(none)") ?? []), piece.indicator_code]);
    console.log(`several-workers: ${[...byWorker].map(([worker, indicators]) => `${worker} computed ${indicators.length} piece(s)`).join(", ")}`);
    expect([...byWorker.keys()].sort()).toEqual(["worker-a", "worker-b"]);
    expect(pieces.every((p) => p.state === "completed" && p.attempts === 1)).toBe(true);

    expect(await multiplicity(runId)).toEqual(storedOnce(LATTICE));
    const [shared, single] = [await storedResults(runId), await storedResults(singleWorkerRun)];
    expect(shared).toHaveLength(LATTICE.indicators * LATTICE.periods);
    expect(shared).toEqual(single);
  });
});

/**
 * Several workers (issue 7, item 5): the same large run with one worker
 * process and with two, wall clock from enqueue to the run completed with
 * every result stored. A benchmark, never a test: nothing fails on time.
 *
 *   npx tsx scripts/bench/workers.ts [--json] [--indicators N] [--periods N] [--side N]
 *   npm run -s bench -- --only workers        (needs `npm run services:test` up and its variables exported)
 *
 * The panel is a synthetic lattice (scripts/bench/lattice-panel.ts: side ×
 * side squares, default 60 × 60 = 3,600 regions × 8 periods × 16 indicators,
 * so 16 pieces) published through the intake path into a workspace made for
 * the benchmark; the runs use global + local statistics with 999 permutations
 * and one seed, so the two runs must store identical numbers (checked and
 * printed). The workers serve a jobs schema of their own (JOBS_SCHEMA), so
 * no other worker on the database takes a piece. Each worker runs with the
 * default WORKER_CONCURRENCY (2): a worker is one Node process, so its
 * pieces share one core whatever the concurrency; a second process can use
 * a second core. The load average before and after is printed: on a shared
 * 2-core machine the speed-up says as much about the neighbours as about
 * Tessera.
 */
import os from "node:os";
import { randomBytes } from "node:crypto";
import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import { getBoss, stopBoss } from "@/lib/jobs/boss";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { startRun } from "@/lib/runs/service";
import { closeS3 } from "@/lib/storage/s3";
import { models } from "@/models";
import { publishLatticePanel } from "./lattice-panel";
import { startWorkerProcess, stopWorkerProcess, type WorkerProcess } from "./worker-processes";

const argv = process.argv.slice(2);
const json = argv.includes("--json");
const numberArg = (flag: string, fallback: number, min: number, max: number) => {
  const i = argv.indexOf(flag);
  const value = i >= 0 && /^\d+$/.test(argv[i + 1] ?? "") ? Number(argv[i + 1]) : fallback;
  return Math.min(max, Math.max(min, value));
};
const INDICATORS = numberArg("--indicators", 16, 2, 60);
const PERIODS = numberArg("--periods", 8, 1, 40);
const SIDE = numberArg("--side", 60, 5, 120);
const SCHEMA = "pgboss_bench_workers";
const log = json ? () => undefined : (line: string) => console.log(line);

const loadAverage = () =>
  os
    .loadavg()
    .map((l) => l.toFixed(2))
    .join(", ");

/** A workspace of its own with a steward (to publish) and an economist (to run); nobody signs in to it. */
async function benchWorkspace(): Promise<{ slug: string; workspaceId: number; stewardId: number; economistId: number }> {
  const { User, Workspace, Membership } = models();
  const tag = `${Date.now().toString(36)}-${randomBytes(3).toString("hex")}`;
  // Not a password hash: these accounts cannot sign in.
  const user = (role: string) => User.create({ email: `bench-${role}-${tag}@tessera-bench.invalid`, name: `Benchmark ${role}`, passwordHash: "!" });
  const steward = await user("steward");
  const economist = await user("economist");
  const workspace = await Workspace.create({ slug: `bench-workers-${tag}`, name: `Benchmark workers ${tag}`, createdBy: steward.id });
  await Membership.create({ workspaceId: workspace.id, userId: steward.id, role: "steward" });
  await Membership.create({ workspaceId: workspace.id, userId: economist.id, role: "economist" });
  return { slug: workspace.slug, workspaceId: workspace.id, stewardId: steward.id, economistId: economist.id };
}

async function timedRun(workerCount: number, start: () => Promise<number>): Promise<{ runId: number; ms: number; labels: Record<string, number> }> {
  const workers: WorkerProcess[] = [];
  try {
    for (let w = 0; w < workerCount; w++) workers.push(await startWorkerProcess(`bench-${workerCount}-${String.fromCharCode(97 + w)}`, { JOBS_SCHEMA: SCHEMA }));
    const started = performance.now();
    const runId = await start();
    for (;;) {
      const [row] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
      if (row.state === "completed") break;
      if (row.state !== "queued" && row.state !== "running") throw new Error(`run ${runId} ended ${row.state}`);
      if (performance.now() - started > 1_800_000) throw new Error(`run ${runId} did not finish in 30 minutes`);
      await new Promise((resolve) => setTimeout(resolve, 50));
    }
    const ms = performance.now() - started;
    const pieces = await db().query<{ worker_label: string; n: string }>(
      "SELECT worker_label, count(*)::text AS n FROM run_pieces WHERE run_id = $1 GROUP BY worker_label ORDER BY worker_label",
      { bind: [runId], type: QueryTypes.SELECT },
    );
    return { runId, ms, labels: Object.fromEntries(pieces.map((p) => [p.worker_label, Number(p.n)])) };
  } finally {
    for (const worker of workers) await stopWorkerProcess(worker);
  }
}

async function resultsText(runId: number): Promise<string> {
  const [row] = await db().query<{ all: string }>(
    "SELECT string_agg((to_jsonb(r) - 'id' - 'run_id' - 'created_at')::text, E'\\n' ORDER BY indicator_code, period_index) AS all FROM run_results r WHERE run_id = $1",
    { bind: [runId], type: QueryTypes.SELECT },
  );
  return row.all;
}

async function main(): Promise<void> {
  if (!process.env.DATABASE_URL) throw new Error("DATABASE_URL is not set: start `npm run services:test` and export the variables it prints");
  process.env.JOBS_SCHEMA = SCHEMA;
  await db().query(`DROP SCHEMA IF EXISTS ${SCHEMA} CASCADE`);
  await getBoss();
  const ws = await benchWorkspace();
  const spec = { columns: SIDE, rows: SIDE, indicators: INDICATORS, periods: PERIODS, seed: 31 };
  const regions = SIDE * SIDE;
  log(`workers: publishing a ${SIDE}×${SIDE} lattice (${regions.toLocaleString("en")} regions × ${PERIODS} periods × ${INDICATORS} indicators) through intake…`);
  const lattice = await publishLatticePanel(ws.stewardId, ws.slug, spec, "Benchmark lattice");
  const choice = runParamsInputSchema.parse({ seed: 123_457, permutations: 999, weights: "queen", local: true });
  const start = async () => (await startRun({ workspaceId: ws.workspaceId, userId: ws.economistId, panelVersionId: lattice.panelVersionId, choice, origin: "benchmark" })).runId;

  const loadBefore = loadAverage();
  const one = await timedRun(1, start);
  log(`workers 1 worker:  ${(one.ms / 1000).toFixed(2)} s (run ${one.runId}; pieces ${JSON.stringify(one.labels)})`);
  const two = await timedRun(2, start);
  log(`workers 2 workers: ${(two.ms / 1000).toFixed(2)} s (run ${two.runId}; pieces ${JSON.stringify(two.labels)})`);
  const loadAfter = loadAverage();
  const identical = (await resultsText(one.runId)) === (await resultsText(two.runId));
  const speedUp = one.ms / two.ms;
  const detail =
    `${regions.toLocaleString("en")} regions × ${PERIODS} periods × ${INDICATORS} indicators (${INDICATORS} pieces), global + local, 999 permutations, ` +
    `enqueue → run completed: 1 worker ${(one.ms / 1000).toFixed(2)} s, 2 workers ${(two.ms / 1000).toFixed(2)} s, speed-up ${speedUp.toFixed(2)}×; ` +
    `results of the two runs ${identical ? "identical" : "DIFFERENT"}; ${os.cpus().length} CPUs, load average (1, 5, 15 min) before ${loadBefore}, after ${loadAfter}`;
  log(`workers speed-up ${speedUp.toFixed(2)}×  ${detail}`);
  for (const runId of [one.runId, two.runId]) await db().query("DELETE FROM runs WHERE id = $1", { bind: [runId] });
  if (json) {
    console.log(
      JSON.stringify({
        results: [
          { case: "workers-1", ms: one.ms, target_ms: null, detail },
          { case: "workers-2", ms: two.ms, target_ms: null, detail, speed_up: speedUp, identical_results: identical, load_before: loadBefore, load_after: loadAfter },
        ],
      }),
    );
  }
}

main()
  .catch((error: unknown) => {
    console.error(`bench/workers: ${error instanceof Error ? error.message : String(error)}`);
    process.exitCode = 1;
  })
  .finally(async () => {
    await stopBoss(5_000).catch(() => undefined);
    await db()
      .query(`DROP SCHEMA IF EXISTS ${SCHEMA} CASCADE`)
      .catch(() => undefined);
    await db()
      .query("DELETE FROM job_workers WHERE jobs_schema = $1", { bind: [SCHEMA] })
      .catch(() => undefined);
    await closeIntakePool().catch(() => undefined);
    closeS3();
    await db()
      .close()
      .catch(() => undefined);
  });

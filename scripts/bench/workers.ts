/**
 * Several workers (issue 7, item 5): the same large run with one worker
 * process and with two, wall clock from enqueue to the run completed with
 * every result stored. A benchmark, never a test: nothing fails on time.
 *
 *   npx tsx scripts/bench/workers.ts [--json] [--indicators N] [--periods N] [--side N] [--rounds N]
 *   npm run -s bench -- --only workers        (needs `npm run services:test` up and its variables exported)
 *
 * The panel is a synthetic lattice (scripts/bench/lattice-panel.ts: side ×
 * side squares, default 60 × 60 = 3,600 regions × 8 periods × 16 indicators,
 * so 16 pieces) published through the intake path into a workspace made for
 * the benchmark; the runs use global + local statistics with 999 permutations
 * and one seed, so every run must store identical numbers (checked and
 * printed). `--rounds` (default 2) runs each worker count that many times in
 * ABBA order and reports the means. The workers serve a jobs schema of their
 * own (JOBS_SCHEMA), so no other worker on the database takes a piece. Each
 * worker runs with the default WORKER_CONCURRENCY (2): a worker is one Node
 * process, so its pieces share one core whatever the concurrency; a second
 * process can use a second core.
 *
 * Each run also prints where the CPU went (workers, PostgreSQL, this
 * process, from /proc): on 2 cores the two workers share them with
 * PostgreSQL, which bounds the speed-up well below 2×. The load average
 * before and after is printed: on a shared machine the speed-up says as much
 * about the neighbours as about Tessera.
 */
import os from "node:os";
import { createHash, randomBytes } from "node:crypto";
import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import { getBoss, stopBoss } from "@/lib/jobs/boss";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { startRun } from "@/lib/runs/service";
import { closeS3 } from "@/lib/storage/s3";
import { models } from "@/lib/models";
import { publishLatticePanel } from "./lattice-panel";
import { clusterCpuSeconds, postmasterOf, processCpuSeconds } from "./cpu-time";
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
const ROUNDS = numberArg("--rounds", 2, 1, 6);
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

interface CpuSplit {
  /** CPU seconds of the worker processes, of the PostgreSQL cluster and of this process (polling, queueing) during the run; null off Linux. */
  workers: number | null;
  postgres: number | null;
  bench: number | null;
}

async function timedRun(workerCount: number, start: () => Promise<number>): Promise<{
  runId: number;
  ms: number;
  labels: Record<string, number>;
  cpu: CpuSplit;
  timeline: { first_start: number; last_finish: number; finish: number; piece_seconds: number };
}> {
  const workers: WorkerProcess[] = [];
  try {
    for (let w = 0; w < workerCount; w++) workers.push(await startWorkerProcess(`bench-${workerCount}-${String.fromCharCode(97 + w)}`, { JOBS_SCHEMA: SCHEMA }));
    const postmaster = await postmasterPid();
    const cpuNow = (): CpuSplit => ({
      workers: sumOrNull(workers.map((w) => (w.child.pid ? processCpuSeconds(w.child.pid) : null))),
      postgres: postmaster ? clusterCpuSeconds(postmaster) : null,
      bench: processCpuSeconds(process.pid),
    });
    const cpuBefore = cpuNow();
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
    const cpuAfter = cpuNow();
    const cpu: CpuSplit = {
      workers: difference(cpuAfter.workers, cpuBefore.workers),
      postgres: difference(cpuAfter.postgres, cpuBefore.postgres),
      bench: difference(cpuAfter.bench, cpuBefore.bench),
    };
    const pieces = await db().query<{ worker_label: string; n: string }>(
      "SELECT worker_label, count(*)::text AS n FROM run_pieces WHERE run_id = $1 GROUP BY worker_label ORDER BY worker_label",
      { bind: [runId], type: QueryTypes.SELECT },
    );
    const [timeline] = await db().query<{ first_start: number; last_finish: number; finish: number; piece_seconds: number }>(
      `SELECT EXTRACT(EPOCH FROM min(p.started_at) - r.created_at)::float8 AS first_start,
              EXTRACT(EPOCH FROM max(p.finished_at) - r.created_at)::float8 AS last_finish,
              EXTRACT(EPOCH FROM r.finished_at - r.created_at)::float8 AS finish,
              EXTRACT(EPOCH FROM sum(p.finished_at - p.started_at))::float8 AS piece_seconds
         FROM runs r JOIN run_pieces p ON p.run_id = r.id WHERE r.id = $1 GROUP BY r.id`,
      { bind: [runId], type: QueryTypes.SELECT },
    );
    return { runId, ms, labels: Object.fromEntries(pieces.map((p) => [p.worker_label, Number(p.n)])), cpu, timeline };
  } finally {
    for (const worker of workers) await stopWorkerProcess(worker);
  }
}

function sumOrNull(values: (number | null)[]): number | null {
  return values.some((v) => v === null) ? null : values.reduce<number>((a, v) => a + (v ?? 0), 0);
}

function difference(after: number | null, before: number | null): number | null {
  return after === null || before === null ? null : after - before;
}

/** The PostgreSQL server process on this machine, found from one of our backends; null if it is elsewhere or unreadable. */
async function postmasterPid(): Promise<number | null> {
  const [row] = await db().query<{ pid: number }>("SELECT pg_backend_pid() AS pid", { type: QueryTypes.SELECT });
  return postmasterOf(row.pid);
}

/** "workers 20.1 s, PostgreSQL 6.3 s, this process 0.4 s of CPU = 1.43 cores busy" for a run of `ms` wall clock. */
function describeCpu(cpu: CpuSplit, ms: number): string {
  if (cpu.workers === null || cpu.postgres === null || cpu.bench === null) return "CPU split not available (needs Linux /proc and PostgreSQL on this machine)";
  const total = cpu.workers + cpu.postgres + cpu.bench;
  return `CPU: workers ${cpu.workers.toFixed(1)} s, PostgreSQL ${cpu.postgres.toFixed(1)} s, this process ${cpu.bench.toFixed(1)} s = ${(total / (ms / 1000)).toFixed(2)} cores busy on average`;
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
  // ABBA order (1, 2, 2, 1 workers, …): drift in the machine's load, and the
  // autovacuum that one run's rows set off during the next, fall on both
  // sides alike. Each run's results are fingerprinted and deleted, and the
  // table vacuumed, before the next run starts.
  const order = Array.from({ length: ROUNDS }, (_, r) => (r % 2 === 0 ? [1, 2] : [2, 1])).flat();
  const samples: Record<1 | 2, { ms: number; cpu: CpuSplit }[]> = { 1: [], 2: [] };
  const fingerprints = new Set<string>();
  for (const count of order as (1 | 2)[]) {
    await db().query("VACUUM ANALYZE run_results");
    const run = await timedRun(count, start);
    samples[count].push({ ms: run.ms, cpu: run.cpu });
    fingerprints.add(createHash("sha256").update(await resultsText(run.runId)).digest("hex"));
    const t = run.timeline;
    log(
      `workers ${count} worker${count === 1 ? ": " : "s:"} ${(run.ms / 1000).toFixed(2)} s (run ${run.runId}; pieces ${JSON.stringify(run.labels)}); ${describeCpu(run.cpu, run.ms)}; ` +
        `first piece started at ${t.first_start.toFixed(1)} s, last finished at ${t.last_finish.toFixed(1)} s, run completed at ${t.finish.toFixed(1)} s, pieces' own time ${t.piece_seconds.toFixed(1)} s`,
    );
    await db().query("DELETE FROM runs WHERE id = $1", { bind: [run.runId] });
  }
  const loadAfter = loadAverage();
  const identical = fingerprints.size === 1;
  const one = summarise(samples[1]);
  const two = summarise(samples[2]);
  const speedUp = one.ms / two.ms;
  const detail =
    `${regions.toLocaleString("en")} regions × ${PERIODS} periods × ${INDICATORS} indicators (${INDICATORS} pieces), global + local, 999 permutations, ` +
    `enqueue → run completed, mean of ${ROUNDS} run(s) each in ABBA order: 1 worker ${(one.ms / 1000).toFixed(2)} s, 2 workers ${(two.ms / 1000).toFixed(2)} s, speed-up ${speedUp.toFixed(2)}×; ` +
    `1 worker ${describeCpu(one.cpu, one.ms)}; 2 workers ${describeCpu(two.cpu, two.ms)}; ` +
    `results of all ${order.length} runs ${identical ? "identical" : "DIFFERENT"}; ${os.cpus().length} CPUs, load average (1, 5, 15 min) before ${loadBefore}, after ${loadAfter}`;
  log(`workers speed-up ${speedUp.toFixed(2)}×  ${detail}`);
  if (json) {
    console.log(
      JSON.stringify({
        results: [
          { case: "workers-1", ms: one.ms, target_ms: null, detail, cpu_seconds: one.cpu, runs_ms: samples[1].map((x) => x.ms) },
          {
            case: "workers-2",
            ms: two.ms,
            target_ms: null,
            detail,
            cpu_seconds: two.cpu,
            runs_ms: samples[2].map((x) => x.ms),
            speed_up: speedUp,
            identical_results: identical,
            load_before: loadBefore,
            load_after: loadAfter,
          },
        ],
      }),
    );
  }
}

/** Mean wall time and mean CPU split of a set of runs. */
function summarise(runs: { ms: number; cpu: CpuSplit }[]): { ms: number; cpu: CpuSplit } {
  const mean = (values: (number | null)[]) => (values.some((v) => v === null) ? null : values.reduce<number>((a, v) => a + (v ?? 0), 0) / values.length);
  return {
    ms: runs.reduce((a, r) => a + r.ms, 0) / runs.length,
    cpu: { workers: mean(runs.map((r) => r.cpu.workers)), postgres: mean(runs.map((r) => r.cpu.postgres)), bench: mean(runs.map((r) => r.cpu.bench)) },
  };
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

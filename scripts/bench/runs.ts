/**
 * Runs benchmarks (the performance targets in docs/benchmarks.md). A benchmark, never a test: nothing
 * fails on time; it prints what it measured and the target beside it.
 *
 *   npx tsx scripts/bench/runs.ts [--json] [--skip-db] [--large-indicators N] [--workers N]
 *
 * 1. demo-compute: the demo panel (Veldmark, seeders/data/veldmark: 238
 *    regions × 17 periods × 7 indicators, global + local, 999 permutations,
 *    queen, row-standardised) computed in this process with lib/runs — no I/O.
 * 2. demo-end-to-end (needs DATABASE_URL and S3_* of running services with
 *    the demo panel published): starts N workers (default 2, this script's own
 *    child processes), enqueues the same run, and times queue → every result
 *    stored and the run completed.
 * 3. large-global: 3,000 regions (a 60 × 50 rook lattice standing in for
 *    boundaries) × 30 periods × 50 indicators, global statistics only, 999
 *    permutations, split over N processes like N workers. By default only
 *    the first --large-indicators (10) indicators are computed and the
 *    computing time (not the process start-up, paid once) is extrapolated
 *    linearly to 50 (the cost is the same for every indicator); pass
 *    --large-indicators 50 for the full run. Each process reports its CPU
 *    time, printed beside the wall clock.
 * 4. catalogue-p95 (needs DATABASE_URL): 10,000 stored result rows in a
 *    benchmark run; the route handler's own call (lib/runs/queries
 *    catalogueText: the query and the answer's JSON text) timed 40 times per
 *    filter; p50 and p95. The benchmark run is deleted afterwards.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { readFileSync } from "node:fs";
import path from "node:path";
import type { Topology } from "topojson-specification";
import { weightsFromNeighbourLists } from "../../lib/spatial";
import { buildRunGeometry, computeIndicator, computePeriod, type PeriodParams, type RunGeometry } from "../../lib/runs/compute";

interface BenchResult {
  case: string;
  ms: number | null;
  target_ms: number | null;
  detail: string;
  [key: string]: unknown;
}

const argv = process.argv.slice(2);
const json = argv.includes("--json");
const skipDb = argv.includes("--skip-db");
const numberArg = (flag: string, fallback: number) => {
  const i = argv.indexOf(flag);
  return i >= 0 && /^\d+$/.test(argv[i + 1] ?? "") ? Number(argv[i + 1]) : fallback;
};
const largeIndicators = Math.min(50, Math.max(1, numberArg("--large-indicators", 10)));
const workers = Math.max(1, numberArg("--workers", 2));
const log = json ? () => undefined : (line: string) => console.log(line);
const ROOT = path.resolve(__dirname, "..", "..");

const DEMO_PARAMS: PeriodParams = {
  weights: "queen",
  transform: "row-standardised",
  islandPolicy: "exclude",
  permutations: 999,
  seed: 20_240_101,
  alpha: 0.05,
  correction: "fdr",
  local: true,
};

function loadDemo(): { geometry: RunGeometry; data: Map<string, Map<string, Map<string, number | null>>> } {
  const dir = path.join(ROOT, "seeders", "data", "veldmark");
  const topology = JSON.parse(readFileSync(path.join(dir, "veldmark.topojson"), "utf8")) as Topology;
  const geometry = buildRunGeometry(topology, { object: "districts", idProperty: "code" }, DEMO_PARAMS);
  const data = new Map<string, Map<string, Map<string, number | null>>>();
  // The file opens with its `# rate:` line (the counts behind a rate), then the header.
  for (const line of readFileSync(path.join(dir, "veldmark-panel.csv"), "utf8").trim().split(/\r?\n/).filter((l) => !l.startsWith("#")).slice(1)) {
    const [region, period, indicator, raw] = line.split(",");
    // The counts behind the closure rate are not analysed themselves (the demo run analyses the rate, which intake derives).
    if (indicator === "business_closures" || indicator === "working_age_population") continue;
    if (!data.has(indicator)) data.set(indicator, new Map());
    const byPeriod = data.get(indicator) as Map<string, Map<string, number | null>>;
    if (!byPeriod.has(period)) byPeriod.set(period, new Map());
    (byPeriod.get(period) as Map<string, number | null>).set(region, raw === "" ? null : Number(raw));
  }
  return { geometry, data };
}

function demoCompute(): BenchResult {
  const { geometry, data } = loadDemo();
  const started = performance.now();
  let rows = 0;
  for (const [indicator, byPeriod] of data) {
    rows += computeIndicator(geometry, DEMO_PARAMS, indicator, [...byPeriod].map(([period, values]) => ({ period, values }))).length;
  }
  const ms = performance.now() - started;
  return {
    case: "demo-compute",
    ms,
    target_ms: 5000,
    detail: `${geometry.baseWeights.ids.length} regions, ${rows} indicator-periods, global (Moran, Geary, General G) + local, 999 permutations, one thread, no I/O`,
    indicator_periods: rows,
  };
}

// ——— large synthetic run, sharded over child processes ———

function lattice(columns: number, rows: number): RunGeometry {
  const ids: string[] = [];
  const lists: number[][] = [];
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < columns; c++) {
      ids.push(`R${String(r * columns + c).padStart(4, "0")}`);
      const nb: number[] = [];
      if (r > 0) nb.push((r - 1) * columns + c);
      if (c > 0) nb.push(r * columns + c - 1);
      if (c < columns - 1) nb.push(r * columns + c + 1);
      if (r < rows - 1) nb.push((r + 1) * columns + c);
      lists.push(nb);
    }
  }
  return { baseWeights: weightsFromNeighbourLists(ids, lists, { rule: "rook", transform: "binary" }) };
}

/** What one shard of the large run reports: rows computed, and the wall and CPU ms of the computation alone. */
interface ShardReport {
  readonly rows: number;
  readonly computeMs: number;
  readonly cpuMs: number;
}

/** Computes indicators [from, to) of the synthetic panel, timing the computation (not the process start). */
function largeShard(from: number, to: number): ShardReport {
  const geometry = lattice(60, 50);
  const params: PeriodParams = { ...DEMO_PARAMS, weights: "rook", local: false };
  const n = geometry.baseWeights.ids.length;
  let state = 987654321;
  const next = () => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    return state / 4294967296;
  };
  const started = performance.now();
  const cpuStart = process.cpuUsage();
  let rows = 0;
  for (let k = from; k < to; k++) {
    for (let t = 0; t < 30; t++) {
      const values = new Float64Array(n);
      for (let i = 0; i < n; i++) values[i] = (i % 60) * (k % 3) * 0.05 + next() * 10 + t * 0.1;
      computePeriod(geometry, params, `ind${k}`, String(1995 + t), values);
      rows++;
    }
  }
  const cpu = process.cpuUsage(cpuStart);
  return { rows, computeMs: performance.now() - started, cpuMs: (cpu.user + cpu.system) / 1000 };
}

async function largeGlobal(): Promise<BenchResult> {
  const started = performance.now();
  const per = Math.ceil(largeIndicators / workers);
  const shards: Promise<ShardReport>[] = [];
  for (let w = 0; w < workers; w++) {
    const from = w * per;
    const to = Math.min(largeIndicators, from + per);
    if (from >= to) continue;
    shards.push(
      new Promise((resolve, reject) => {
        const child = spawn(process.execPath, [...process.execArgv, __filename, "--shard", String(from), String(to)], { stdio: ["ignore", "pipe", "inherit"] });
        let out = "";
        child.stdout.on("data", (b: Buffer) => (out += b.toString()));
        child.on("exit", (code) =>
          code === 0 ? resolve(JSON.parse(out.trim()) as ShardReport) : reject(new Error(`large-global shard ${from}-${to} exited ${code}`)),
        );
      }),
    );
  }
  const reports = await Promise.all(shards);
  const ms = performance.now() - started;
  const rows = reports.reduce((a, r) => a + r.rows, 0);
  const cpuMs = reports.reduce((a, r) => a + r.cpuMs, 0);
  const slowest = Math.max(...reports.map((r) => r.computeMs));
  // Extrapolate the computation only: process start-up (the rest of the wall time) is paid once, not per indicator.
  const scale = 50 / largeIndicators;
  const full = ms - slowest + slowest * scale;
  const perPeriod = cpuMs / rows;
  return {
    case: "large-global",
    ms: largeIndicators === 50 ? ms : full,
    target_ms: 90_000,
    detail:
      `3,000 regions (60×50 rook lattice) × 30 periods × 50 indicators, global only (Moran, Geary, General G on one shared permutation test), 999 permutations, ${workers} processes; ` +
      `CPU ${((cpuMs * (largeIndicators === 50 ? 1 : scale)) / 1000).toFixed(1)} s over the processes (${perPeriod.toFixed(1)} ms per indicator-period)` +
      (largeIndicators === 50
        ? ""
        : `; measured ${rows} indicator-periods (${largeIndicators} indicators) in ${(ms / 1000).toFixed(1)} s, of which ${(slowest / 1000).toFixed(1)} s computing, and extrapolated the computing linearly to 50`),
    measured_indicator_periods: rows,
    measured_ms: ms,
    cpu_ms: cpuMs * (largeIndicators === 50 ? 1 : scale),
    cpu_ms_per_indicator_period: perPeriod,
    extrapolated: largeIndicators !== 50,
  };
}

// ——— database cases ———

async function withDatabase<T>(work: () => Promise<T>): Promise<T | null> {
  if (skipDb || !process.env.DATABASE_URL) return null;
  try {
    return await work();
  } catch (error) {
    log(`(database case skipped: ${error instanceof Error ? error.message : String(error)})`);
    return null;
  }
}

function startWorker(): Promise<ChildProcess> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [...process.execArgv, path.join(ROOT, "worker", "main.ts")], {
      cwd: ROOT,
      env: { ...process.env, WORKER_CONCURRENCY: "1", WORKER_POLL_SECONDS: "0.5" },
      stdio: ["ignore", "pipe", "pipe"],
    });
    const timer = setTimeout(() => reject(new Error("a benchmark worker did not report ready within 60 s")), 60_000);
    child.stdout?.on("data", (b: Buffer) => {
      if (b.toString().includes("ready:")) {
        clearTimeout(timer);
        resolve(child);
      }
    });
    child.on("exit", (code) => reject(new Error(`a benchmark worker exited ${code} before it was ready`)));
  });
}

async function demoEndToEnd(): Promise<BenchResult | null> {
  return withDatabase(async () => {
    const { db } = await import("../../lib/db");
    const { QueryTypes } = await import("sequelize");
    const { publishedPanelVersions } = await import("../../lib/intake/published-panel");
    const { startRun } = await import("../../lib/runs/service");
    const { runParamsInputSchema } = await import("../../lib/runs/schemas");
    const demo = JSON.parse(readFileSync(path.join(ROOT, "seeders", "demo-accounts.json"), "utf8")) as { workspace: { slug: string } };
    const [ws] = await db().query<{ id: number }>("SELECT id FROM workspaces WHERE slug = $1", { bind: [demo.workspace.slug], type: QueryTypes.SELECT });
    if (!ws) throw new Error("no demo workspace");
    const version = (await publishedPanelVersions(ws.id))[0];
    if (!version) throw new Error("the demo panel is not published");
    const children: ChildProcess[] = [];
    try {
      for (let w = 0; w < workers; w++) children.push(await startWorker());
      const started = performance.now();
      const { runId, params } = await startRun({
        workspaceId: ws.id,
        userId: null,
        panelVersionId: version.panelVersionId,
        choice: runParamsInputSchema.parse({ seed: DEMO_PARAMS.seed }),
        origin: "benchmark",
      });
      let state = "queued";
      while (state !== "completed" && state !== "failed" && state !== "cancelled") {
        await new Promise((r) => setTimeout(r, 50));
        const [row] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
        state = row.state;
        if (performance.now() - started > 600_000) throw new Error(`run ${runId} did not finish in 10 minutes`);
      }
      const ms = performance.now() - started;
      await db().query("DELETE FROM runs WHERE id = $1", { bind: [runId] });
      return {
        case: "demo-end-to-end",
        ms: state === "completed" ? ms : null,
        target_ms: 5000,
        detail: `run ${runId} ${state}: ${params.indicators.length} × ${params.periods.length} indicator-periods, global + local, 999 permutations, ${workers} worker process(es), from enqueue to the run completed with every result stored`,
      };
    } finally {
      for (const child of children) child.kill("SIGTERM");
      const { stopBoss } = await import("../../lib/jobs/boss");
      await stopBoss(5_000);
    }
  });
}

async function catalogueP95(): Promise<BenchResult | null> {
  return withDatabase(async () => {
    const { catalogueText } = await import("../../lib/runs/queries");
    const { createSyntheticRun } = await import("./synthetic-run");
    const run = await createSyntheticRun({ rows: 10_000, indicatorPrefix: "bench_indicator_" });
    try {
      const filters = [
        { name: "all 10,000 rows", filter: { runId: run.id } },
        { name: "class = clustering", filter: { runId: run.id, classes: ["clustering" as const] } },
        { name: "periods 2000–2010 + text", filter: { runId: run.id, periodFrom: "2000", periodTo: "2010", text: "indicator_1" } },
      ];
      const timings: number[] = [];
      const perFilter: Record<string, number> = {};
      let rowsAll = 0;
      for (const f of filters) {
        const local: number[] = [];
        for (let k = 0; k < 42; k++) {
          const t = performance.now();
          // The route's own call: the answer's JSON text, sent as it is.
          const text = await catalogueText(run.workspaceId, f.filter);
          const ms = performance.now() - t;
          if (k >= 2) local.push(ms); // the first two warm the connection pool and plan cache
          if (f.name.startsWith("all")) rowsAll = (JSON.parse(text) as { rows: unknown[] }).rows.length;
        }
        local.sort((a, b) => a - b);
        perFilter[f.name] = local[Math.floor(0.95 * (local.length - 1))];
        timings.push(...local);
      }
      timings.sort((a, b) => a - b);
      const p95 = timings[Math.floor(0.95 * (timings.length - 1))];
      const p50 = timings[Math.floor(0.5 * (timings.length - 1))];
      return {
        case: "catalogue-p95",
        ms: p95,
        target_ms: 200,
        detail: `catalogue query and JSON text over a ${rowsAll.toLocaleString("en")}-row run, 40 timed calls per filter (3 filters): p50 ${p50.toFixed(1)} ms, p95 ${p95.toFixed(1)} ms; p95 per filter ${Object.entries(perFilter)
          .map(([k, v]) => `${k} ${v.toFixed(1)} ms`)
          .join(", ")} (query layer; the route adds the guard's two small lookups)`,
        p50_ms: p50,
      };
    } finally {
      await run.remove();
    }
  });
}

async function main(): Promise<void> {
  const shard = argv.indexOf("--shard");
  if (shard >= 0) {
    process.stdout.write(`${JSON.stringify(largeShard(Number(argv[shard + 1]), Number(argv[shard + 2])))}\n`);
    return;
  }
  const results: BenchResult[] = [];
  const report = (r: BenchResult | null) => {
    if (!r) return;
    results.push(r);
    const verdict = r.ms === null || r.target_ms === null ? "" : r.ms <= r.target_ms ? " (within target)" : " (over target)";
    log(`runs ${r.case.padEnd(16)} ${r.ms === null ? "—" : `${(r.ms / 1000).toFixed(2)} s`.padStart(9)}  target ${r.target_ms === null ? "—" : `${r.target_ms / 1000} s`}${verdict}  ${r.detail}`);
  };
  report(demoCompute());
  report(await demoEndToEnd());
  report(await largeGlobal());
  report(await catalogueP95());
  if (json) console.log(JSON.stringify({ results }));
  if (!skipDb && process.env.DATABASE_URL) {
    const { db } = await import("../../lib/db");
    const { closeIntakePool } = await import("../../lib/intake/ingest-db");
    const { closeS3 } = await import("../../lib/storage/s3");
    await closeIntakePool().catch(() => undefined);
    closeS3();
    await db().close().catch(() => undefined);
  }
}

main().catch((error: unknown) => {
  console.error(`bench/runs: ${error instanceof Error ? error.message : String(error)}`);
  process.exit(1);
});

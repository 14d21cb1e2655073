/**
 * Export benchmark (docs/exports.md): a synthetic completed run of 35,000
 * regions × 2 indicators × 5 periods with local results (350,000 local rows)
 * is exported through the route's own call (lib/runs/exports exportStream),
 * as CSV and as JSON, reading the stream to its end. Prints wall time, bytes,
 * chunks and the peak growth of this process's heap and RSS while streaming
 * (sampled every 20 ms): a streamed export grows by a few batches, far less
 * than the body. A benchmark, never a test; needs DATABASE_URL of running
 * services with at least one panel version (npm run services:test).
 *
 *   npx tsx scripts/bench/exports.ts [--json] [--regions N]
 */
import { QueryTypes } from "sequelize";

const argv = process.argv.slice(2);
const json = argv.includes("--json");
const regionsAt = argv.indexOf("--regions");
const REGIONS = regionsAt >= 0 && /^\d+$/.test(argv[regionsAt + 1] ?? "") ? Number(argv[regionsAt + 1]) : 35_000;
const INDICATORS = ["bench_export_a", "bench_export_b"];
const PERIODS = ["2019", "2020", "2021", "2022", "2023"];
const log = json ? () => undefined : (line: string) => console.log(line);

async function main(): Promise<void> {
  if (!process.env.DATABASE_URL) throw new Error("DATABASE_URL is not set: start `npm run services:test` and export what it prints");
  const { db } = await import("../../lib/db");
  const { getRun } = await import("../../lib/runs/queries");
  const { exportStream } = await import("../../lib/runs/exports");
  const [pv] = await db().query<{ id: number; boundary_version_id: number; workspace_id: number; slug: string }>(
    "SELECT pv.id, pv.boundary_version_id, p.workspace_id, w.slug FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id JOIN workspaces w ON w.id = p.workspace_id ORDER BY pv.id LIMIT 1",
    { type: QueryTypes.SELECT },
  );
  if (!pv) throw new Error("no panel version to attach a benchmark run to");
  const params = { weights: "queen", transform: "row-standardised", islandPolicy: "exclude", permutations: 999, seed: 1, alpha: 0.05, correction: "fdr", indicators: INDICATORS, periods: PERIODS, local: true, panelVersionId: pv.id, boundaryVersionId: pv.boundary_version_id, method: "tessera-runs/2" };
  const [run] = await db().query<{ id: number }>(
    `INSERT INTO runs (workspace_id, panel_version_id, boundary_version_id, origin, params, seed, state, progress, pieces_total, pieces_done, results_total, started_at, created_at, updated_at)
     VALUES ($1, $2, $3, 'benchmark', $4::jsonb, 1, 'running', 0, $5, 0, 0, now(), now(), now()) RETURNING id`,
    { bind: [pv.workspace_id, pv.id, pv.boundary_version_id, JSON.stringify(params), INDICATORS.length], type: QueryTypes.SELECT },
  );
  const results: Record<string, unknown>[] = [];
  try {
    // Local results as the worker stores them: column-wise arrays over every region (lib/runs/types LocalFields, GiStarFields).
    await db().query(
      `INSERT INTO run_results (run_id, indicator_code, period_key, period_index, status, n, regions_in_boundaries, exclusions, i, perm_p, local, gi_star, created_at)
       SELECT $1, ind.c, per.p, per.o - 1, 'computed', $4, $4, '{}'::jsonb, 0.1, 0.01, l.local, l.gi, now()
         FROM unnest($2::text[]) AS ind(c) CROSS JOIN unnest($3::text[]) WITH ORDINALITY AS per(p, o)
         CROSS JOIN LATERAL (
           SELECT jsonb_build_object('ids', jsonb_agg('R' || lpad(g::text, 6, '0') ORDER BY g), 'Ii', jsonb_agg(sin(g + per.o) ORDER BY g),
                    'z', jsonb_agg(cos(g) * 3 ORDER BY g), 'pseudoP', jsonb_agg(abs(sin(g * 7)) ORDER BY g), 'adjustedP', jsonb_agg(abs(sin(g * 5)) ORDER BY g),
                    'quadrant', jsonb_agg(CASE WHEN g % 4 = 0 THEN 'HH' ELSE 'LL' END ORDER BY g),
                    'cluster', jsonb_agg(CASE WHEN g % 9 = 0 THEN 'HH' ELSE 'not-significant' END ORDER BY g),
                    'standardised', jsonb_agg(sin(g) ORDER BY g), 'lag', jsonb_agg(sin(g + 1) ORDER BY g), 'alpha', 0.05, 'correction', 'fdr') AS local,
                  jsonb_build_object('ids', jsonb_agg('R' || lpad(g::text, 6, '0') ORDER BY g), 'z', jsonb_agg(cos(g) ORDER BY g), 'p', jsonb_agg(abs(cos(g)) ORDER BY g),
                    'pseudoP', jsonb_agg(abs(cos(g * 3)) ORDER BY g), 'adjustedP', jsonb_agg(abs(cos(g * 2)) ORDER BY g),
                    'classes', jsonb_agg(CASE WHEN g % 11 = 0 THEN 'hot' ELSE 'not-significant' END ORDER BY g)) AS gi
             FROM generate_series(1, $4) AS g) l`,
      { bind: [run.id, INDICATORS, PERIODS, REGIONS] },
    );
    await db().query("UPDATE runs SET state = 'completed', progress = 1, pieces_done = pieces_total, results_total = $2, finished_at = now() WHERE id = $1", {
      bind: [run.id, INDICATORS.length * PERIODS.length],
    });
    const summary = await getRun(pv.workspace_id, run.id);
    if (!summary) throw new Error("the benchmark run is not readable");
    for (const format of ["csv", "json"] as const) {
      global.gc?.();
      const heap0 = process.memoryUsage().heapUsed;
      const rss0 = process.memoryUsage().rss;
      let heapPeak = heap0;
      let rssPeak = rss0;
      const sampler = setInterval(() => {
        const m = process.memoryUsage();
        heapPeak = Math.max(heapPeak, m.heapUsed);
        rssPeak = Math.max(rssPeak, m.rss);
      }, 20);
      const started = performance.now();
      const reader = (await exportStream(summary, pv.slug, "local", format)).getReader();
      let bytes = 0;
      let chunks = 0;
      for (;;) {
        const { done, value } = await reader.read();
        if (done) break;
        bytes += value.byteLength;
        chunks++;
      }
      const ms = performance.now() - started;
      clearInterval(sampler);
      const mb = (n: number) => n / 1024 / 1024;
      const r = { case: `local-${format}`, regions: REGIONS, rows: REGIONS * INDICATORS.length * PERIODS.length, ms, bytes, chunks, heap_growth_mb: mb(heapPeak - heap0), rss_growth_mb: mb(rssPeak - rss0) };
      results.push(r);
      log(
        `exports ${r.case.padEnd(10)} ${(ms / 1000).toFixed(2)} s  ${r.rows.toLocaleString("en")} rows, ${mb(bytes).toFixed(1)} MB in ${chunks} chunks; ` +
          `peak growth while streaming: heap ${r.heap_growth_mb.toFixed(1)} MB, RSS ${r.rss_growth_mb.toFixed(1)} MB`,
      );
    }
  } finally {
    await db().query("DELETE FROM runs WHERE id = $1", { bind: [run.id] });
  }
  if (json) console.log(JSON.stringify({ results }));
  await db().close();
}

main().catch((error: unknown) => {
  console.error(`bench/exports: ${error instanceof Error ? error.message : String(error)}`);
  process.exit(1);
});

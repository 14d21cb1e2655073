/**
 * Intake benchmark (the performance targets in docs/benchmarks.md: 1 million observation rows validated in
 * under 20 s with memory under 300 MB, streamed, never read whole).
 *
 *   npx tsx scripts/bench/intake.ts [--json] [--rows N]
 *
 * Writes a long-form panel of N rows (default 1,000,000: 2,000 regions × 25
 * years × 20 indicators, ~1 % missing cells) to a temporary file, then streams
 * it through validatePanel against the 2,000 boundary ids while a sink counts
 * the clean observations (standing in for the COPY). Reports rows per second and
 * the peak resident set size. A benchmark, not a test: nothing fails on time.
 */
import { createReadStream, createWriteStream } from "node:fs";
import { mkdtemp, rm, stat } from "node:fs/promises";
import { once } from "node:events";
import os from "node:os";
import path from "node:path";
import { validatePanel } from "../../lib/intake";

const TARGET_SECONDS = 20;
const TARGET_RSS_MB = 300;

function parseArgs(argv: string[]): { json: boolean; rows: number } {
  let json = false;
  let rows = 1_000_000;
  for (let i = 0; i < argv.length; i += 1) {
    if (argv[i] === "--json") json = true;
    else if (argv[i] === "--rows" && /^\d+$/.test(argv[i + 1] ?? "")) rows = Number(argv[(i += 1)]);
    else {
      process.stderr.write(`bench/intake: unknown argument '${argv[i]}'; usage: [--json] [--rows N]\n`);
      process.exit(2);
    }
  }
  return { json, rows };
}

/** Writes the synthetic panel with back-pressure, so generation itself stays small in memory. */
async function writePanel(file: string, rows: number, regions: number, years: number): Promise<void> {
  const out = createWriteStream(file);
  out.write("region,period,indicator,value\n");
  let state = 12345;
  // A tiny LCG: the numbers only need to look varied, not be statistically good.
  const next = (): number => {
    state = (Math.imul(state, 1103515245) + 12345) >>> 0;
    return state / 4294967296;
  };
  let buffer = "";
  for (let r = 0; r < rows; r += 1) {
    const region = r % regions;
    const year = 2000 + (Math.floor(r / regions) % years);
    const indicator = Math.floor(r / (regions * years));
    const u = next();
    const value = u < 0.01 ? "" : (u * 100).toFixed(2);
    buffer += `BR-${String(region).padStart(5, "0")},${year},indicator_${String(indicator).padStart(2, "0")},${value}\n`;
    if (buffer.length > 1 << 16) {
      if (!out.write(buffer)) await once(out, "drain");
      buffer = "";
    }
  }
  out.end(buffer);
  await once(out, "finish");
}

async function main(): Promise<void> {
  const { json, rows } = parseArgs(process.argv.slice(2));
  const regions = 2000;
  const years = 25;
  const dir = await mkdtemp(path.join(os.tmpdir(), "tessera-intake-bench-"));
  const file = path.join(dir, "panel.csv");
  try {
    const generationStart = process.hrtime.bigint();
    await writePanel(file, rows, regions, years);
    const generationSeconds = Number(process.hrtime.bigint() - generationStart) / 1e9;
    const bytes = (await stat(file)).size;
    const ids = Array.from({ length: regions }, (_, i) => `BR-${String(i).padStart(5, "0")}`);

    global.gc?.();
    let peakRss = process.memoryUsage().rss;
    const sampler = setInterval(() => {
      peakRss = Math.max(peakRss, process.memoryUsage().rss);
    }, 25);
    let sunk = 0;
    const start = process.hrtime.bigint();
    const report = await validatePanel({
      source: createReadStream(file, { highWaterMark: 64 * 1024 }),
      boundaryIds: ids,
      onObservations: (batch) => {
        sunk += batch.length;
      },
    });
    const seconds = Number(process.hrtime.bigint() - start) / 1e9;
    clearInterval(sampler);
    peakRss = Math.max(peakRss, process.memoryUsage().rss);
    const peakRssMB = Math.round((peakRss / (1024 * 1024)) * 10) / 10;
    // maxRSS covers the whole process (generation included); it is an upper bound.
    const maxRssMB = Math.round((process.resourceUsage().maxRSS / 1024) * 10) / 10;

    const result = {
      benchmark: "intake-validate",
      rows: report.rows,
      fileMB: Math.round((bytes / (1024 * 1024)) * 10) / 10,
      observations: sunk,
      ok: report.ok,
      errorCount: report.errorCount,
      missing: Object.values(report.missing).reduce((a, b) => a + b, 0),
      seconds: Math.round(seconds * 1000) / 1000,
      rowsPerSecond: Math.round(report.rows / seconds),
      peakRssMB,
      processMaxRssMB: maxRssMB,
      generationSeconds: Math.round(generationSeconds * 100) / 100,
      targets: { seconds: TARGET_SECONDS, rssMB: TARGET_RSS_MB, note: "the performance targets in docs/benchmarks.md: validated and ingested; this measures validation only" },
      withinTargets: seconds < TARGET_SECONDS && peakRssMB < TARGET_RSS_MB,
      node: process.version,
      cpus: os.cpus().length,
    };
    if (json) {
      process.stdout.write(`${JSON.stringify(result)}\n`);
    } else {
      process.stdout.write(
        [
          `intake validation: ${result.rows.toLocaleString("en")} rows (${result.fileMB} MB) in ${result.seconds} s — ${result.rowsPerSecond.toLocaleString("en")} rows/s`,
          `peak RSS during validation ${result.peakRssMB} MB (process max ${result.processMaxRssMB} MB); targets < ${TARGET_SECONDS} s, < ${TARGET_RSS_MB} MB: ${result.withinTargets ? "met" : "NOT met"}`,
          `report ok=${result.ok}, errors=${result.errorCount}, missing cells=${result.missing}, observations emitted=${result.observations}`,
        ].join("\n") + "\n",
      );
    }
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}

main().catch((error: unknown) => {
  process.stderr.write(`bench/intake: ${error instanceof Error ? error.message : String(error)}\n`);
  process.exit(1);
});

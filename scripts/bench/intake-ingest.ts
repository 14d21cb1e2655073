/**
 * Benchmark: validation + COPY ingest of a generated long panel into
 * PostgreSQL, the path a validation job takes (lib/intake/ingest-panel.ts),
 * reading the CSV as a stream. Prints rows per second and the peak resident
 * memory of this process (the performance targets in docs/benchmarks.md: 1 million rows in under 20 s,
 * under 300 MB).
 *
 *   npx tsx scripts/bench/intake-ingest.ts [--rows N] [--json]
 *
 * Needs DATABASE_URL (e.g. the variables `npm run services:test` prints). It
 * creates a throwaway workspace and deletes it (and everything ingested) at the end.
 */
import { createReadStream } from "node:fs";
import { mkdtemp, rm, stat } from "node:fs/promises";
import { createWriteStream } from "node:fs";
import { once } from "node:events";
import os from "node:os";
import path from "node:path";
import { db } from "../../lib/db";
import { closeIntakePool } from "../../lib/intake/ingest-db";
import { ingestBoundaryVersion } from "../../lib/intake/ingest-boundaries";
import { ingestPanelVersion } from "../../lib/intake/ingest-panel";
import { models } from "../../lib/models";

function args(): { rows: number; json: boolean } {
  const argv = process.argv.slice(2);
  let rows = 1_000_000;
  let json = false;
  for (let i = 0; i < argv.length; i++) {
    if (argv[i] === "--json") json = true;
    else if (argv[i] === "--rows" && argv[i + 1]) rows = Number(argv[++i]);
    else throw new Error(`unknown argument '${argv[i]}'; usage: [--rows N] [--json]`);
  }
  if (!Number.isInteger(rows) || rows < 1000) throw new Error("--rows must be an integer ≥ 1000");
  return { rows, json };
}

/** A grid of square regions as TopoJSON-ready GeoJSON text. */
function grid(columns: number, rowsOfCells: number): string {
  const features = [];
  for (let r = 0; r < rowsOfCells; r++) {
    for (let c = 0; c < columns; c++) {
      const x = c * 5 + 1000;
      const y = r * 5 + 1000;
      features.push({
        type: "Feature",
        properties: { code: `R${r * columns + c + 1}` },
        geometry: { type: "Polygon", coordinates: [[[x, y], [x + 5, y], [x + 5, y + 5], [x, y + 5], [x, y]]] },
      });
    }
  }
  return JSON.stringify({ type: "FeatureCollection", features });
}

async function main(): Promise<void> {
  const { rows, json } = args();
  const regions = 1000;
  const indicators = 20;
  const periods = Math.ceil(rows / (regions * indicators));
  const dir = await mkdtemp(path.join(os.tmpdir(), "tessera-ingest-bench-"));
  const csv = path.join(dir, "panel.csv");
  const out = createWriteStream(csv);
  out.write("region,period,indicator,value\n");
  let written = 0;
  let seed = 12345;
  outer: for (let p = 0; p < periods; p++) {
    let chunk = "";
    for (let k = 0; k < indicators; k++) {
      for (let r = 1; r <= regions; r++) {
        if (written >= rows) break;
        seed = (seed * 1103515245 + 12345) % 2147483648;
        chunk += `R${r},${1900 + p},ind_${k},${(seed / 2147483648 * 100).toFixed(3)}\n`;
        written++;
      }
    }
    if (!out.write(chunk)) await once(out, "drain");
    if (written >= rows) break outer;
  }
  out.end();
  await once(out, "finish");
  const bytes = (await stat(csv)).size;

  const { Workspace, BoundarySet, BoundaryVersion, Panel, PanelVersion } = models();
  const workspace = await Workspace.create({ slug: `bench-${Date.now().toString(36)}`, name: "Ingest benchmark (temporary)", createdBy: null });
  try {
    const set = await BoundarySet.create({ workspaceId: workspace.id, name: "Grid", createdBy: null });
    const common = { report: null, diff: null, createdBy: null, validatedAt: null, publishedAt: null, archivedAt: null, uploadId: null };
    const bv = await BoundaryVersion.create({
      ...common,
      boundarySetId: set.id,
      version: 1,
      s3Key: `bench/${workspace.slug}/grid.geojson`,
      fileName: "grid.geojson",
      byteSize: 1,
      sha256: "0".repeat(64),
      format: "geojson",
      objectName: "regions",
      idProperty: "code",
      nameProperty: null,
      regionCount: null,
    });
    // The converted topology is written to S3 by the ingest; the bench only needs the regions.
    const boundary = await ingestBoundaryVersion(bv.id, { text: grid(40, 25) }).catch((err: unknown) => {
      throw new Error(`boundaries: ${err instanceof Error ? err.message : String(err)} (is S3 up?)`);
    });
    if (boundary.state !== "validated") throw new Error(`boundaries not validated: ${JSON.stringify(boundary)}`);
    const panel = await Panel.create({ workspaceId: workspace.id, name: "Bench", boundarySetId: set.id, createdBy: null });
    const pv = await PanelVersion.create({
      ...common,
      panelId: panel.id,
      version: 1,
      s3Key: `bench/${workspace.slug}/panel.csv`,
      fileName: "panel.csv",
      byteSize: bytes,
      sha256: "0".repeat(64),
      layout: "long",
      decimalSeparator: ".",
      mapping: { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" },
      boundaryVersionId: bv.id,
      rowCount: null,
    });

    let peak = process.memoryUsage().rss;
    const sampler = setInterval(() => {
      peak = Math.max(peak, process.memoryUsage().rss);
    }, 50);
    const started = process.hrtime.bigint();
    const outcome = await ingestPanelVersion(pv.id, { source: createReadStream(csv, { highWaterMark: 256 * 1024 }) });
    const seconds = Number(process.hrtime.bigint() - started) / 1e9;
    clearInterval(sampler);
    peak = Math.max(peak, process.memoryUsage().rss);
    if (outcome.state !== "validated") throw new Error(`panel not validated: ${JSON.stringify(outcome).slice(0, 500)}`);
    const result = {
      benchmark: "intake-ingest",
      rows: written,
      fileMB: Number((bytes / 1024 / 1024).toFixed(1)),
      observations: outcome.observations,
      seconds: Number(seconds.toFixed(2)),
      rowsPerSecond: Math.round(written / seconds),
      peakRssMB: Math.round(peak / 1024 / 1024),
      targets: { seconds: 20, peakRssMB: 300 },
    };
    if (json) process.stdout.write(`${JSON.stringify(result)}\n`);
    else
      process.stdout.write(
        `intake ingest (validate + COPY, one transaction): ${result.rows.toLocaleString("en")} rows (${result.fileMB} MB) in ${result.seconds} s — ` +
          `${result.rowsPerSecond.toLocaleString("en")} rows/s, peak RSS ${result.peakRssMB} MB (targets: < 20 s, < 300 MB)\n`,
      );
  } finally {
    // Panels first: a panel's boundary set and versions are protected (ON DELETE RESTRICT).
    await Panel.destroy({ where: { workspaceId: workspace.id } });
    await Workspace.destroy({ where: { id: workspace.id } });
    await rm(dir, { recursive: true, force: true });
  }
}

main()
  .then(async () => {
    await closeIntakePool();
    await db().close();
  })
  .catch(async (err: unknown) => {
    process.stderr.write(`bench/intake-ingest: ${err instanceof Error ? err.message : String(err)}\n`);
    await closeIntakePool().catch(() => undefined);
    await db().close().catch(() => undefined);
    process.exit(1);
  });

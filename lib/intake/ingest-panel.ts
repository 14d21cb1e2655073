/**
 * Panel ingest: streams a panel version's CSV from S3 through the validator
 * (lib/intake/validate.ts) and COPYs the clean observations into PostgreSQL.
 *
 * Everything a validation writes happens on one client inside one
 * transaction: the COPY, the new indicator codes, the diff against the
 * previous version and the state change to `validated`. When the report is not
 * ok, or anything throws half-way (S3, COPY, a crash), the transaction is
 * rolled back and nothing is left behind; the version is then marked
 * `rejected` with its report in a second, tiny transaction.
 */
import { once } from "node:events";
import { from as copyFrom } from "pg-copy-streams";
import type pg from "pg";
import { StoredFileChecksumError } from "@/lib/storage/errors";
import { validatePanelStream } from "./validate";
import { columnMappingSchema, type ColumnMapping, type PanelLayout } from "./schemas";
import type { Observation, PanelReport } from "./report";
import { declarationProblem, type RateDeclaration } from "./rates";
import { inTransaction, intakePool } from "./ingest-db";
import { drainable, streamVersionFile } from "./version-files";
import type { VersionDiff } from "@/models/intake-types";

export interface IngestPanelOptions {
  /** Test hook: throw after this many observations were written to COPY (simulates a crash mid-ingest). */
  failAfterObservations?: number;
  /** Cap on listed errors in the stored report. */
  maxErrors?: number;
  /** Byte source instead of S3 (scripts, benchmarks). */
  source?: AsyncIterable<Uint8Array>;
}

export type IngestOutcome =
  | { state: "validated"; report: PanelReport; diff: VersionDiff; observations: number }
  | { state: "rejected"; report: PanelReport | FailureReport }
  | { state: "skipped"; reason: string };

/** What is stored as the report when the ingest failed outside the validator (I/O, database). */
export interface FailureReport {
  ok: false;
  stage: "ingest";
  errors: { row: number | null; column: string | null; message: string }[];
  errorCount: number;
}

interface VersionRow {
  id: number;
  panel_id: number;
  version: number;
  state: string;
  s3_key: string;
  sha256: string;
  layout: PanelLayout;
  decimal_separator: "." | ",";
  mapping: unknown;
  boundary_version_id: number;
  workspace_id: number;
}

// COPY text format: escape the backslash first, then the separators.
function copyText(value: string): string {
  return value.replace(/\\/g, "\\\\").replace(/\t/g, "\\t").replace(/\n/g, "\\n").replace(/\r/g, "\\r");
}

function copyLine(versionId: number, o: Observation): string {
  const value = o.value === null || !Number.isFinite(o.value) ? "\\N" : String(o.value);
  return `${versionId}\t${copyText(o.indicator)}\t${copyText(o.periodKey)}\t${copyText(o.region)}\t${value}\n`;
}

/** Writes batches into a COPY stream with back-pressure; rejects on the stream's first error. */
class CopyWriter {
  private failure: Error | null = null;
  private readonly stream: ReturnType<typeof copyFrom>;
  written = 0;

  constructor(client: pg.PoolClient) {
    this.stream = client.query(copyFrom("COPY observations (panel_version_id, indicator_code, period_key, region_code, value) FROM STDIN"));
    this.stream.on("error", (err: Error) => {
      this.failure ??= err;
    });
  }

  async write(versionId: number, batch: readonly Observation[]): Promise<void> {
    if (this.failure) throw this.failure;
    let text = "";
    for (const o of batch) text += copyLine(versionId, o);
    this.written += batch.length;
    if (!this.stream.write(text)) {
      await Promise.race([once(this.stream, "drain"), once(this.stream, "error")]);
      if (this.failure) throw this.failure;
    }
  }

  async finish(): Promise<number> {
    if (this.failure) throw this.failure;
    const done = Promise.race([once(this.stream, "finish"), once(this.stream, "error").then(([err]) => Promise.reject(err as Error))]);
    this.stream.end();
    await done;
    if (this.failure) throw this.failure;
    return this.written;
  }

  /** Stops the COPY without committing anything (the transaction is rolled back by the caller). */
  abort(): void {
    this.stream.destroy();
  }
}

async function loadVersion(client: pg.PoolClient, versionId: number, lock: boolean): Promise<VersionRow | null> {
  const { rows } = await client.query<VersionRow>(
    `SELECT pv.id, pv.panel_id, pv.version, pv.state, pv.s3_key, pv.sha256, pv.layout, pv.decimal_separator, pv.mapping,
            pv.boundary_version_id, p.workspace_id
       FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
      WHERE pv.id = $1 ${lock ? "FOR UPDATE OF pv" : ""}`,
    [versionId],
  );
  return rows[0] ?? null;
}

/** The previous version a new one is compared with: the latest earlier one that was not rejected. */
async function previousVersion(client: pg.PoolClient, panelId: number, version: number): Promise<{ id: number; version: number } | null> {
  const { rows } = await client.query<{ id: number; version: number }>(
    `SELECT id, version FROM panel_versions
      WHERE panel_id = $1 AND version < $2 AND state IN ('validated','published','archived')
      ORDER BY version DESC LIMIT 1`,
    [panelId, version],
  );
  return rows[0] ?? null;
}

async function distinctOf(client: pg.PoolClient, versionId: number, column: "indicator_code" | "period_key" | "region_code"): Promise<Set<string>> {
  const { rows } = await client.query<{ v: string }>(`SELECT DISTINCT ${column} AS v FROM observations WHERE panel_version_id = $1`, [versionId]);
  return new Set(rows.map((r) => r.v));
}

function setDifference(a: Set<string>, b: Set<string>): string[] {
  return [...a].filter((x) => !b.has(x)).sort();
}

const DIFF_LIST_CAP = 200;

/** Regions, indicators and periods added or removed, and values changed, against the previous version. */
export async function panelDiff(client: pg.PoolClient, versionId: number, panelId: number, version: number): Promise<VersionDiff> {
  const previous = await previousVersion(client, panelId, version);
  // One client, so one query at a time.
  const regions = await distinctOf(client, versionId, "region_code");
  const indicators = await distinctOf(client, versionId, "indicator_code");
  const periods = await distinctOf(client, versionId, "period_key");
  if (!previous) {
    return {
      previousVersion: null,
      previousVersionId: null,
      regions: { added: [], removed: [], addedCount: 0, removedCount: 0 },
      indicators: { added: [], removed: [] },
      periods: { added: [], removed: [] },
      changedValues: 0,
      changedExamples: [],
    };
  }
  const prevRegions = await distinctOf(client, previous.id, "region_code");
  const prevIndicators = await distinctOf(client, previous.id, "indicator_code");
  const prevPeriods = await distinctOf(client, previous.id, "period_key");
  const regionsAdded = setDifference(regions, prevRegions);
  const regionsRemoved = setDifference(prevRegions, regions);
  const changed = await client.query<{ n: string }>(
    `SELECT count(*) AS n FROM observations a
       JOIN observations b ON b.panel_version_id = $2 AND b.indicator_code = a.indicator_code
                          AND b.period_key = a.period_key AND b.region_code = a.region_code
      WHERE a.panel_version_id = $1 AND a.value IS DISTINCT FROM b.value`,
    [versionId, previous.id],
  );
  const examples = await client.query<{ indicator: string; period: string; region: string; before: number | null; after: number | null }>(
    `SELECT a.indicator_code AS indicator, a.period_key AS period, a.region_code AS region, b.value AS before, a.value AS after
       FROM observations a
       JOIN observations b ON b.panel_version_id = $2 AND b.indicator_code = a.indicator_code
                          AND b.period_key = a.period_key AND b.region_code = a.region_code
      WHERE a.panel_version_id = $1 AND a.value IS DISTINCT FROM b.value
      ORDER BY a.indicator_code, a.period_key, a.region_code LIMIT 20`,
    [versionId, previous.id],
  );
  return {
    previousVersion: previous.version,
    previousVersionId: previous.id,
    regions: {
      added: regionsAdded.slice(0, DIFF_LIST_CAP),
      removed: regionsRemoved.slice(0, DIFF_LIST_CAP),
      addedCount: regionsAdded.length,
      removedCount: regionsRemoved.length,
    },
    indicators: { added: setDifference(indicators, prevIndicators), removed: setDifference(prevIndicators, indicators) },
    periods: { added: setDifference(periods, prevPeriods), removed: setDifference(prevPeriods, periods) },
    changedValues: Number(changed.rows[0]?.n ?? 0),
    changedExamples: examples.rows,
  };
}

function failureReport(message: string): FailureReport {
  return { ok: false, stage: "ingest", errors: [{ row: null, column: null, message }], errorCount: 1 };
}

async function markRejected(versionId: number, report: PanelReport | FailureReport): Promise<void> {
  await intakePool().query(
    `UPDATE panel_versions SET state = 'rejected', report = $2, row_count = $3, validated_at = now(), updated_at = now()
      WHERE id = $1 AND state = 'uploaded'`,
    [versionId, JSON.stringify(report), "rows" in report ? report.rows : null],
  );
}

/**
 * Validates and ingests one panel version (state `uploaded`). Idempotent: a
 * version in any other state is skipped, so a retried job does nothing twice.
 */
export async function ingestPanelVersion(versionId: number, options: IngestPanelOptions = {}): Promise<IngestOutcome> {
  let outcome: IngestOutcome;
  try {
    outcome = await inTransaction(async (client) => {
      const version = await loadVersion(client, versionId, true);
      if (!version) return { state: "skipped", reason: `panel version ${versionId} does not exist` } as const;
      if (version.state !== "uploaded") return { state: "skipped", reason: `panel version ${versionId} is already ${version.state}` } as const;
      const mapping: ColumnMapping = columnMappingSchema.parse(version.mapping);
      const { rows: regionRows } = await client.query<{ code: string }>("SELECT code FROM regions WHERE boundary_version_id = $1 ORDER BY id", [
        version.boundary_version_id,
      ]);
      // The version's copy was made after the upload's check, while the upload's PUT URL was still valid: the
      // stream throws at its end unless the bytes are what was checked, and the throw rolls the COPY back.
      const verified = options.source ? null : drainable(await streamVersionFile(version.s3_key, version.sha256, `panel version ${version.version} (id ${versionId})`));
      const source: AsyncIterable<Uint8Array> = options.source ?? (verified as NonNullable<typeof verified>).source;
      const rates = await workspaceRates(client, version.workspace_id);
      const writer = new CopyWriter(client);
      const iterator = validatePanelStream({
        source,
        boundaryIds: regionRows.map((r) => r.code),
        options: { decimal: version.decimal_separator, layout: version.layout, mapping, maxErrors: options.maxErrors ?? 100, rates },
      });
      let report: PanelReport;
      try {
        for (;;) {
          const step = await iterator.next();
          if (step.done) {
            report = step.value;
            break;
          }
          await writer.write(versionId, step.value);
          if (options.failAfterObservations !== undefined && writer.written >= options.failAfterObservations) {
            throw new Error(`ingest of panel version ${versionId} stopped on purpose after ${writer.written} observations (test hook)`);
          }
        }
        // The validator may have stopped early (bad header, too many errors): read the rest so the checksum is
        // checked before its report, or any row, is kept.
        await verified?.drain();
      } catch (err) {
        writer.abort();
        await iterator.return(undefined as never).catch(() => undefined);
        await verified?.close().catch(() => undefined);
        throw err;
      }
      if (!report.ok) {
        writer.abort();
        // Thrown to roll back the COPY; caught below and stored as a rejection.
        throw new RejectedPanel(report);
      }
      const observations = await writer.finish();
      await client.query(
        `INSERT INTO indicators (workspace_id, code, label, created_at, updated_at)
         SELECT $1, code, code, now(), now() FROM unnest($2::text[]) AS code
         ON CONFLICT (workspace_id, code) DO NOTHING`,
        [version.workspace_id, report.indicators],
      );
      await recordFileRates(client, version.workspace_id, report, rates);
      const diff = await panelDiff(client, versionId, version.panel_id, version.version);
      await client.query(
        `UPDATE panel_versions SET state = 'validated', report = $2, diff = $3, row_count = $4, validated_at = now(), updated_at = now()
          WHERE id = $1`,
        [versionId, JSON.stringify(report), JSON.stringify(diff), report.rows],
      );
      return { state: "validated", report, diff, observations } as const;
    });
  } catch (err) {
    if (err instanceof RejectedPanel) {
      await markRejected(versionId, err.report);
      return { state: "rejected", report: err.report };
    }
    if (err instanceof StoredFileChecksumError) {
      const report = failureReport(`the stored file changed after its upload was checked (checksum ${err.actual.slice(0, 12)}… instead of ${err.expected.slice(0, 12)}…); upload it again`);
      await markRejected(versionId, report);
      return { state: "rejected", report };
    }
    const message = err instanceof Error ? err.message : String(err);
    const report = failureReport(`The panel could not be read and stored (nothing was kept): ${message}`);
    await markRejected(versionId, report);
    return { state: "rejected", report };
  }
  return outcome;
}

/** The workspace's rate declarations (indicator records), which a version is checked with unless its file declares the rate itself. */
async function workspaceRates(client: pg.PoolClient, workspaceId: number): Promise<RateDeclaration[]> {
  const { rows } = await client.query<{ code: string; events: string; population: string; multiplier: number }>(
    `SELECT code, rate_events_code AS events, rate_population_code AS population, rate_multiplier AS multiplier
       FROM indicators WHERE workspace_id = $1 AND rate_events_code IS NOT NULL ORDER BY code`,
    [workspaceId],
  );
  return rows.map((r) => ({ indicator: r.code, events: r.events, population: r.population, multiplier: r.multiplier as RateDeclaration["multiplier"] }));
}

/**
 * A rate the file declared becomes the indicator record's declaration when the
 * record has none and it fits the workspace's others; a steward's declaration
 * is never overwritten by a file (the report warned when they differ).
 */
async function recordFileRates(client: pg.PoolClient, workspaceId: number, report: PanelReport, existing: readonly RateDeclaration[]): Promise<void> {
  const accepted = [...existing];
  for (const d of report.rates?.declarations ?? []) {
    if (d.source !== "file" || accepted.some((a) => a.indicator === d.indicator)) continue;
    if (declarationProblem(d, accepted) !== null) continue;
    const { rowCount } = await client.query(
      `UPDATE indicators SET rate_events_code = $3, rate_population_code = $4, rate_multiplier = $5, updated_at = now()
        WHERE workspace_id = $1 AND code = $2 AND rate_events_code IS NULL`,
      [workspaceId, d.indicator, d.events, d.population, d.multiplier],
    );
    if (rowCount) accepted.push(d);
  }
}

class RejectedPanel extends Error {
  constructor(readonly report: PanelReport) {
    super(`panel rejected with ${report.errorCount} error(s)`);
    this.name = "RejectedPanel";
  }
}

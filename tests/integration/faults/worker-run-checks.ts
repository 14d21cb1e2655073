import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import { getBoss, stopBoss } from "@/lib/jobs/boss";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { publishLatticePanel, type LatticeSpec, type PublishedLattice } from "@/scripts/bench/lattice-panel";
import { stopWorkerProcess, type WorkerProcess } from "@/scripts/bench/worker-processes";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";

// Shared by the worker fault and several-workers tests: a jobs schema owned by
// the test (so the test bring-up's worker never takes these jobs), and the
// checks that a run's results are stored exactly once and equal another run's.

/**
 * Points this test process (and the workers it starts with the same
 * JOBS_SCHEMA) at a pg-boss schema of its own, created afresh. Returns the
 * teardown: stops the workers still running, pg-boss, and drops the schema.
 */
export async function ownJobsSchema(schema: string): Promise<(workers: WorkerProcess[]) => Promise<void>> {
  const previous = process.env.JOBS_SCHEMA;
  await db().query(`DROP SCHEMA IF EXISTS ${schema} CASCADE`);
  await db().query("DELETE FROM job_workers WHERE jobs_schema = $1", { bind: [schema] });
  process.env.JOBS_SCHEMA = schema;
  // Created here, before any worker starts, so workers never race to create it.
  await getBoss();
  return async (workers) => {
    for (const worker of workers) await stopWorkerProcess(worker);
    await stopBoss(5_000);
    await db().query(`DROP SCHEMA IF EXISTS ${schema} CASCADE`);
    await db().query("DELETE FROM job_workers WHERE jobs_schema = $1", { bind: [schema] });
    if (previous === undefined) delete process.env.JOBS_SCHEMA;
    else process.env.JOBS_SCHEMA = previous;
  };
}

export interface LatticeStage {
  workspaceId: number;
  analystId: number;
  lattice: PublishedLattice;
  /** Stops the given workers, pg-boss and the connections; drops the jobs schema. */
  teardown: (workers: WorkerProcess[]) => Promise<void>;
}

/**
 * For beforeAll: checks the test services, takes a jobs schema of its own,
 * and publishes a lattice panel (through intake) in a new workspace with a
 * steward and an economist.
 */
export async function stageLatticeRun(schema: string, spec: LatticeSpec, name: string): Promise<LatticeStage> {
  await requireTestServices();
  const dropSchema = await ownJobsSchema(schema);
  const made = await makeWorkspace({ steward: "steward", analyst: "economist" });
  const lattice = await publishLatticePanel(made.users.steward.id, made.workspace.slug, spec, name);
  return {
    workspaceId: made.workspace.id,
    analystId: made.users.analyst.id,
    lattice,
    teardown: async (workers) => {
      await dropSchema(workers);
      await closeIntakePool();
      await closeConnections();
    },
  };
}

export async function runState(runId: number): Promise<string> {
  const [row] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
  return row?.state ?? "missing";
}

/** Waits until the run has ended (completed, failed or cancelled) and returns its state. */
export async function waitForRunEnd(runId: number, workers: readonly WorkerProcess[], timeoutMs = 300_000): Promise<string> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const state = await runState(runId);
    if (["completed", "failed", "cancelled"].includes(state)) return state;
    if (Date.now() > deadline) {
      const logs = workers.map((w) => `--- ${w.label}\n${w.lines.slice(-15).join("\n")}`).join("\n");
      throw new Error(`run ${runId} still ${state} after ${timeoutMs} ms; worker output:\n${logs}`);
    }
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
}

export interface PieceRow {
  indicator_code: string;
  state: string;
  attempts: number;
  periods_done: number;
  periods_total: number;
  job_id: string | null;
  worker_label: string | null;
}

export async function piecesOf(runId: number): Promise<PieceRow[]> {
  return db().query<PieceRow>(
    "SELECT indicator_code, state, attempts, periods_done, periods_total, job_id, worker_label FROM run_pieces WHERE run_id = $1 ORDER BY indicator_code",
    { bind: [runId], type: QueryTypes.SELECT },
  );
}

/**
 * Every stored column of every result row of a run except its identity
 * (id, run_id, created_at), in indicator and period order, as PostgreSQL's
 * JSON text: doubles print in their shortest exact form, so equal text is
 * equal numbers to the last bit.
 */
export async function storedResults(runId: number): Promise<string[]> {
  const rows = await db().query<{ row: string }>(
    "SELECT (to_jsonb(r) - 'id' - 'run_id' - 'created_at')::text AS row FROM run_results r WHERE run_id = $1 ORDER BY indicator_code, period_index",
    { bind: [runId], type: QueryTypes.SELECT },
  );
  return rows.map((r) => r.row);
}

export interface Multiplicity {
  /** Result rows stored. */
  rows: number;
  /** Distinct (indicator, period) pairs among them. */
  indicatorPeriods: number;
  /** Most rows stored for one (indicator, period). */
  mostPerIndicatorPeriod: number;
  /** Local results (region entries) stored. */
  localEntries: number;
  /** Distinct (indicator, period, region) among them. */
  localDistinct: number;
  /** Most local entries stored for one (indicator, period, region). */
  mostPerRegion: number;
}

/** What `multiplicity` must say of a complete run over the lattice: every result, and every region's local result, stored once. */
export function storedOnce(spec: LatticeSpec): Multiplicity {
  const cells = spec.indicators * spec.periods;
  const entries = cells * spec.columns * spec.rows;
  return { rows: cells, indicatorPeriods: cells, mostPerIndicatorPeriod: 1, localEntries: entries, localDistinct: entries, mostPerRegion: 1 };
}

/** How many times each result of a run is stored: per (run, indicator, period), and per region for local results. */
export async function multiplicity(runId: number): Promise<Multiplicity> {
  const [global] = await db().query<{ rows: string; pairs: string; most: string | null }>(
    `SELECT sum(k)::text AS rows, count(*)::text AS pairs, max(k)::text AS most
       FROM (SELECT count(*) AS k FROM run_results WHERE run_id = $1 GROUP BY run_id, indicator_code, period_key) g`,
    { bind: [runId], type: QueryTypes.SELECT },
  );
  const [local] = await db().query<{ entries: string; distinct_entries: string; most: string | null }>(
    `SELECT COALESCE(sum(k), 0)::text AS entries, count(*)::text AS distinct_entries, max(k)::text AS most
       FROM (SELECT count(*) AS k FROM run_results r CROSS JOIN LATERAL jsonb_array_elements_text(r.local -> 'ids') AS region(code)
              WHERE r.run_id = $1 GROUP BY r.run_id, r.indicator_code, r.period_key, region.code) l`,
    { bind: [runId], type: QueryTypes.SELECT },
  );
  return {
    rows: Number(global.rows ?? 0),
    indicatorPeriods: Number(global.pairs),
    mostPerIndicatorPeriod: Number(global.most ?? 0),
    localEntries: Number(local.entries),
    localDistinct: Number(local.distinct_entries),
    mostPerRegion: Number(local.most ?? 0),
  };
}

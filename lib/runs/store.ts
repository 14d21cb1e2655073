/**
 * Writes of runs, pieces and results. Server-only; no authorisation here (the
 * route handlers and the worker decide who may call these).
 *
 * A piece writes all its rows in one transaction, at its end: delete any
 * rows of the piece (none are left by an attempt that died, since rows are
 * only written here) and insert the new ones, mark the piece completed and
 * count it on the run. A piece already completed is left as it is: when two
 * attempts overlap (a worker presumed dead that was only slow, a job
 * delivered twice) the first to finish stores the rows and the other stores
 * nothing. The piece that completes the run also classes every row of the run
 * (the run-wide correction) in the same transaction, so a run is never
 * "completed" with unclassified rows.
 *
 * Attempts are numbered (run_pieces.attempts); progress and failures are
 * recorded only by the newest attempt, so an overlapping older one cannot
 * reset or fail a piece that a newer attempt is running.
 */
import { QueryTypes, type Transaction } from "sequelize";
import { db } from "@/lib/db";
import { classifyRows, decidingP, significanceBasis } from "./significance";
import type { ResolvedRunParams } from "./schemas";
import type { PeriodResult } from "./types";

export type RunState = "queued" | "running" | "completed" | "failed" | "cancelled";

export const RESULT_COLUMNS = [
  "run_id",
  "indicator_code",
  "period_key",
  "period_index",
  "status",
  "reason",
  "note",
  "n",
  "regions_in_boundaries",
  "excluded_missing",
  "excluded_islands",
  "exclusions",
  "weights",
  "i",
  "expected_i",
  "kurtosis",
  "variance_normality",
  "variance_randomisation",
  "z_normality",
  "z_randomisation",
  "p_normality",
  "p_randomisation",
  "p_randomisation_greater",
  "permutations",
  "perm_mean",
  "perm_sd",
  "perm_z",
  "perm_p_greater",
  "perm_p_less",
  "perm_p",
  "band_low",
  "band_high",
  "geary_c",
  "geary_z",
  "geary_p",
  "geary_pseudo_p",
  "general_g",
  "general_g_expected",
  "general_g_z",
  "general_g_p",
  "general_g_pseudo_p",
  "delta_i",
  "deciding_p",
  "local_counts",
  "local",
  "gi_star",
  "regression",
  "residual_i",
  "residual_p",
  "model_suggestion",
] as const;

const JSON_COLUMNS = new Set(["exclusions", "weights", "local_counts", "local", "gi_star", "regression"]);

/** A finite number or null (NaN and ±Infinity are not stored as numbers). */
function num(value: number | null | undefined): number | null {
  return typeof value === "number" && Number.isFinite(value) ? value : null;
}

/** The column values of one result row, in RESULT_COLUMNS order. */
export function resultRowValues(runId: number, periodIndex: number, row: PeriodResult): unknown[] {
  const m = row.moran;
  const p = row.permutation;
  const g = row.geary;
  const gg = row.generalG;
  const values: Record<(typeof RESULT_COLUMNS)[number], unknown> = {
    run_id: runId,
    indicator_code: row.indicator,
    period_key: row.period,
    period_index: periodIndex,
    status: row.status,
    reason: row.reason,
    note: row.note,
    n: row.n,
    regions_in_boundaries: row.exclusions.regionsInBoundaries,
    excluded_missing: row.exclusions.missing + row.exclusions.notANumber,
    excluded_islands: row.exclusions.islandExcluded,
    exclusions: row.exclusions,
    weights: row.weights,
    i: num(m?.I),
    expected_i: num(m?.expectedI),
    kurtosis: num(m?.kurtosis),
    variance_normality: num(m?.varianceNormality),
    variance_randomisation: num(m?.varianceRandomisation),
    z_normality: num(m?.zNormality),
    z_randomisation: num(m?.zRandomisation),
    p_normality: num(m?.pNormality),
    p_randomisation: num(m?.pRandomisation),
    p_randomisation_greater: num(m?.pRandomisationGreater),
    permutations: p?.permutations ?? null,
    perm_mean: num(p?.mean),
    perm_sd: num(p?.sd),
    perm_z: num(p?.z),
    perm_p_greater: num(p?.pGreater),
    perm_p_less: num(p?.pLess),
    perm_p: num(p?.pTwoSided),
    band_low: num(p?.bandLow),
    band_high: num(p?.bandHigh),
    geary_c: num(g?.C),
    geary_z: num(g?.zRandomisation),
    geary_p: num(g?.pRandomisation),
    geary_pseudo_p: num(g?.pseudoP),
    general_g: num(gg?.G),
    general_g_expected: num(gg?.expectedG),
    general_g_z: num(gg?.z),
    general_g_p: num(gg?.p),
    general_g_pseudo_p: num(gg?.pseudoP),
    delta_i: num(row.deltaI),
    deciding_p: num(decidingP(row).p),
    local_counts: row.local?.counts ?? null,
    local: row.local,
    gi_star: row.giStar,
    regression: row.regression ?? null,
    residual_i: num(row.regression?.moran?.I),
    residual_p: num(row.regression?.moran?.pTwoSided),
    model_suggestion: row.regression?.suggestion ?? null,
  };
  return RESULT_COLUMNS.map((c) => (JSON_COLUMNS.has(c) && values[c] !== null ? JSON.stringify(values[c]) : values[c]));
}

/** Creates a run with one piece per indicator, in one transaction (the caller's, when given). Returns the run id. */
export async function insertRun(args: {
  workspaceId: number;
  params: ResolvedRunParams;
  createdBy: number | null;
  origin: "user" | "rerun" | "demo" | "benchmark";
  rerunOf?: number | null;
  transaction?: Transaction;
}): Promise<number> {
  const { params } = args;
  const write = async (transaction: Transaction): Promise<number> => {
    const [row] = await db().query<{ id: number }>(
      `INSERT INTO runs (workspace_id, panel_version_id, boundary_version_id, rerun_of, origin, params, seed, state, progress,
                         pieces_total, pieces_done, results_total, created_by, created_at, updated_at)
       VALUES ($1, $2, $3, $4, $5, $6::jsonb, $7, 'queued', 0, $8, 0, $9, $10, now(), now()) RETURNING id`,
      {
        bind: [
          args.workspaceId,
          params.panelVersionId,
          params.boundaryVersionId,
          args.rerunOf ?? null,
          args.origin,
          JSON.stringify(params),
          params.seed,
          params.indicators.length,
          params.indicators.length * params.periods.length,
          args.createdBy,
        ],
        type: QueryTypes.SELECT,
        transaction,
      },
    );
    const runId = row.id;
    const bind: unknown[] = [runId, params.periods.length];
    const tuples = params.indicators.map((code, i) => {
      bind.push(code);
      return `($1, $${i + 3}, 'queued', 0, $2, 0, now(), now())`;
    });
    await db().query(
      `INSERT INTO run_pieces (run_id, indicator_code, state, attempts, periods_total, periods_done, created_at, updated_at) VALUES ${tuples.join(", ")}`,
      { bind, transaction },
    );
    return runId;
  };
  return args.transaction ? write(args.transaction) : db().transaction(write);
}

export async function setPieceJobIds(runId: number, jobs: readonly { indicator: string; jobId: string | null }[]): Promise<void> {
  for (const job of jobs) {
    await db().query("UPDATE run_pieces SET job_id = $3, updated_at = now() WHERE run_id = $1 AND indicator_code = $2", {
      bind: [runId, job.indicator, job.jobId],
    });
  }
}

export interface PieceStart {
  runState: RunState;
  pieceState: RunState;
  attempts: number;
  params: ResolvedRunParams;
}

/**
 * Claims a piece for an attempt by `worker` (a label): counts the attempt,
 * marks the piece (and a queued run) running. Returns null when the run or
 * piece does not exist.
 */
export async function startPiece(runId: number, indicator: string, worker: string): Promise<PieceStart | null> {
  return db().transaction(async (transaction) => {
    const runs = await db().query<{ state: RunState; params: ResolvedRunParams }>("SELECT state, params FROM runs WHERE id = $1 FOR UPDATE", {
      bind: [runId],
      type: QueryTypes.SELECT,
      transaction,
    });
    const run = runs[0];
    if (!run) return null;
    const pieces = await db().query<{ state: RunState; attempts: number }>(
      "SELECT state, attempts FROM run_pieces WHERE run_id = $1 AND indicator_code = $2 FOR UPDATE",
      { bind: [runId, indicator], type: QueryTypes.SELECT, transaction },
    );
    const piece = pieces[0];
    if (!piece) return null;
    if (run.state === "cancelled" || run.state === "failed" || piece.state === "completed" || piece.state === "cancelled") {
      return { runState: run.state, pieceState: piece.state, attempts: piece.attempts, params: run.params };
    }
    await db().query(
      `UPDATE run_pieces SET state = 'running', attempts = attempts + 1, periods_done = 0, error = NULL, worker_label = $3, started_at = now(), updated_at = now()
        WHERE run_id = $1 AND indicator_code = $2`,
      { bind: [runId, indicator, worker], transaction },
    );
    if (run.state === "queued") {
      await db().query("UPDATE runs SET state = 'running', started_at = now(), updated_at = now() WHERE id = $1", { bind: [runId], transaction });
    }
    return { runState: "running", pieceState: "running", attempts: piece.attempts + 1, params: run.params };
  });
}

/** Records how many periods attempt `attempt` of a piece has done and refreshes the run's progress; returns the run's state. */
export async function recordPieceProgress(runId: number, indicator: string, attempt: number, periodsDone: number): Promise<RunState | null> {
  await db().query(
    "UPDATE run_pieces SET periods_done = $4, updated_at = now() WHERE run_id = $1 AND indicator_code = $2 AND attempts = $3 AND state = 'running'",
    { bind: [runId, indicator, attempt, periodsDone] },
  );
  const rows = await db().query<{ state: RunState }>(
    `UPDATE runs SET progress = LEAST(1, (SELECT COALESCE(SUM(CASE WHEN state = 'completed' THEN periods_total ELSE periods_done END), 0)::double precision
                                            / GREATEST(1, SUM(periods_total)) FROM run_pieces WHERE run_id = $1)), updated_at = now()
      WHERE id = $1 AND state = 'running' RETURNING state`,
    { bind: [runId], type: QueryTypes.SELECT },
  );
  if (rows[0]) return rows[0].state;
  const current = await db().query<{ state: RunState }>("SELECT state FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
  return current[0]?.state ?? null;
}

/** What storing a piece came to. */
export type PieceCompletion = "completed-run" | "completed-piece" | "already-completed" | "run-closed";

/**
 * Stores a piece's rows (replacing any left over), marks it completed by
 * `worker` and, when it is the last piece, classes the whole run and marks it
 * completed. A piece already completed by an overlapping attempt, or a run
 * that is cancelled, failed or completed, is left alone (nothing is written).
 */
export async function completePiece(
  runId: number,
  indicator: string,
  worker: string,
  periodIndexOf: ReadonlyMap<string, number>,
  rows: readonly PeriodResult[],
): Promise<PieceCompletion> {
  return db().transaction(async (transaction) => {
    // Lock the run row first: it serialises completions of the pieces of one run.
    const runs = await db().query<{ state: RunState; params: ResolvedRunParams }>("SELECT state, params FROM runs WHERE id = $1 FOR UPDATE", {
      bind: [runId],
      type: QueryTypes.SELECT,
      transaction,
    });
    const run = runs[0];
    if (!run || run.state === "cancelled" || run.state === "failed" || run.state === "completed") return "run-closed";
    const pieces = await db().query<{ state: RunState }>("SELECT state FROM run_pieces WHERE run_id = $1 AND indicator_code = $2", {
      bind: [runId, indicator],
      type: QueryTypes.SELECT,
      transaction,
    });
    const piece = pieces[0];
    if (!piece || piece.state === "cancelled") return "run-closed";
    if (piece.state === "completed") return "already-completed";
    await db().query("DELETE FROM run_results WHERE run_id = $1 AND indicator_code = $2", { bind: [runId, indicator], transaction });
    await insertResultRows(runId, periodIndexOf, rows, transaction);
    await db().query(
      `UPDATE run_pieces SET state = 'completed', periods_done = periods_total, worker_label = $3, finished_at = now(), updated_at = now(), error = NULL
        WHERE run_id = $1 AND indicator_code = $2`,
      { bind: [runId, indicator, worker], transaction },
    );
    const [counts] = await db().query<{ pieces_done: number; pieces_total: number }>(
      "UPDATE runs SET pieces_done = pieces_done + 1, updated_at = now() WHERE id = $1 RETURNING pieces_done, pieces_total",
      { bind: [runId], type: QueryTypes.SELECT, transaction },
    );
    if (counts.pieces_done < counts.pieces_total) {
      await db().query(
        `UPDATE runs SET progress = LEAST(1, (SELECT COALESCE(SUM(CASE WHEN state = 'completed' THEN periods_total ELSE periods_done END), 0)::double precision
                                               / GREATEST(1, SUM(periods_total)) FROM run_pieces WHERE run_id = $1)) WHERE id = $1`,
        { bind: [runId], transaction },
      );
      return "completed-piece";
    }
    await finaliseRun(runId, run.params, transaction);
    return "completed-run";
  });
}

async function insertResultRows(runId: number, periodIndexOf: ReadonlyMap<string, number>, rows: readonly PeriodResult[], transaction: Transaction): Promise<void> {
  if (rows.length === 0) return;
  const bind: unknown[] = [];
  const tuples: string[] = [];
  for (const row of rows) {
    const index = periodIndexOf.get(row.period);
    if (index === undefined) throw new Error(`Run ${runId}: period "${row.period}" of indicator "${row.indicator}" is not among the run's periods.`);
    const values = resultRowValues(runId, index, row);
    const placeholders = values.map((_, k) => {
      bind.push(values[k]);
      const column = RESULT_COLUMNS[k];
      return `$${bind.length}${JSON_COLUMNS.has(column) ? "::jsonb" : ""}`;
    });
    tuples.push(`(${placeholders.join(", ")}, now())`);
  }
  await db().query(`INSERT INTO run_results (${RESULT_COLUMNS.join(", ")}, created_at) VALUES ${tuples.join(", ")}`, { bind, transaction });
}

/** Run-wide correction and classes, then the run is completed. */
async function finaliseRun(runId: number, params: ResolvedRunParams, transaction: Transaction): Promise<void> {
  const rows = await db().query<{ id: string; deciding_p: number | null; i: number | null; expected_i: number | null }>(
    "SELECT id, deciding_p, i, expected_i FROM run_results WHERE run_id = $1 ORDER BY id",
    { bind: [runId], type: QueryTypes.SELECT, transaction },
  );
  const classes = classifyRows(
    rows.map((r) => ({ decidingP: r.deciding_p, I: r.i, expectedI: r.expected_i })),
    params.alpha,
    params.correction,
  );
  const tests = classes.filter((c) => c.adjustedP !== null).length;
  // Chunks keep each statement well under PostgreSQL's 65,535 bind parameters.
  for (let start = 0; start < rows.length; start += 5000) {
    const bind: unknown[] = [];
    const tuples = rows.slice(start, start + 5000).map((r, k) => {
      const c = classes[start + k];
      bind.push(Number(r.id), c.adjustedP, c.significance);
      const b = bind.length;
      return `($${b - 2}::bigint, $${b - 1}::double precision, $${b}::varchar)`;
    });
    await db().query(
      `UPDATE run_results AS rr SET adjusted_p = v.adjusted_p, significance = v.significance
         FROM (VALUES ${tuples.join(", ")}) AS v(id, adjusted_p, significance) WHERE rr.id = v.id`,
      { bind, transaction },
    );
  }
  await db().query(
    `UPDATE runs SET state = 'completed', progress = 1, finished_at = now(), updated_at = now(), significance_basis = $2 WHERE id = $1`,
    { bind: [runId, significanceBasis(params, tests)], transaction },
  );
}

/**
 * Records a failed attempt; after the last attempt the piece and the run fail
 * with the message. `attempt` is the failing attempt's number: an older
 * attempt than the piece's newest records nothing. Null records the failure
 * whatever attempt is current (a job abandoned by a dead worker).
 */
export async function failPiece(runId: number, indicator: string, attempt: number | null, message: string, finalAttempt: boolean): Promise<void> {
  await db().transaction(async (transaction) => {
    const updated = await db().query<{ id: number }>(
      // $4 is cast: used both as a column value and in a comparison, PostgreSQL would deduce two types for it and refuse the statement.
      `UPDATE run_pieces SET state = $4::varchar, error = $5, updated_at = now(), finished_at = CASE WHEN $4::varchar = 'failed' THEN now() ELSE finished_at END
        WHERE run_id = $1 AND indicator_code = $2 AND state IN ('queued','running') AND ($3::int IS NULL OR attempts = $3::int) RETURNING id`,
      { bind: [runId, indicator, attempt, finalAttempt ? "failed" : "queued", message], type: QueryTypes.SELECT, transaction },
    );
    if (finalAttempt && updated.length > 0) {
      const failed = await db().query<{ id: number }>(
        `UPDATE runs SET state = 'failed', error = $2, finished_at = now(), updated_at = now() WHERE id = $1 AND state IN ('queued','running') RETURNING id`,
        { bind: [runId, `Indicator "${indicator}": ${message}`], type: QueryTypes.SELECT, transaction },
      );
      if (failed.length > 0) await closeOpenPieces(runId, `Not computed: the run failed on indicator "${indicator}".`, transaction);
    }
  });
}

/**
 * Cancels the pieces of a run that is over (failed or cancelled) that are
 * still queued or running, in the caller's transaction, so no piece stays
 * "queued" under a run that will never complete. A worker still computing one
 * finds it cancelled and stores nothing (completePiece, recordPieceProgress).
 * Returns their job ids.
 */
async function closeOpenPieces(runId: number, note: string | null, transaction: Transaction): Promise<string[]> {
  const pieces = await db().query<{ job_id: string | null }>(
    `UPDATE run_pieces SET state = 'cancelled', error = COALESCE($2, error), finished_at = now(), updated_at = now()
      WHERE run_id = $1 AND state IN ('queued','running') RETURNING job_id`,
    { bind: [runId, note], type: QueryTypes.SELECT, transaction },
  );
  return pieces.map((p) => p.job_id).filter((id): id is string => id !== null);
}

/** Fails a run that could not be started (its pieces could not be queued) and cancels its pieces, in one transaction. */
export async function failRunAtStart(runId: number, message: string): Promise<void> {
  await db().transaction(async (transaction) => {
    const failed = await db().query<{ id: number }>(
      `UPDATE runs SET state = 'failed', error = $2, finished_at = now(), updated_at = now() WHERE id = $1 AND state IN ('queued','running') RETURNING id`,
      { bind: [runId, message], type: QueryTypes.SELECT, transaction },
    );
    if (failed.length > 0) await closeOpenPieces(runId, "Not computed: the run could not be started.", transaction);
  });
}

/** Marks a run cancelled (only while queued or running). Returns the job ids of its unfinished pieces. */
export async function cancelRun(runId: number, userId: number | null, outer?: Transaction): Promise<{ cancelled: boolean; jobIds: string[] }> {
  const write = async (transaction: Transaction): Promise<{ cancelled: boolean; jobIds: string[] }> => {
    const updated = await db().query<{ id: number }>(
      `UPDATE runs SET state = 'cancelled', cancelled_by = $2, finished_at = now(), updated_at = now()
        WHERE id = $1 AND state IN ('queued','running') RETURNING id`,
      { bind: [runId, userId], type: QueryTypes.SELECT, transaction },
    );
    if (updated.length === 0) return { cancelled: false, jobIds: [] };
    return { cancelled: true, jobIds: await closeOpenPieces(runId, null, transaction) };
  };
  return outer ? write(outer) : db().transaction(write);
}

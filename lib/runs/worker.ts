/**
 * The pg-boss handler of one run piece (one indicator of a run). Several
 * workers take pieces of the same run at once. Safe to repeat: a piece that
 * is already completed, or whose run was cancelled or failed, is skipped; an
 * attempt stores its rows only at its end, in one transaction, so a worker
 * killed mid-piece leaves nothing behind and the retry starts afresh; when
 * two attempts overlap the first to finish stores the rows (store.ts).
 */
import os from "node:os";
import { loadBoundaryTopology } from "@/lib/geometry/boundary-topology";
import { loadPanelMatrix } from "@/lib/intake/published-panel";
import { enqueue } from "@/lib/jobs/enqueue";
import { buildRunGeometry, computePeriod, messageOf, withChanges, type RunGeometry } from "./compute";
import type { ResolvedRunParams } from "./schemas";
import { completePiece, failPiece, recordPieceProgress, startPiece } from "./store";
import type { PeriodResult } from "./types";

/** pg-boss retries a failed piece twice (queues.ts: retryLimit 2), so three attempts in all. */
export const PIECE_ATTEMPTS = 3;

// Versions never change, so weights built for one (rule, policy) can be reused by later pieces in this process.
const geometryCache = new Map<string, RunGeometry>();
const GEOMETRY_CACHE_SIZE = 8;

export async function geometryFor(params: Pick<ResolvedRunParams, "boundaryVersionId" | "weights" | "islandPolicy">): Promise<RunGeometry> {
  const key = `${params.boundaryVersionId}|${params.weights}|${params.islandPolicy}`;
  const cached = geometryCache.get(key);
  if (cached) return cached;
  const boundary = await loadBoundaryTopology(params.boundaryVersionId);
  const geometry = buildRunGeometry(boundary.topology, { object: boundary.objectName, idProperty: boundary.idProperty }, params);
  geometryCache.set(key, geometry);
  if (geometryCache.size > GEOMETRY_CACHE_SIZE) {
    const oldest = geometryCache.keys().next().value;
    if (oldest !== undefined) geometryCache.delete(oldest);
  }
  return geometry;
}

export type PieceOutcome = "completed-run" | "completed-piece" | "skipped" | "cancelled";

/** Who runs a piece when it is not a queue worker (the demo script, tests): this process. */
const IN_PROCESS = `${os.hostname()}:${process.pid}`;

/**
 * Computes and stores one piece; `worker` (a label) is recorded on the piece.
 * Throws (so pg-boss retries) when something unexpected fails; after the last
 * attempt the run is marked failed with the message.
 */
export async function runPiece(runId: number, indicator: string, log: (message: string) => void = () => undefined, worker = IN_PROCESS): Promise<PieceOutcome> {
  const start = await startPiece(runId, indicator, worker);
  if (!start) {
    log(`run ${runId} or its piece "${indicator}" no longer exists; nothing to do`);
    return "skipped";
  }
  if (start.pieceState !== "running") {
    log(`run ${runId} piece "${indicator}" skipped (run ${start.runState}, piece ${start.pieceState})`);
    return "skipped";
  }
  const { params } = start;
  try {
    const geometry = await geometryFor(params);
    // A run that controls for covariates regresses every indicator that is not itself one of them on them (compute.ts computeRegression).
    const covariateCodes = params.controlFor && !params.controlFor.includes(indicator) ? params.controlFor : [];
    // A rate the run standardises also needs its events and population (the same period's values).
    const rate = params.empiricalBayes?.find((d) => d.indicator === indicator) ?? null;
    const codes = [...new Set([indicator, ...(rate ? [rate.events, rate.population] : []), ...covariateCodes])];
    const matrix = await loadPanelMatrix(params.panelVersionId, { indicators: codes, periods: params.periods });
    const byPeriod = matrix.values.get(indicator);
    if (!byPeriod) throw new Error(`panel version ${params.panelVersionId} returned no values for indicator "${indicator}"`);
    const rows: Omit<PeriodResult, "deltaI">[] = [];
    let lastReport = 0;
    for (let index = 0; index < params.periods.length; index++) {
      const period = params.periods[index];
      const values = byPeriod.get(period);
      if (!values) throw new Error(`panel version ${params.panelVersionId} returned no values for indicator "${indicator}" in period "${period}"`);
      const covariates = covariateCodes.map((code) => {
        const covariateValues = matrix.values.get(code)?.get(period);
        if (!covariateValues) throw new Error(`panel version ${params.panelVersionId} returned no values for covariate "${code}" in period "${period}"`);
        return { code, values: covariateValues };
      });
      const rateInputs = rate
        ? {
            events: rate.events,
            population: rate.population,
            eventValues: matrix.values.get(rate.events)?.get(period) ?? new Map<string, number | null>(),
            populationValues: matrix.values.get(rate.population)?.get(period) ?? new Map<string, number | null>(),
          }
        : undefined;
      rows.push(computePeriod(geometry, params, indicator, period, values, { rate: rateInputs, covariates }));
      // Progress (and a look for cancellation) at most every 250 ms, and after the last period.
      const now = Date.now();
      if (now - lastReport > 250 || index === params.periods.length - 1) {
        lastReport = now;
        const state = await recordPieceProgress(runId, indicator, start.attempts, index + 1);
        if (state === "cancelled" || state === "failed") {
          log(`run ${runId} is ${state}; piece "${indicator}" stops after ${index + 1} period(s) without storing`);
          return "cancelled";
        }
      }
    }
    const periodIndexOf = new Map(params.periods.map((p, i) => [p, i]));
    const outcome = await completePiece(runId, indicator, worker, periodIndexOf, withChanges(rows));
    if (outcome === "run-closed") return "cancelled";
    if (outcome === "already-completed") {
      log(`run ${runId} piece "${indicator}": another attempt stored it first; this attempt stores nothing`);
      return "skipped";
    }
    log(`run ${runId} piece "${indicator}": ${rows.length} period(s) stored${outcome === "completed-run" ? "; run completed" : ""}`);
    if (outcome === "completed-run") {
      // Digests decide whether anyone is told (lib/digests); a failure to queue must not fail the stored run.
      await enqueue("digest-run-completed", { runId }).catch((e: unknown) => log(`run ${runId}: could not queue digest-run-completed: ${messageOf(e)}`));
    }
    return outcome;
  } catch (error) {
    const message = messageOf(error);
    const finalAttempt = start.attempts >= PIECE_ATTEMPTS;
    await failPiece(runId, indicator, start.attempts, message, finalAttempt).catch((e: unknown) => log(`could not record the failure: ${messageOf(e)}`));
    throw new Error(`run ${runId} piece "${indicator}" attempt ${start.attempts} of ${PIECE_ATTEMPTS} failed: ${message}`);
  }
}

/**
 * A piece's job ran out of attempts because its worker died each time (no
 * attempt reached the end to record a failure): the piece and its run fail
 * with `message`, unless the piece was completed meanwhile.
 */
export async function abandonPiece(runId: number, indicator: string, message: string): Promise<void> {
  await failPiece(runId, indicator, null, message, true);
}

/**
 * Starting, cancelling and rerunning runs. Server-only; the caller has
 * already authorised the member for "runs.manage" (route handlers) or is a
 * trusted script (the demo seed, benchmarks).
 */
import { audit } from "@/lib/security/audit";
import { ConflictError, InputError, NotFoundError } from "@/lib/http/errors";
import { getBoss } from "@/lib/jobs/boss";
import { enqueue } from "@/lib/jobs/enqueue";
import { loadBoundaryTopology } from "@/lib/geometry/boundary-topology";
import { panelDimensions, rateDeclarationsOf } from "@/lib/intake/published-panel";
import { weightsFromTopology } from "@/lib/spatial";
import { db } from "@/lib/db";
import { QueryTypes, type Transaction } from "sequelize";
import { freshSeed, RUN_METHOD, resolvedRunParamsSchema, SEQUENTIAL_EXTREMES, type ResolvedRunParams, type RunParamsChoice } from "./schemas";
import { cancelRun as cancelRunRow, failRunAtStart, insertRun, setPieceJobIds } from "./store";
import { weightsProblem } from "./weights-check";
import { runLabel, runName } from "./label";

/** A request that is well-formed but names something the panel version does not have (HTTP 422). */
export class RunInputError extends InputError {
  constructor(message: string, field: string) {
    super(message, field, 422);
    this.name = "RunInputError";
  }
}

interface PanelVersionRow {
  id: number;
  state: string;
  version: number;
  boundary_version_id: number;
  panel_name: string;
  boundary_state: string;
  boundary_set_name: string;
  boundary_version: number;
}

async function panelVersionOf(workspaceId: number, panelVersionId: number): Promise<PanelVersionRow> {
  const rows = await db().query<PanelVersionRow>(
    `SELECT pv.id, pv.state, pv.version, pv.boundary_version_id, p.name AS panel_name, bv.state AS boundary_state,
            bs.name AS boundary_set_name, bv.version AS boundary_version
       FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id JOIN boundary_versions bv ON bv.id = pv.boundary_version_id
       JOIN boundary_sets bs ON bs.id = bv.boundary_set_id
      WHERE pv.id = $1 AND p.workspace_id = $2`,
    { bind: [panelVersionId, workspaceId], type: QueryTypes.SELECT },
  );
  const row = rows[0];
  if (!row) throw new NotFoundError(`There is no panel version ${panelVersionId} in this workspace.`);
  return row;
}

/**
 * Checks that a panel version may be analysed and resolves the parameters:
 * seed chosen when absent, indicators and periods listed explicitly.
 * @throws ConflictError (409) when the version is not published; RunInputError (422) for unknown indicators or periods.
 */
export async function resolveRunParams(workspaceId: number, panelVersionId: number, choice: RunParamsChoice): Promise<ResolvedRunParams> {
  const version = await panelVersionOf(workspaceId, panelVersionId);
  if (version.state !== "published") {
    throw new ConflictError(
      `Panel "${version.panel_name}" version ${version.version} is ${version.state}; only published panel versions can be analysed. ` +
        (version.state === "archived" ? "Run the panel's current published version instead." : "Ask a steward to validate and publish it first."),
    );
  }
  if (version.boundary_state !== "published") {
    throw new ConflictError(
      `The boundaries of panel "${version.panel_name}" version ${version.version} are ${version.boundary_state}; analyses need published boundaries.`,
    );
  }
  const dims = await panelDimensions(panelVersionId);
  const periodKeys = dims.periods.map((p) => p.key);
  const indicators = choice.indicators?.length ? dedupe(choice.indicators) : dims.indicators;
  const unknownIndicators = indicators.filter((c) => !dims.indicators.includes(c));
  if (unknownIndicators.length) {
    throw new RunInputError(
      `Panel "${version.panel_name}" version ${version.version} has no indicator ${unknownIndicators.map((c) => `"${c}"`).join(", ")}.`,
      "indicators",
    );
  }
  const wantedPeriods = choice.periods?.length ? new Set(choice.periods) : null;
  const unknownPeriods = wantedPeriods ? [...wantedPeriods].filter((k) => !periodKeys.includes(k)) : [];
  if (unknownPeriods.length) {
    throw new RunInputError(
      `Panel "${version.panel_name}" version ${version.version} has no period ${unknownPeriods.map((k) => `"${k}"`).join(", ")}.`,
      "periods",
    );
  }
  // Periods always in time order, whatever order they were chosen in.
  const periods = wantedPeriods ? periodKeys.filter((k) => wantedPeriods.has(k)) : periodKeys;
  if (indicators.length === 0 || periods.length === 0) {
    throw new RunInputError(`Panel "${version.panel_name}" version ${version.version} has no observations to analyse.`, "panelVersionId");
  }
  const controlFor = controlForOf(version, dims.indicators, indicators, choice.controlFor ?? []);
  const sortedIndicators = [...indicators].sort();
  let empiricalBayes: { indicator: string; events: string; population: string; multiplier: number }[] | undefined;
  if (choice.rates === "empirical-bayes") {
    // The run's rate indicators whose events and population are both in this version.
    empiricalBayes = (await rateDeclarationsOf(workspaceId))
      .filter((d) => sortedIndicators.includes(d.indicator) && dims.indicators.includes(d.events) && dims.indicators.includes(d.population))
      .map((d) => ({ indicator: d.indicator, events: d.events, population: d.population, multiplier: d.multiplier }))
      .sort((x, y) => (x.indicator < y.indicator ? -1 : x.indicator > y.indicator ? 1 : 0));
    if (empiricalBayes.length === 0) {
      throw new RunInputError(
        `None of the chosen indicators of panel "${version.panel_name}" version ${version.version} is a declared rate whose events and population are in the panel, so there is nothing to standardise; choose raw rates.`,
        "rates",
      );
    }
  }
  return resolvedRunParamsSchema.parse({
    weights: choice.weights,
    transform: choice.transform,
    islandPolicy: choice.islandPolicy,
    permutations: choice.permutations,
    seed: choice.seed ?? freshSeed(),
    alpha: choice.alpha,
    correction: choice.correction,
    indicators: sortedIndicators,
    periods,
    local: choice.local,
    // Only with local statistics, and only when asked: a run without it stores exactly the parameters it always did.
    ...(choice.local && choice.sequential ? { sequentialExtremes: SEQUENTIAL_EXTREMES } : {}),
    // Only when asked: a run without covariates stores exactly the parameters it always did.
    ...(controlFor.length ? { controlFor } : {}),
    // Likewise only when asked: raw-rate runs store the parameters they always did.
    ...(empiricalBayes ? { empiricalBayes } : {}),
    panelVersionId,
    boundaryVersionId: version.boundary_version_id,
    method: RUN_METHOD,
  });
}

/**
 * The covariates a run controls for, checked against the panel version: each
 * an indicator of the version, and at least one analysed indicator left that
 * is not a covariate (a covariate's own rows carry no regression).
 * @throws RunInputError (422, field "controlFor") naming the problem.
 */
function controlForOf(version: PanelVersionRow, panelIndicators: readonly string[], analysed: readonly string[], wanted: readonly string[]): string[] {
  const controlFor = dedupe(wanted);
  if (controlFor.length === 0) return [];
  const where = `panel "${version.panel_name}" version ${version.version}`;
  const unknown = controlFor.filter((c) => !panelIndicators.includes(c));
  if (unknown.length) {
    throw new RunInputError(`Control for: ${where} has no indicator ${unknown.map((c) => `"${c}"`).join(", ")}; covariates must be indicators of the same panel version.`, "controlFor");
  }
  const explained = analysed.filter((c) => !controlFor.includes(c));
  if (explained.length === 0) {
    throw new RunInputError(
      `Control for: ${analysed.length === 1 ? `"${analysed[0]}" is the run's only indicator` : "every indicator of the run is also a covariate"}, so nothing would be explained. Choose covariates other than the indicators you analyse.`,
      "controlFor",
    );
  }
  return controlFor;
}

/**
 * Refuses (422, field "controlFor") covariates the boundaries have too few
 * regions for: the regression needs at least two regions more than its
 * coefficients (intercept and covariates) for its residual variance and
 * residual Moran's I.
 */
async function requireEnoughRegions(version: PanelVersionRow, params: ResolvedRunParams, regionCount: number): Promise<void> {
  const covariates = params.controlFor?.length ?? 0;
  if (covariates === 0) return;
  const needed = covariates + 3;
  if (regionCount < needed) {
    throw new RunInputError(
      `Control for: boundaries "${version.boundary_set_name}" v${version.boundary_version} have ${regionCount} regions; an intercept and ${covariates} covariate(s) need at least ${needed}.`,
      "controlFor",
    );
  }
}

/**
 * Refuses (422, field "weights") a weights rule that cannot serve the panel's
 * boundary version, before the run is stored: the same weights the worker
 * would build (lib/runs/worker `geometryFor`), checked by lib/runs/weights-check.
 */
async function requireBuildableWeights(version: PanelVersionRow, params: ResolvedRunParams): Promise<void> {
  const boundary = await loadBoundaryTopology(params.boundaryVersionId);
  const problem = weightsProblem({
    rule: params.weights,
    islandPolicy: params.islandPolicy,
    regionCount: boundary.regionCodes.length,
    boundary: `boundaries "${version.boundary_set_name}" v${version.boundary_version}`,
    build: () => weightsFromTopology(boundary.topology, params.weights, { object: boundary.objectName, idProperty: boundary.idProperty }),
  });
  if (problem) throw new RunInputError(problem, "weights");
  await requireEnoughRegions(version, params, boundary.regionCodes.length);
}

function dedupe(values: readonly string[]): string[] {
  return [...new Set(values)];
}

/** Queues one job per indicator of a stored run. */
export async function enqueuePieces(runId: number, indicators: readonly string[]): Promise<void> {
  const jobs: { indicator: string; jobId: string | null }[] = [];
  for (const indicator of indicators) {
    const jobId = await enqueue("run-piece", { runId, indicator });
    jobs.push({ indicator, jobId });
  }
  await setPieceJobIds(runId, jobs);
}

export interface StartedRun {
  runId: number;
  /** Per-workspace number (what labels show). */
  number: number;
  params: ResolvedRunParams;
}

/** Who asks: the member's id and e-mail for the audit trail (scripts may give no e-mail). */
interface RunActor {
  workspaceId: number;
  userId: number | null;
  actorEmail?: string | null;
}

/** The trail names a run as every screen does (lib/runs/label). */
function runTarget(number: number, version: PanelVersionRow, params: Pick<ResolvedRunParams, "weights" | "transform" | "permutations" | "controlFor" | "empiricalBayes">): string {
  return runLabel({ number, panelName: version.panel_name, panelVersion: version.version, params });
}

async function runNumberOf(runId: number, transaction?: Transaction): Promise<number> {
  const rows = await db().query<{ number: number }>("SELECT number FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT, transaction });
  return rows[0]?.number ?? 0;
}

/** What the trail keeps of a run's parameters: enough to tell runs apart, not the indicator list. */
function paramsSummary(params: ResolvedRunParams): Record<string, unknown> {
  return {
    panelVersionId: params.panelVersionId,
    indicators: params.indicators.length,
    periods: params.periods.length,
    weights: params.weights,
    permutations: params.permutations,
    seed: params.seed,
    local: params.local,
    ...(params.sequentialExtremes === undefined ? {} : { sequentialExtremes: params.sequentialExtremes }),
    ...(params.controlFor === undefined ? {} : { controlFor: params.controlFor }),
    ...(params.empiricalBayes === undefined ? {} : { empiricalBayes: params.empiricalBayes.map((d) => d.indicator) }),
  };
}

async function auditRun(actor: RunActor, action: "run.started" | "run.rerun" | "run.cancelled", target: string, detail: Record<string, unknown>, transaction: Transaction) {
  await audit({ workspaceId: actor.workspaceId, actorId: actor.userId, actorEmail: actor.actorEmail ?? null, action, target, detail }, transaction);
}

/** Inserts the run and its audit event in one transaction, then queues its pieces. */
async function createRun(
  actor: RunActor,
  version: PanelVersionRow,
  params: ResolvedRunParams,
  origin: "user" | "rerun" | "demo" | "benchmark",
  rerunOf: number | null,
): Promise<StartedRun> {
  await requireBuildableWeights(version, params);
  const { runId, number } = await db().transaction(async (transaction) => {
    const id = await insertRun({ workspaceId: actor.workspaceId, params, createdBy: actor.userId, origin, rerunOf, transaction });
    const runNumber = await runNumberOf(id, transaction);
    const rerunOfNumber = rerunOf === null ? null : await runNumberOf(rerunOf, transaction);
    const detail = { runId: id, runNumber, ...paramsSummary(params), origin, ...(rerunOf === null ? {} : { rerunOf, rerunOfNumber }) };
    await auditRun(actor, rerunOf === null ? "run.started" : "run.rerun", runTarget(runNumber, version, params), detail, transaction);
    return { runId: id, number: runNumber };
  });
  try {
    await enqueuePieces(runId, params.indicators);
  } catch (error) {
    // Pieces that were never queued would wait under a queued run for ever: the
    // run fails and its pieces are cancelled (a job queued before the failure
    // finds them cancelled and stores nothing, lib/runs/store startPiece).
    await failRunAtStart(runId, `Its pieces could not be queued: ${error instanceof Error ? error.message : String(error)}`).catch(() => undefined);
    throw error;
  }
  return { runId, number, params };
}

/** Creates a run and queues its pieces. */
export async function startRun(
  args: RunActor & {
    panelVersionId: number;
    choice: RunParamsChoice;
    origin?: "user" | "demo" | "benchmark";
  },
): Promise<StartedRun> {
  const params = await resolveRunParams(args.workspaceId, args.panelVersionId, args.choice);
  const version = await panelVersionOf(args.workspaceId, args.panelVersionId);
  return createRun(args, version, params, args.origin ?? "user", null);
}

/**
 * Starts a new run with exactly the stored parameters of an earlier one
 * (same seed, same data version), so every number is reproduced when the
 * earlier run used the current method.
 */
export async function rerun(args: RunActor & { runId: number }): Promise<StartedRun> {
  const rows = await db().query<{ params: ResolvedRunParams }>("SELECT params FROM runs WHERE id = $1 AND workspace_id = $2", {
    bind: [args.runId, args.workspaceId],
    type: QueryTypes.SELECT,
  });
  const stored = rows[0];
  if (!stored) throw new NotFoundError(`There is no run ${args.runId} in this workspace.`);
  const previous = resolvedRunParamsSchema.parse(stored.params);
  const version = await panelVersionOf(args.workspaceId, previous.panelVersionId);
  if (version.state !== "published") {
    throw new ConflictError(
      `Run ${args.runId} analysed panel "${version.panel_name}" version ${version.version}, which is now ${version.state}; only published versions can be analysed. Start a new run on the current version instead.`,
    );
  }
  // The rerun is computed by today's method and says so; under an older method
  // only the numbers that method changed can differ (see RUN_METHOD).
  const params: ResolvedRunParams = { ...previous, method: RUN_METHOD };
  return createRun(args, version, params, "rerun", args.runId);
}

/** Cancels a queued or running run; queued pieces are withdrawn from the queue, running ones stop at their next period. */
export async function cancelRun(args: RunActor & { runId: number }): Promise<void> {
  const rows = await db().query<{ state: string; panel_version_id: number; number: number; params: ResolvedRunParams }>("SELECT state, panel_version_id, number, params FROM runs WHERE id = $1 AND workspace_id = $2", {
    bind: [args.runId, args.workspaceId],
    type: QueryTypes.SELECT,
  });
  const run = rows[0];
  if (!run) throw new NotFoundError(`There is no run ${args.runId} in this workspace.`);
  const version = await panelVersionOf(args.workspaceId, run.panel_version_id);
  const result = await db().transaction(async (transaction) => {
    const cancelled = await cancelRunRow(args.runId, args.userId, transaction);
    if (cancelled.cancelled) {
      await auditRun(args, "run.cancelled", runTarget(run.number, version, run.params), { runId: args.runId, runNumber: run.number, panelVersionId: run.panel_version_id }, transaction);
    }
    return cancelled;
  });
  if (!result.cancelled) throw new ConflictError(`${runName(run.number)} is already ${run.state}; only queued or running runs can be cancelled.`);
  if (result.jobIds.length) {
    const boss = await getBoss();
    await boss.cancel("run-piece", result.jobIds).catch(() => undefined);
  }
}

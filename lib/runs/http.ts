import { jsonError } from "@/lib/http/errors";
import { resolveRunForIndicator, type RunSummary } from "./queries";

// Helpers shared by the runs route handlers (they run after memberRoute's guard).

/**
 * Resolves the run that analysed `indicator` (the given one, or the latest
 * completed) and answers with `respond(run)`; 404 when there is none. Errors
 * go on to memberRoute, which answers them through errorResponse.
 */
export async function withIndicatorRun(
  workspaceId: number,
  indicator: string,
  runId: number | null,
  respond: (run: RunSummary) => Promise<Response>,
): Promise<Response> {
  const run = await resolveRunForIndicator(workspaceId, indicator, runId);
  if (!run) return jsonError(404, `No completed run has analysed "${indicator}" yet.`);
  return respond(run);
}

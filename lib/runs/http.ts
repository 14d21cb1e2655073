import type { z } from "zod";
import { errorResponse, invalidBody, jsonError } from "@/lib/auth/route";
import { resolveRunForIndicator, type RunSummary } from "./queries";
import { RunInputError } from "./service";
import { searchObject } from "./schemas";

// Helpers shared by the runs route handlers (they run after memberRoute's guard).

/** Maps a RunInputError to 422 naming the field; everything else as errorResponse. */
export function runsError(error: unknown): Response {
  if (error instanceof RunInputError) return jsonError(422, error.message, { field: error.field });
  return errorResponse(error);
}

/** Parses the request's search parameters; a 400 Response naming the field when they do not fit. */
export function parseSearch<S extends z.ZodType>(request: Request, schema: S): { ok: true; value: z.output<S> } | { ok: false; response: Response } {
  const parsed = schema.safeParse(searchObject(request.url));
  if (!parsed.success) return { ok: false, response: invalidBody(parsed.error) };
  return { ok: true, value: parsed.data };
}

/**
 * Resolves the run that analysed `indicator` (the given one, or the latest
 * completed) and answers with `respond(run)`; 404 when there is none, and
 * errors mapped by {@link runsError}.
 */
export async function withIndicatorRun(
  workspaceId: number,
  indicator: string,
  runId: number | null,
  respond: (run: RunSummary) => Promise<Response>,
): Promise<Response> {
  try {
    const run = await resolveRunForIndicator(workspaceId, indicator, runId);
    if (!run) return jsonError(404, `No completed run has analysed "${indicator}" yet.`);
    return await respond(run);
  } catch (error) {
    return runsError(error);
  }
}

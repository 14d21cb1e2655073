import { exportJsonDescription } from "@/lib/runs/responses";
import { exportParamsSchema, exportQuerySchema } from "@/lib/runs/exports";
import {
  runCancelledResponseSchema,
  runDetailResponseSchema,
  runListResponseSchema,
  runOptionsResponseSchema,
  runRerunResponseSchema,
  runStartedResponseSchema,
} from "@/lib/runs/responses";
import { startRunSchema } from "@/lib/runs/schemas";
import { idParams, member, type ApiRoute } from "./define";

const runId = idParams("runId", "The run's id.");

export const RUNS_ROUTES: ApiRoute[] = [
  {
    area: "runs",
    method: "GET",
    path: "/api/w/{slug}/runs",
    summary: "List runs",
    access: member("results.view"),
    answers: { 200: { description: "The newest runs with their state and progress.", schema: runListResponseSchema } },
  },
  {
    area: "runs",
    method: "POST",
    path: "/api/w/{slug}/runs",
    summary: "Start a run",
    description: "Resolves the parameters against the published panel version (seed chosen, indicators and periods listed) and queues one piece per indicator.",
    access: member("runs.manage"),
    body: startRunSchema,
    answers: { 201: { description: "The run is queued; `params` are the stored, resolved parameters.", schema: runStartedResponseSchema } },
    errors: { 404: "No such panel version in this workspace.", 409: "The panel version or its boundaries are not published.", 422: "An indicator, period or covariate the panel version does not have, or weights the boundaries cannot carry.", 429: "Too many runs started in a short time." },
  },
  {
    area: "runs",
    method: "GET",
    path: "/api/w/{slug}/runs/options",
    summary: "What a run may analyse",
    access: member("runs.manage"),
    answers: { 200: { description: "Published panel versions with their indicators, periods and regions.", schema: runOptionsResponseSchema } },
  },
  {
    area: "runs",
    method: "GET",
    path: "/api/w/{slug}/runs/{runId}",
    summary: "One run and its pieces",
    access: member("results.view"),
    params: runId,
    answers: { 200: { description: "The run and the progress of each indicator.", schema: runDetailResponseSchema } },
  },
  {
    area: "runs",
    method: "POST",
    path: "/api/w/{slug}/runs/{runId}/cancel",
    summary: "Cancel a run",
    access: member("runs.manage"),
    params: runId,
    answers: { 200: { description: "The run is cancelled.", schema: runCancelledResponseSchema } },
    errors: { 409: "The run has already finished." },
  },
  {
    area: "runs",
    method: "POST",
    path: "/api/w/{slug}/runs/{runId}/rerun",
    summary: "Rerun with the same stored parameters",
    access: member("runs.manage"),
    params: runId,
    answers: { 201: { description: "A new run with the same parameters and seed.", schema: runRerunResponseSchema } },
    errors: { 409: "The run's panel version is no longer published.", 429: "Too many runs started in a short time." },
  },
  {
    area: "runs",
    method: "GET",
    path: "/api/w/{slug}/runs/{runId}/export/{kind}",
    summary: "Export a run's global results, local results or weights",
    description: "Streamed; a column is only ever added at the end. " + exportJsonDescription,
    access: member("runs.manage"),
    params: exportParamsSchema,
    query: exportQuerySchema,
    answers: { 200: { description: "The file, as an attachment.", contentType: ["text/csv; charset=utf-8", "application/json"] } },
    errors: { 409: "The run has not completed." },
  },
];

import { jsonError } from "@/lib/http/errors";
import { memberRoute } from "@/lib/http/route";
import { parseParams, parseSearch } from "@/lib/http/params";
import { EXPORT_CONTENT_TYPES, exportFileName, exportParamsSchema, exportQuerySchema, exportStream } from "@/lib/runs/exports";
import { getRun } from "@/lib/runs/queries";

export const dynamic = "force-dynamic";

// A run's global results, local results or weights (docs/exports.md), streamed as CSV or JSON.
// Export is an economist's capability (the roles table in docs/guarantees.md), as for the catalogue's CSV.
export const GET = memberRoute({ capability: "runs.manage" }, async ({ member, params, request }) => {
  const path = parseParams(params, exportParamsSchema);
  if (!path.ok) return path.response;
  const search = parseSearch(request, exportQuerySchema);
  if (!search.ok) return search.response;
  const run = await getRun(member.workspace.id, path.value.runId);
  if (!run) return jsonError(404, `There is no run ${path.value.runId} in this workspace.`);
  const { kind } = path.value;
  const { format } = search.value;
  const body = await exportStream(run, member.workspace.slug, kind, format);
  const name = exportFileName(member.workspace.slug, run.number, kind, format);
  return new Response(body, {
    headers: {
      "content-type": EXPORT_CONTENT_TYPES[format],
      "content-disposition": `attachment; filename="${name}"`,
      "x-content-type-options": "nosniff",
    },
  });
});

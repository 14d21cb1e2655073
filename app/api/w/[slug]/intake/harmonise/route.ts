import { memberRoute } from "@/lib/http/route";
import { harmoniseDefaults, harmonisePanel, harmoniseSchema } from "@/lib/reforms/service";
import { idText, parseSearch } from "@/lib/http/params";
import { z } from "zod";

const defaultsQuery = z.object({ panelVersionId: idText() });

// The indicators of a panel version with their default harmonisation methods (the harmonise form's start).
export const GET = memberRoute({ capability: "data.view-unpublished" }, async ({ member, request }) => {
  const query = parseSearch(request, defaultsQuery);
  if (!query.ok) return query.response;
  return Response.json(await harmoniseDefaults(member, query.value.panelVersionId));
});

// Harmonises a panel version through a crosswalk into a new panel version on the target boundaries; validation runs as a job.
export const POST = memberRoute({ capability: "data.curate", body: harmoniseSchema }, async ({ member, body }) =>
  Response.json(await harmonisePanel(member, body), { status: 202 }),
);

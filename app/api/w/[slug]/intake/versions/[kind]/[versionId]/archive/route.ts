import { memberRoute } from "@/lib/http/route";
import { parseParams } from "@/lib/http/params";
import { archiveVersion, versionParamsSchema } from "@/lib/intake/service";

// Archives a validated or published version (stewards and managers); a wrong state answers 409 with the reason.
export const POST = memberRoute({ capability: "data.curate" }, async ({ member, params }) => {
  const version = parseParams(params, versionParamsSchema);
  if (!version.ok) return version.response;
  return Response.json(await archiveVersion(member, version.value.kind, version.value.versionId));
});

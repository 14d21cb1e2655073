import { jsonError, memberRoute } from "@/lib/auth/route";
import { archiveVersion, idParam, versionKindSchema, withIntakeErrors } from "@/lib/intake/actions";

// Archives a validated or published version (stewards and managers); a wrong state answers 409 with the reason.
export const POST = memberRoute({ capability: "data.curate" }, async ({ member, params }) =>
  withIntakeErrors(async () => {
    const kind = versionKindSchema.safeParse(params.kind);
    const versionId = idParam(params.versionId);
    if (!kind.success || versionId === null) return jsonError(404, "There is no such version in this workspace.");
    return Response.json(await archiveVersion(member, kind.data, versionId));
  }),
);

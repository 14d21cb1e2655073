import { memberRoute } from "@/lib/http/route";
import { parseParams } from "@/lib/http/params";
import { tokenParamsSchema } from "@/lib/tokens/schemas";
import { revokeToken } from "@/lib/tokens/service";

// Revokes one of the caller's tokens, or, for a manager, anyone's in this workspace. Session-only.
export const DELETE = memberRoute({ capability: "results.view", sessionOnly: true }, async ({ member, params }) => {
  const parsed = parseParams(params, tokenParamsSchema);
  if (!parsed.ok) return parsed.response;
  await revokeToken(member, parsed.value.tokenId.toLowerCase());
  return new Response(null, { status: 204 });
});

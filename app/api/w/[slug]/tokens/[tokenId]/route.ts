import { NotFoundError } from "@/lib/http/errors";
import { memberRoute } from "@/lib/http/route";
import { tokenParamsSchema } from "@/lib/tokens/schemas";
import { revokeToken } from "@/lib/tokens/service";

// Revokes one of the caller's tokens, or, for a manager, anyone's in this workspace. Session-only.
// A token id that is not one (not a UUID) is a token that does not exist: the same 404.
export const DELETE = memberRoute({ capability: "results.view", sessionOnly: true }, async ({ member, params }) => {
  const parsed = tokenParamsSchema.safeParse(params);
  if (!parsed.success) throw new NotFoundError("There is no such token in this workspace.");
  await revokeToken(member, parsed.data.tokenId.toLowerCase());
  return new Response(null, { status: 204 });
});

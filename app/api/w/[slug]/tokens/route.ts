import { memberRoute } from "@/lib/http/route";
import { listOwnTokens } from "@/lib/tokens/queries";
import { createTokenSchema, type CreatedToken, type TokenList } from "@/lib/tokens/schemas";
import { createToken } from "@/lib/tokens/service";

// The caller's own API tokens in this workspace. Session-only: a token cannot list or mint tokens.
export const GET = memberRoute({ capability: "results.view", sessionOnly: true }, async ({ member }) => {
  return Response.json({ tokens: await listOwnTokens(member.workspace.id, member.user.id) } satisfies TokenList);
});

export const POST = memberRoute({ capability: "results.view", body: createTokenSchema, sessionOnly: true }, async ({ member, body }) => {
  return Response.json((await createToken(member, body)) satisfies CreatedToken, { status: 201 });
});

import { memberRoute } from "@/lib/http/route";
import { listWorkspaceTokens } from "@/lib/tokens/queries";
import type { TokenList } from "@/lib/tokens/schemas";

// Every member's API tokens in this workspace, for its managers (the Team screen's "API tokens" panel). Session-only.
export const GET = memberRoute({ capability: "team.manage", sessionOnly: true }, async ({ member }) => {
  return Response.json({ tokens: await listWorkspaceTokens(member.workspace.id) } satisfies TokenList);
});

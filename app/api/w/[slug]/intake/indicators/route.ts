import { memberRoute } from "@/lib/http/route";
import { indicatorMetadata, indicatorVisibilityFor } from "@/lib/intake/published-panel";

export const GET = memberRoute({ capability: "results.view" }, async ({ member }) => Response.json({ indicators: await indicatorMetadata(member.workspace.id, indicatorVisibilityFor(member.role)) }));

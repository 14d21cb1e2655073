import { can } from "@/lib/auth/roles";
import { memberRoute } from "@/lib/http/route";
import { intakeOverview } from "@/lib/intake/queries";

// Boundary sets, panels and their versions. Economists and subscribers get only published versions.
export const GET = memberRoute({ capability: "results.view" }, async ({ member }) => {
  const overview = await intakeOverview(member.workspace.id, can(member.role, "data.view-unpublished"));
  return Response.json({ ...overview, role: member.role, canCurate: can(member.role, "data.curate") });
});

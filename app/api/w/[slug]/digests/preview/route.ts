import { jsonError, memberRoute } from "@/lib/auth/route";
import { getOwnSubscription } from "@/lib/digests/queries";
import { buildDigest } from "@/lib/digests/service";

/** The digest the member's subscription would produce now (nothing is sent or recorded). */
export const GET = memberRoute({ capability: "digests.subscribe" }, async ({ member }) => {
  const subscription = await getOwnSubscription(member.workspace.id, member.user.id);
  if (!subscription) return jsonError(404, "You have no digest subscription in this workspace yet. Save one to see a preview.");
  const built = await buildDigest(subscription);
  if (!built) return jsonError(404, "There is no such workspace, or you are not a member of it.");
  return Response.json({
    subject: built.rendered.subject,
    html: built.rendered.html,
    text: built.rendered.text,
    empty: built.content.empty,
    runId: built.current?.id ?? null,
    previousRunId: built.previousRunId,
  });
});

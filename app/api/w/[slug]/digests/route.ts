import { memberRoute } from "@/lib/http/route";
import { deliveryHistory, getOwnSubscription, pickableIndicators } from "@/lib/digests/queries";
import { subscriptionInputSchema } from "@/lib/digests/schemas";
import { indicatorVisibilityFor } from "@/lib/intake/published-panel";
import { saveSubscription } from "@/lib/digests/service";

/** The signed-in member's own subscription, the indicators they can pick, and their delivery history. */
export const GET = memberRoute({ capability: "digests.subscribe" }, async ({ member }) => {
  const subscription = await getOwnSubscription(member.workspace.id, member.user.id);
  return Response.json({
    subscription,
    indicators: await pickableIndicators(member.workspace.id, indicatorVisibilityFor(member.role)),
    deliveries: subscription ? await deliveryHistory(subscription.id) : [],
    canSeeSubscribers: member.role === "manager",
  });
});

/** Creates or updates the member's own subscription (never anyone else's). */
export const PUT = memberRoute({ capability: "digests.subscribe", body: subscriptionInputSchema }, async ({ member, body }) => {
  await saveSubscription(member.workspace.id, member.user.id, body);
  return Response.json({ subscription: await getOwnSubscription(member.workspace.id, member.user.id) });
});

import { auditMember } from "@/lib/auth/audit";
import { jsonError, memberRoute } from "@/lib/auth/route";
import { db } from "@/lib/db";
import { enqueue } from "@/lib/jobs/enqueue";
import { getOwnSubscription } from "@/lib/digests/queries";
import { limitAction } from "@/lib/security/rate-limits";

/** Sends the member their own digest now, through the same job as scheduled ones (one delivery per request). */
export const POST = memberRoute({ capability: "digests.subscribe" }, async ({ member }) => {
  const subscription = await getOwnSubscription(member.workspace.id, member.user.id);
  if (!subscription || !subscription.active) return jsonError(409, "Subscribe first (and keep the subscription active) to receive a digest.");
  // Counted before anything is written or queued: a refused request leaves no event and no job.
  const limited = await limitAction("digest-send-now", member.user.id);
  if (limited) return limited;
  const stamp = new Date().toISOString();
  const idempotencyKey = `sub-${subscription.id}:manual-${stamp}`;
  // The job lives in pg-boss's own connection, so it cannot join this transaction:
  // the event is written first and committed only once the job is queued, so a
  // refused enqueue leaves no event.
  await db().transaction(async (transaction) => {
    await auditMember(
      member,
      { action: "digest.sent-now", target: `digest to ${member.user.email}`, detail: { subscriptionId: subscription.id, cadence: subscription.cadence, idempotencyKey } },
      transaction,
    );
    await enqueue("digest-send", { subscriptionId: subscription.id, idempotencyKey, runId: null, coverage: `requested ${stamp.slice(0, 16).replace("T", " ")} UTC` });
  });
  return Response.json({ idempotencyKey }, { status: 202 });
});

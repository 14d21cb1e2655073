import type { Transaction } from "sequelize";
import { auditMember } from "@/lib/security/audit";
import { jsonError } from "@/lib/http/errors";
import { memberRoute } from "@/lib/http/route";
import { db } from "@/lib/db";
import { enqueue } from "@/lib/jobs/enqueue";
import type { SendNowAnswer } from "@/lib/digests/answers";
import { getOwnSubscription } from "@/lib/digests/queries";
import { deliverDigestReport, ON_REQUEST_COVERAGE, prepareDigest, type DeliveryReport } from "@/lib/digests/service";
import type { DigestSendPayload } from "@/lib/jobs/payloads";
import { limitAction } from "@/lib/security/rate-limits";


function answerOf(report: DeliveryReport, idempotencyKey: string): SendNowAnswer {
  switch (report.outcome) {
    case "sent":
      return { status: "sent", sentence: `Sent to ${report.to}: “${report.subject}”.`, idempotencyKey };
    case "skipped":
      return { status: "skipped", sentence: `Nothing was sent: ${report.reason}`, idempotencyKey };
    case "duplicate":
      return { status: "duplicate", sentence: `This request was already handled (${report.status}).`, idempotencyKey };
  }
}

/**
 * Sends the member their own digest now and says what happens, never just
 * "queued". The digest is prepared as the preview prepares it: when it would
 * not be sent, the skip is recorded at once with its reason and the answer
 * (200, status "skipped") carries that sentence; when it goes out, it goes
 * through the same job as scheduled digests (202, status "queued", naming
 * the address and subject), and the delivery history shows it sent, or
 * failed and retried.
 */
export const POST = memberRoute({ capability: "digests.subscribe" }, async ({ member }) => {
  const subscription = await getOwnSubscription(member.workspace.id, member.user.id);
  if (!subscription || !subscription.active) return jsonError(409, "Subscribe first (and keep the subscription active) to receive a digest.");
  // Counted before anything is written or queued: a refused request leaves no event, no delivery and no job.
  const limited = await limitAction("digest-send-now", member.user.id);
  if (limited) return limited;
  const idempotencyKey = `sub-${subscription.id}:manual-${new Date().toISOString()}`;
  const payload: DigestSendPayload = { subscriptionId: subscription.id, idempotencyKey, runId: null, coverage: ON_REQUEST_COVERAGE };
  const audit = (outcome: string, transaction: Transaction) =>
    auditMember(
      member,
      { action: "digest.sent-now", target: `digest to ${member.user.email}`, detail: { subscriptionId: subscription.id, cadence: subscription.cadence, idempotencyKey, outcome } },
      transaction,
    );

  const { built, decision } = await prepareDigest(subscription, { coverage: ON_REQUEST_COVERAGE });
  if (decision.send && built) {
    // The job lives in pg-boss's own connection, so it cannot join this transaction:
    // the event is written first and committed only once the job is queued.
    await db().transaction(async (transaction) => {
      await audit("queued", transaction);
      await enqueue("digest-send", payload);
    });
    const answer: SendNowAnswer = {
      status: "queued",
      sentence: `On its way to ${decision.to}: “${built.rendered.subject}”. The history below shows when it is sent.`,
      idempotencyKey,
    };
    return Response.json(answer, { status: 202 });
  }

  // Not to be sent: the delivery records the skip and its reason now (the same code the job runs; no mail server is asked).
  let report: DeliveryReport;
  try {
    report = await deliverDigestReport(payload);
  } catch (error) {
    // Something changed in between and the send was tried and refused: leave it to the job's retries.
    const reason = error instanceof Error ? error.message.replace(/^digest \S+ for subscription \d+: /, "") : String(error);
    await db().transaction(async (transaction) => {
      await audit("failed", transaction);
      await enqueue("digest-send", payload);
    });
    const answer: SendNowAnswer = { status: "retrying", sentence: `The mail server did not accept the digest (${reason}). Tessera will try again; the history below shows the outcome.`, idempotencyKey };
    return Response.json(answer, { status: 202 });
  }
  await db().transaction((transaction) => audit(report.outcome, transaction));
  return Response.json(answerOf(report, idempotencyKey), { status: 200 });
});

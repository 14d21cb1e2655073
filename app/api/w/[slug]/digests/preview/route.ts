import { jsonError } from "@/lib/http/errors";
import { memberRoute } from "@/lib/http/route";
import type { DigestDecisionAnswer, DigestPreviewAnswer } from "@/lib/digests/answers";
import { getOwnSubscription } from "@/lib/digests/queries";
import { ON_REQUEST_COVERAGE, prepareDigest, type DigestDecision } from "@/lib/digests/service";

function decisionAnswer(decision: DigestDecision): DigestDecisionAnswer {
  return decision.send
    ? { send: true, to: decision.to, sentence: `Sending now would send this digest to ${decision.to}.` }
    : { send: false, reason: decision.reason, sentence: `Nothing would be sent now: ${decision.reason}` };
}

/**
 * What "send me this digest now" would do at this moment, prepared by the
 * same code as the send (nothing is sent or recorded): the rendered mail and
 * the decision — to whom, or the sentence saying why nothing would be sent.
 */
export const GET = memberRoute({ capability: "digests.subscribe" }, async ({ member }) => {
  const subscription = await getOwnSubscription(member.workspace.id, member.user.id);
  if (!subscription) return jsonError(404, "You have no digest subscription in this workspace yet. Save one to see a preview.");
  const { built, decision } = await prepareDigest(subscription, { coverage: ON_REQUEST_COVERAGE });
  const answer: DigestPreviewAnswer = built
    ? {
        subject: built.rendered.subject,
        html: built.rendered.html,
        text: built.rendered.text,
        empty: built.content.empty,
        runId: built.current?.id ?? null,
        previousRunId: built.previousRunId,
        baseline: built.content.baseline,
        decision: decisionAnswer(decision),
      }
    : // An unsubscribed member still learns what would happen (a non-member never gets here: memberRoute answers 404).
      { subject: null, html: null, text: null, empty: true, runId: null, previousRunId: null, baseline: null, decision: decisionAnswer(decision) };
  return Response.json(answer);
});

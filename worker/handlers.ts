import { sendMail } from "@/lib/mail/send";
import { sendInvitationEmail } from "@/lib/team/invitation-mail";
import { abandonPiece, runPiece } from "@/lib/runs/worker";
import { runIntakeValidation } from "@/lib/intake/jobs";
import { describeSweep } from "@/lib/intake/abandoned-uploads";
import { sweepAbandonedUploads } from "@/lib/intake/abandoned-uploads-sweep";
import { env } from "@/lib/config/env";
import { deliverDigest, scheduleDigestsForCadence, scheduleDigestsForRun } from "@/lib/digests/service";
import type { JobHandler, JobPayload, QueueName } from "@/lib/jobs/queues";

/**
 * One handler per queue of lib/jobs/queues.ts. The worker (worker/main.ts) parses
 * each payload with the queue's schema before calling its handler; a thrown
 * error fails the job and pg-boss retries it per the queue's settings.
 */
export const handlers: { [Q in QueueName]: JobHandler<Q> } = {
  "mail-test": async (payload, context) => {
    const messageId = await sendMail({ to: payload.to, subject: payload.subject, text: payload.text, headers: { "X-Tessera-Job": context.id }, workspaceId: null });
    context.log(`sent ${messageId} to ${payload.to}`);
  },
  "invitation-email": async (payload, context) => {
    const messageId = await sendInvitationEmail(payload, context.id);
    context.log(`sent invitation ${payload.invitationId} as ${messageId}`);
  },
  "run-piece": async (payload, context) => {
    const outcome = await runPiece(payload.runId, payload.indicator, context.log, context.worker);
    context.log(`run ${payload.runId} "${payload.indicator}": ${outcome}`);
  },
  "intake-validate": async (payload, context) => {
    await runIntakeValidation(payload, context.log);
  },
  "digest-run-completed": async (payload, context) => {
    const count = await scheduleDigestsForRun(payload.runId);
    context.log(`run ${payload.runId}: ${count} digest(s) enqueued`);
  },
  "digest-weekly": async (_payload, context) => {
    context.log(`weekly: ${await scheduleDigestsForCadence("weekly")} digest(s) enqueued`);
  },
  "digest-monthly": async (_payload, context) => {
    context.log(`monthly: ${await scheduleDigestsForCadence("monthly")} digest(s) enqueued`);
  },
  "digest-send": async (payload, context) => {
    const outcome = await deliverDigest(payload, { log: context.log });
    context.log(`digest ${payload.idempotencyKey}: ${outcome}`);
  },
  "uploads-sweep": async (_payload, context) => {
    const hours = env().UPLOAD_ABANDON_HOURS;
    const report = await sweepAbandonedUploads({ abandonAfterHours: hours, log: context.log });
    context.log(describeSweep(report, hours));
  },
};

/**
 * What to record when a job's last attempt died with its worker, so no
 * handler ran to the end to say so (lib/jobs/lease.ts hands such a job to
 * pg-boss, which marks it failed). Queues absent here need nothing recorded.
 */
export const abandonedHandlers: { [Q in QueueName]?: (payload: JobPayload<Q>, message: string) => Promise<void> } = {
  "run-piece": (payload, message) => abandonPiece(payload.runId, payload.indicator, message),
};

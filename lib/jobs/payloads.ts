import { z } from "zod";

// Payload schemas of the queues whose payloads the domains build and read.
// They live here, beside the queues that validate them, so lib/jobs imports
// no domain; the domains import their payload types from here.

/** Payload of the `invitation-email` job: everything the mail says, already resolved. */
export const invitationEmailPayloadSchema = z.object({
  invitationId: z.number().int().positive(),
  to: z.string().email(),
  workspaceName: z.string().min(1).max(200),
  roleLabel: z.string().min(1).max(40),
  inviterName: z.string().min(1).max(200),
  // The link carries the only copy of the token outside the e-mail itself;
  // pg-boss deletes completed jobs after its retention period.
  acceptUrl: z.string().url(),
  expiresAt: z.string().datetime(),
});

export type InvitationEmailPayload = z.infer<typeof invitationEmailPayloadSchema>;

/** Payload of a digest-send job. */
export const digestSendPayloadSchema = z.object({
  subscriptionId: z.number().int().positive(),
  /** Unique per subscription and digest period; the delivery row's key. */
  idempotencyKey: z.string().min(1).max(200),
  /** The completed run that triggered an after-run digest (null: weekly/monthly, use the latest). */
  runId: z.number().int().positive().nullable().default(null),
  coverage: z.string().min(1).max(120),
});
export type DigestSendPayload = z.output<typeof digestSendPayloadSchema>;

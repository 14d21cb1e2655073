import { z } from "zod";

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

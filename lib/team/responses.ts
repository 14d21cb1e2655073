import { z } from "zod";
import { roleSchema } from "./schemas";

// Answers of the team routes, as zod schemas for the API reference (lib/api-docs).

const when = z.string().meta({ description: "ISO 8601 time (UTC)." });

export const memberRowSchema = z
  .object({ userId: z.number().int(), name: z.string(), email: z.string(), role: roleSchema, joinedAt: when })
  .meta({ id: "Member" });
export const membersResponseSchema = z.object({ members: z.array(memberRowSchema) });

export const invitationRowSchema = z
  .object({ id: z.number().int(), email: z.string(), role: roleSchema, expiresAt: when, createdAt: when, invitedBy: z.string().nullable() })
  .meta({ id: "Invitation" });
export const invitationsResponseSchema = z.object({ invitations: z.array(invitationRowSchema) });
export const invitationCreatedResponseSchema = z.object({ invitation: invitationRowSchema });

export const auditResponseSchema = z.object({
  events: z.array(
    z.object({ id: z.string(), at: when, action: z.string(), actor: z.string().nullable(), target: z.string().nullable(), detail: z.record(z.string(), z.unknown()) }),
  ).meta({ description: "The newest 100 events of the workspace, and sign-ins of its members." }),
});

export const invitationAcceptedResponseSchema = z.object({
  workspaceSlug: z.string(),
  email: z.string(),
  createdAccount: z.boolean().meta({ description: "True when accepting created a new account (name and password were given)." }),
});

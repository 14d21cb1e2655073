import { z } from "zod";
import { ROLES } from "@/lib/auth/roles";
import { passwordSchema } from "@/lib/auth/schemas";
import { text } from "@/lib/http/params";

// Shared by the team's route handlers and the forms that call them, so the
// browser and the server reject the same input with the same sentence.

const email = z
  .string({ error: "Enter an e-mail address." })
  .trim()
  .min(1, "Enter an e-mail address.")
  .max(320, "That e-mail address is too long.")
  .email("Enter a valid e-mail address, like name@example.org.")
  .transform((v) => v.toLowerCase());

export const roleSchema = z.enum(ROLES, { error: "Choose one of: manager, steward, economist, subscriber." });

export const inviteSchema = z.object({ email, role: roleSchema });
export type InviteInput = z.infer<typeof inviteSchema>;

export const changeRoleSchema = z.object({ role: roleSchema });
export type ChangeRoleInput = z.infer<typeof changeRoleSchema>;

export const acceptInvitationSchema = z.object({
  token: z.string().min(1, "The invitation link is incomplete.").max(200),
  // Only for someone without an account yet; an existing user accepts while signed in.
  name: text({ min: 1, max: 200, empty: "Enter your name.", tooLong: "Use at most 200 characters for your name." }).optional(),
  password: passwordSchema.optional(),
});
export type AcceptInvitationInput = z.infer<typeof acceptInvitationSchema>;

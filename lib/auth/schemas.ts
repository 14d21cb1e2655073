import { z } from "zod";
import { idText, SLUG_PATTERN, text } from "@/lib/http/params";
import { ROLES } from "./roles";

// Shared by route handlers and the forms that call them, so the browser and
// the server reject the same input with the same sentence.

const email = z
  .string({ error: "Enter an e-mail address." })
  .trim()
  .min(1, "Enter an e-mail address.")
  .max(320, "That e-mail address is too long.")
  .email("Enter a valid e-mail address, like name@example.org.")
  .transform((v) => v.toLowerCase());

export const roleSchema = z.enum(ROLES, { error: "Choose one of: manager, steward, economist, subscriber." });

export const signInSchema = z.object({
  email: z.string().trim().min(1, "Enter your e-mail address.").max(320),
  password: z.string().min(1, "Enter your password.").max(200),
});

export const passwordSchema = z
  .string({ error: "Choose a password." })
  .min(10, "Use at least 10 characters for your password.")
  .max(200, "Use at most 200 characters for your password.");

export const changePasswordSchema = z
  .object({
    currentPassword: z.string({ error: "Enter your current password." }).min(1, "Enter your current password.").max(200, "That is not your current password."),
    newPassword: passwordSchema,
  })
  .refine((v) => v.newPassword !== v.currentPassword, {
    path: ["newPassword"],
    message: "Choose a new password that differs from the current one.",
  });
export type ChangePasswordInput = z.infer<typeof changePasswordSchema>;

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

export const slugSchema = z.string().regex(SLUG_PATTERN, "Not a workspace address.");
/** A row id in a URL segment; the one parser of lib/http/params.ts. */
export const idParamSchema = idText();

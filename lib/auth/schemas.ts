import { z } from "zod";
import { SLUG_PATTERN } from "@/lib/http/params";

// Shared by route handlers and the forms that call them, so the browser and
// the server reject the same input with the same sentence. The team's
// schemas (invitations, roles) are lib/team/schemas.ts.

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

export const slugSchema = z.string().regex(SLUG_PATTERN, "Not a workspace address.");

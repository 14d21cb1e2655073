import { z } from "zod";

// Shared by POST /api/workspaces and the form that calls it, so the browser
// and the server refuse the same input with the same sentence.

/**
 * Addresses that read as part of the app rather than as a team's workspace,
 * refused so a workspace can never be mistaken for a screen or an API.
 */
export const RESERVED_SLUGS: ReadonlySet<string> = new Set([
  "admin", "api", "app", "auth", "help", "invite", "invitations", "login", "logout", "new", "outbox", "public",
  "settings", "sign-in", "sign-out", "signin", "signout", "static", "support", "system", "tessera", "w", "workspace", "workspaces", "www",
]);

// C0/C1 controls (\p{Cc}), and the bidirectional overrides and isolates that
// make a name display differently from what it is (CVE-2021-42574, "Trojan Source").
const CONTROL_OR_BIDI = /[\p{Cc}\u200e\u200f\u202a-\u202e\u2066-\u2069\u2028\u2029]/u;

export const workspaceNameSchema = z
  .string({ error: "Enter a name for the workspace." })
  .trim()
  .min(1, "Enter a name for the workspace.")
  .max(120, "Use at most 120 characters for the name.")
  .refine((v) => !CONTROL_OR_BIDI.test(v), "Use letters, digits, spaces and punctuation only: the name contains a control character.");

export const workspaceSlugSchema = z
  .string({ error: "Choose an address for the workspace." })
  .trim()
  .min(3, "Use at least 3 characters for the address.")
  .max(40, "Use at most 40 characters for the address.")
  .regex(/^[a-z0-9](?:[a-z0-9-]*[a-z0-9])?$/, "Use lowercase letters, digits and hyphens, starting and ending with a letter or digit.")
  .refine((v) => !RESERVED_SLUGS.has(v), "That address is reserved; choose another.");

export const createWorkspaceSchema = z.object({ name: workspaceNameSchema, slug: workspaceSlugSchema });
export type CreateWorkspaceInput = z.infer<typeof createWorkspaceSchema>;

/** A suggested address for a name: "Regio Noord 2026" → "regio-noord-2026" (the user may change it). */
export function suggestSlug(name: string): string {
  return name
    .normalize("NFKD")
    .replace(/[\u0300-\u036f]/g, "")
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "")
    .slice(0, 40)
    .replace(/-+$/, "");
}

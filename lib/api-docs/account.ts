import { z } from "zod";
import { passwordChangedResponseSchema } from "@/lib/auth/responses";
import { changePasswordSchema } from "@/lib/auth/schemas";
import { invitationAcceptedResponseSchema } from "@/lib/team/responses";
import { acceptInvitationSchema } from "@/lib/team/schemas";
import { workspaceCreatedResponseSchema } from "@/lib/workspaces/responses";
import { createWorkspaceSchema } from "@/lib/workspaces/schemas";
import { publicAccess, signedIn, type ApiRoute } from "./define";

// The unsubscribe link's token is checked by its signature (lib/digests/token.ts), not by a schema of its own.
const unsubscribeToken = z.object({ token: z.string().meta({ description: "The signed token from the digest's unsubscribe link." }) });
const html = "text/html; charset=utf-8";

export const ACCOUNT_ROUTES: ApiRoute[] = [
  {
    area: "account",
    method: "POST",
    path: "/api/account/password",
    summary: "Change your password",
    description: "Ends every session issued before, this one included.",
    access: signedIn(),
    body: changePasswordSchema,
    answers: { 200: { description: "Changed.", schema: passwordChangedResponseSchema } },
    errors: { 400: "A field failed its schema, or `currentPassword` is wrong.", 429: "Too many wrong passwords for this address or network." },
  },
  {
    area: "account",
    method: "POST",
    path: "/api/workspaces",
    summary: "Create a workspace",
    description: "The caller becomes its first manager.",
    access: signedIn(),
    body: createWorkspaceSchema,
    answers: { 201: { description: "The new workspace.", schema: workspaceCreatedResponseSchema } },
    errors: { 400: "The name or address failed its schema, or the address is reserved.", 409: "The address is already taken." },
  },
  {
    area: "account",
    method: "POST",
    path: "/api/invitations/accept",
    summary: "Accept an invitation",
    description: "An existing user accepts while signed in with the invited address; someone new gives a name and a password and gets an account.",
    access: publicAccess("the invitation token is the credential, with the session of an existing account."),
    body: acceptInvitationSchema,
    answers: { 200: { description: "Accepted: the workspace to open.", schema: invitationAcceptedResponseSchema } },
    errors: {
      400: "A field failed its schema, or a new account needs a name and a password.",
      401: "An account for the invited address exists: sign in with it first.",
      403: "Signed in with another account than the invited one.",
      409: "Already a member of this workspace.",
      410: "The invitation is unknown, expired, revoked or already used.",
    },
  },
  {
    area: "account",
    method: "GET",
    path: "/api/digests/unsubscribe",
    summary: "Unsubscribe page (one-click link in digests)",
    description: "Shows a confirmation page; GET never changes anything, because mail scanners follow links.",
    access: publicAccess("the signed token in the link is the credential."),
    query: unsubscribeToken,
    answers: { 200: { description: "A page asking to confirm.", contentType: html } },
    errors: { 400: "A page saying the link cannot unsubscribe (bad, forged or expired token)." },
    errorContentType: html,
  },
  {
    area: "account",
    method: "POST",
    path: "/api/digests/unsubscribe",
    summary: "Unsubscribe (RFC 8058 one-click)",
    description: "From the mail client's List-Unsubscribe=One-Click request or the page's button. The token may come in the query or the form.",
    access: publicAccess("the signed token is the credential."),
    query: unsubscribeToken.partial(),
    body: unsubscribeToken.partial(),
    bodyContentType: "application/x-www-form-urlencoded",
    answers: { 200: { description: "A page saying you are unsubscribed.", contentType: html } },
    errors: { 400: "A page saying the token is bad, forged or expired.", 404: "A page saying the subscription no longer exists." },
    errorContentType: html,
  },
];

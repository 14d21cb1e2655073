import { HttpError } from "@/lib/http/errors";

// The guard's refusals, answered through errorResponse (lib/http/route.ts)
// and turned into redirects or error screens on pages (lib/auth/page.ts).

export type AccessStatus = 401 | 403 | 404;

export class AccessError extends HttpError {
  constructor(
    override readonly status: AccessStatus,
    message: string,
  ) {
    super(status, message);
    this.name = "AccessError";
  }
}

export const ACCESS_MESSAGES: Record<AccessStatus, string> = {
  401: "Sign in to continue.",
  // Deliberately the same whether the workspace is missing or you are not in it.
  404: "There is no such workspace, or you are not a member of it.",
  403: "Your role in this workspace does not allow this. Ask a manager if you need it.",
};

/** Refusals of a request that carries an API token (`Authorization: Bearer …`), answered like AccessError. */
export const TOKEN_MESSAGES = {
  invalid: "This API token is not valid: it is unknown, revoked or expired. Create a new one on your Account page.",
  sessionOnly: "API tokens cannot create, list or revoke tokens. Sign in to Tessera to manage your tokens.",
} as const;

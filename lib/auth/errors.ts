// Errors that carry their HTTP status, thrown by the guard and by team
// operations and turned into responses in one place (lib/auth/route.ts).

export type AccessStatus = 401 | 403 | 404;

export class AccessError extends Error {
  constructor(
    readonly status: AccessStatus,
    message: string,
  ) {
    super(message);
    this.name = "AccessError";
  }
}

export const ACCESS_MESSAGES: Record<AccessStatus, string> = {
  401: "Sign in to continue.",
  // Deliberately the same whether the workspace is missing or you are not in it.
  404: "There is no such workspace, or you are not a member of it.",
  403: "Your role in this workspace does not allow this. Ask a manager if you need it.",
};

/** A request that is understood and allowed but conflicts with the current state (HTTP 409). */
export class ConflictError extends Error {
  readonly status = 409;
  constructor(message: string) {
    super(message);
    this.name = "ConflictError";
  }
}

/** Something named in the URL that does not exist inside a workspace you can see (HTTP 404). */
export class NotFoundError extends Error {
  readonly status = 404;
  constructor(message: string) {
    super(message);
    this.name = "NotFoundError";
  }
}

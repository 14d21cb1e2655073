import { AccessError, ACCESS_MESSAGES } from "@/lib/auth/errors";
import { AccountError } from "@/lib/auth/account";
import { ConflictError, HttpError, InputError, NotFoundError } from "@/lib/http/errors";
import { errorResponse } from "@/lib/http/route";
import { StorageQuotaError } from "@/lib/intake/storage-quota";
import { IntakeInputError } from "@/lib/intake/service";
import { RunInputError } from "@/lib/runs/service";
import { StorageUnavailableError } from "@/lib/storage/errors";
import { InvitationError } from "@/lib/team/invitations";

// errorResponse (lib/http/route.ts) is the one map from errors to answers:
// each error class keeps the status and body the API has always given.

async function answer(error: unknown): Promise<{ status: number; body: unknown }> {
  const response = errorResponse(error);
  return { status: response.status, body: await response.json() };
}

describe("errorResponse", () => {
  beforeEach(() => {
    jest.spyOn(console, "error").mockImplementation(() => {});
    jest.spyOn(console, "warn").mockImplementation(() => {});
  });
  afterEach(() => jest.restoreAllMocks());

  it("answers the guard's refusals with their status and sentence only", async () => {
    for (const status of [401, 403, 404] as const) {
      expect(await answer(new AccessError(status, ACCESS_MESSAGES[status]))).toEqual({ status, body: { error: ACCESS_MESSAGES[status] } });
    }
  });

  it("answers not-found and conflict with the message only", async () => {
    expect(await answer(new NotFoundError("There is no run 9 in this workspace."))).toEqual({ status: 404, body: { error: "There is no run 9 in this workspace." } });
    expect(await answer(new ConflictError("Already published."))).toEqual({ status: 409, body: { error: "Already published." } });
  });

  it("names the field of input errors: 400 for intake, 422 for runs", async () => {
    expect(await answer(new IntakeInputError("code: too long", "code"))).toEqual({ status: 400, body: { error: "code: too long", field: "code" } });
    expect(await answer(new IntakeInputError("no field"))).toEqual({ status: 400, body: { error: "no field", field: null } });
    expect(await answer(new RunInputError("indicator: unknown", "indicator"))).toEqual({ status: 422, body: { error: "indicator: unknown", field: "indicator" } });
    expect(await answer(new InputError("rule: k too large", "rule", 422))).toEqual({ status: 422, body: { error: "rule: k too large", field: "rule" } });
  });

  it("keeps the account, invitation and quota answers", async () => {
    expect(await answer(new AccountError(429, "Too many wrong passwords."))).toEqual({ status: 429, body: { error: "Too many wrong passwords.", field: null } });
    expect(await answer(new AccountError(400, "currentPassword: wrong", "currentPassword"))).toEqual({ status: 400, body: { error: "currentPassword: wrong", field: "currentPassword" } });
    expect(await answer(new InvitationError(410, "expired"))).toEqual({ status: 410, body: { error: "expired", field: null } });
    expect(await answer(new StorageQuotaError("over quota", 10, 20))).toEqual({
      status: 413,
      body: { error: "over quota", field: "size", usedBytes: 10, quotaBytes: 20 },
    });
  });

  it("answers an outage with 503 and retryable, anything else with a 500 that says nothing more", async () => {
    const outage = await answer(new StorageUnavailableError("The file store is not answering.", "GET bucket/key"));
    expect(outage).toEqual({ status: 503, body: { error: "The file store is not answering.", retryable: true } });
    const other = await answer(new Error("secret detail"));
    expect(other.status).toBe(500);
    expect(JSON.stringify(other.body)).not.toContain("secret detail");
    expect(await answer(new HttpError(418, "teapot", { hint: "x" }))).toEqual({ status: 418, body: { error: "teapot", hint: "x" } });
  });
});

import { QueryTypes } from "sequelize";
import { ACCESS_MESSAGES, TOKEN_MESSAGES } from "@/lib/auth/errors";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { models } from "@/lib/models";
import { RATE_LIMITS } from "@/lib/security/rate-limits";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import * as runsRoute from "@/app/api/w/[slug]/runs/route";
import * as tokensRoute from "@/app/api/w/[slug]/tokens/route";
import * as tokenRoute from "@/app/api/w/[slug]/tokens/[tokenId]/route";
import * as teamTokensRoute from "@/app/api/w/[slug]/team-tokens/route";
import * as memberRoute from "@/app/api/w/[slug]/members/[userId]/route";
import { makeWorkspace } from "./fixtures";

// Personal API tokens end to end through the real route handlers and the real
// database: made on a session, used as `Authorization: Bearer`, capped by the
// owner's current role, bound to one workspace, refused when revoked or
// expired, never able to manage tokens, audited, and rate-limited on failure.
// Only "who is signed in" is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(60_000);

type User = { id: number; email: string; name: string };
type Handler = (request: Request, context: { params: Promise<Record<string, string>> }) => Promise<Response>;

let a: Awaited<ReturnType<typeof makeWorkspace>>;
let b: Awaited<ReturnType<typeof makeWorkspace>>;
let addressCounter = 0;
/** A client address of its own per test, so failure counts of one test never reach another. */
const freshAddress = () => `198.51.100.${++addressCounter}`;

beforeAll(async () => {
  await requireTestServices();
  a = await makeWorkspace({ manager: "manager", steward: "steward", economist: "economist", subscriber: "subscriber" });
  b = await makeWorkspace({ bManager: "manager" });
});
afterAll(closeConnections);

function signInAs(user: User | null): void {
  sessionMock.mockResolvedValue(user ? ({ id: user.id, email: user.email, name: user.name } satisfies SessionUser) : null);
}

function call(handler: unknown, options: { slug: string; method?: string; token?: string; address?: string; body?: unknown; params?: Record<string, string> }): Promise<Response> {
  const headers: Record<string, string> = { "x-forwarded-for": options.address ?? "203.0.113.7" };
  if (options.token !== undefined) headers.authorization = `Bearer ${options.token}`;
  if (options.body !== undefined) headers["content-type"] = "application/json";
  const request = new Request(`http://tessera.test/api/w/${options.slug}/x`, {
    method: options.method ?? "GET",
    headers,
    body: options.body === undefined ? undefined : JSON.stringify(options.body),
  });
  return (handler as Handler)(request, { params: Promise.resolve({ slug: options.slug, ...(options.params ?? {}) }) });
}

async function createTokenAs(user: User, slug: string, role: string, name = "test script"): Promise<{ token: string; id: string }> {
  signInAs(user);
  const response = await call(tokensRoute.POST, { slug, method: "POST", body: { name, role, expiresInDays: 30 } });
  const body = (await response.json()) as { token: string; apiToken: { id: string } };
  if (response.status !== 201) throw new Error(`creating a token answered ${response.status}: ${JSON.stringify(body)}`);
  signInAs(null);
  return { token: body.token, id: body.apiToken.id };
}

async function auditCount(action: string, tokenId: string): Promise<number> {
  const rows = await db().query<{ n: number }>("SELECT count(*)::int AS n FROM audit_events WHERE action = $1 AND detail->>'tokenId' = $2", {
    bind: [action, tokenId],
    type: QueryTypes.SELECT,
  });
  return rows[0].n;
}

const aSlug = () => a.workspace.slug;
const startRunAs = (token: string, address?: string) => call(runsRoute.POST, { slug: aSlug(), method: "POST", token, address, body: {} });

describe("creating a token", () => {
  it("answers the token once, stores only its hash, and audits the creation", async () => {
    const made = await createTokenAs(a.users.economist, aSlug(), "economist", "nightly R");
    expect(made.token).toMatch(/^tsr_[0-9a-f]{32}_[A-Za-z0-9_-]{43}$/);
    const [row] = await db().query<Record<string, unknown>>("SELECT * FROM api_tokens WHERE id = $1", { bind: [made.id], type: QueryTypes.SELECT });
    expect(row.role).toBe("economist");
    expect(JSON.stringify(row)).not.toContain(made.token.split("_").at(-1));
    expect(await auditCount("api-token.created", made.id)).toBe(1);
    signInAs(a.users.economist);
    const listed = (await (await call(tokensRoute.GET, { slug: aSlug() })).json()) as { tokens: { id: string; name: string }[] };
    expect(listed.tokens.map((t) => t.id)).toContain(made.id);
    expect(JSON.stringify(listed)).not.toContain(made.token);
  });

  it("refuses a role above the owner's own in that workspace", async () => {
    signInAs(a.users.economist);
    const response = await call(tokensRoute.POST, { slug: aSlug(), method: "POST", body: { name: "too much", role: "steward", expiresInDays: 7 } });
    expect(response.status).toBe(403);
    expect(((await response.json()) as { field: string }).field).toBe("role");
  });

  it("refuses an expiry that is not offered", async () => {
    signInAs(a.users.economist);
    const response = await call(tokensRoute.POST, { slug: aSlug(), method: "POST", body: { name: "forever", role: "economist", expiresInDays: 10_000 } });
    expect(response.status).toBe(400);
    expect(((await response.json()) as { field: string }).field).toBe("expiresInDays");
  });
});

describe("using a token", () => {
  it("reads as its owner and records the last use and address; a new address is audited once", async () => {
    const made = await createTokenAs(a.users.subscriber, aSlug(), "subscriber");
    const address = freshAddress();
    expect((await call(runsRoute.GET, { slug: aSlug(), token: made.token, address })).status).toBe(200);
    expect((await call(runsRoute.GET, { slug: aSlug(), token: made.token, address })).status).toBe(200);
    const row = await models().ApiToken.findByPk(made.id);
    expect(row?.lastAddress).toBe(address);
    expect(row?.lastUsedAt).toBeInstanceOf(Date);
    expect(await auditCount("api-token.used-from-new-address", made.id)).toBe(1);
    expect((await call(runsRoute.GET, { slug: aSlug(), token: made.token, address: freshAddress() })).status).toBe(200);
    expect(await auditCount("api-token.used-from-new-address", made.id)).toBe(2);
  });

  it("cannot write with a subscriber's token (403), while an economist's token passes the guard", async () => {
    const viewer = await createTokenAs(a.users.subscriber, aSlug(), "subscriber");
    const refused = await startRunAs(viewer.token);
    expect(refused.status).toBe(403);
    expect(await refused.json()).toEqual({ error: ACCESS_MESSAGES[403] });
    const economist = await createTokenAs(a.users.economist, aSlug(), "economist");
    // Past the guard: the empty body is the only problem.
    expect((await startRunAs(economist.token)).status).toBe(400);
  });

  it("holds only the token's role even when the owner's is higher", async () => {
    const small = await createTokenAs(a.users.manager, aSlug(), "subscriber");
    expect((await startRunAs(small.token)).status).toBe(403);
    expect((await call(teamTokensRoute.GET, { slug: aSlug(), token: small.token })).status).toBe(403);
  });

  it("is capped by the owner's current role: demoted, the token is demoted; removed, the workspace is gone for it", async () => {
    const owner = (await makeWorkspace({ boss: "manager" })).users.boss;
    await models().Membership.create({ workspaceId: a.workspace.id, userId: owner.id, role: "steward" });
    const made = await createTokenAs(owner, aSlug(), "steward");
    expect((await startRunAs(made.token)).status).toBe(400);
    await models().Membership.update({ role: "subscriber" }, { where: { workspaceId: a.workspace.id, userId: owner.id } });
    expect((await startRunAs(made.token)).status).toBe(403);
    expect((await call(runsRoute.GET, { slug: aSlug(), token: made.token })).status).toBe(200);
    await models().Membership.destroy({ where: { workspaceId: a.workspace.id, userId: owner.id } });
    const gone = await call(runsRoute.GET, { slug: aSlug(), token: made.token });
    expect(gone.status).toBe(404);
    expect(await gone.json()).toEqual({ error: ACCESS_MESSAGES[404] });
  });

  it("ends when a manager removes its owner, and stays ended if they join again", async () => {
    const owner = (await makeWorkspace({ leaver: "manager" })).users.leaver;
    await models().Membership.create({ workspaceId: a.workspace.id, userId: owner.id, role: "economist" });
    const made = await createTokenAs(owner, aSlug(), "economist");
    expect((await call(runsRoute.GET, { slug: aSlug(), token: made.token })).status).toBe(200);
    signInAs(a.users.manager);
    expect((await call(memberRoute.DELETE, { slug: aSlug(), method: "DELETE", params: { userId: String(owner.id) } })).status).toBe(200);
    signInAs(null);
    expect((await models().ApiToken.findByPk(made.id))?.revokedAt).toBeInstanceOf(Date);
    await models().Membership.create({ workspaceId: a.workspace.id, userId: owner.id, role: "economist" });
    expect((await call(runsRoute.GET, { slug: aSlug(), token: made.token })).status).toBe(401);
  });

  it("is bound to its workspace: on another workspace it gets exactly the answer for one that does not exist", async () => {
    const made = await createTokenAs(a.users.manager, aSlug(), "manager");
    const other = await call(runsRoute.GET, { slug: b.workspace.slug, token: made.token });
    const nowhere = await call(runsRoute.GET, { slug: `no-such-workspace-${Date.now().toString(36)}`, token: made.token });
    expect(other.status).toBe(404);
    expect(nowhere.status).toBe(404);
    const otherBody = await other.text();
    expect(otherBody).toBe(await nowhere.text());
    expect(otherBody).not.toContain(b.workspace.name);
    // Even B's own manager's token for B cannot reach A.
    const bToken = await createTokenAs(b.users.bManager, b.workspace.slug, "manager");
    expect((await call(runsRoute.GET, { slug: aSlug(), token: bToken.token })).status).toBe(404);
  });

  it("refuses a revoked, an expired, a wrong-secret and a malformed token alike (401)", async () => {
    const revoked = await createTokenAs(a.users.economist, aSlug(), "economist");
    signInAs(a.users.economist);
    expect((await call(tokenRoute.DELETE, { slug: aSlug(), method: "DELETE", params: { tokenId: revoked.id } })).status).toBe(204);
    signInAs(null);
    const expired = await createTokenAs(a.users.economist, aSlug(), "economist");
    await models().ApiToken.update({ expiresAt: new Date(Date.now() - 1000) }, { where: { id: expired.id } });
    const good = await createTokenAs(a.users.economist, aSlug(), "economist");
    const wrongSecret = `${good.token.slice(0, -4)}${good.token.endsWith("AAAA") ? "BBBB" : "AAAA"}`;
    const address = freshAddress();
    for (const token of [revoked.token, expired.token, wrongSecret, "tsr_nonsense", ""]) {
      const response = await call(runsRoute.GET, { slug: aSlug(), token, address });
      expect([token, response.status]).toEqual([token, 401]);
      expect(await response.json()).toEqual({ error: TOKEN_MESSAGES.invalid });
    }
    expect((await call(runsRoute.GET, { slug: aSlug(), token: good.token, address })).status).toBe(200);
  });
});

describe("token management is session-only", () => {
  it("a token cannot create, list or revoke tokens, not even alongside a session", async () => {
    const made = await createTokenAs(a.users.manager, aSlug(), "manager");
    const before = await models().ApiToken.count();
    for (const signedIn of [null, a.users.manager]) {
      signInAs(signedIn);
      const create = await call(tokensRoute.POST, { slug: aSlug(), method: "POST", token: made.token, body: { name: "minted by a token", role: "manager", expiresInDays: 7 } });
      expect(create.status).toBe(403);
      expect(await create.json()).toEqual({ error: TOKEN_MESSAGES.sessionOnly });
      expect((await call(tokensRoute.GET, { slug: aSlug(), token: made.token })).status).toBe(403);
      expect((await call(teamTokensRoute.GET, { slug: aSlug(), token: made.token })).status).toBe(403);
      expect((await call(tokenRoute.DELETE, { slug: aSlug(), method: "DELETE", token: made.token, params: { tokenId: made.id } })).status).toBe(403);
      // The same answer for another workspace's slug: nothing is looked up.
      expect((await call(tokensRoute.GET, { slug: b.workspace.slug, token: made.token })).status).toBe(403);
    }
    expect(await models().ApiToken.count()).toBe(before);
    expect((await models().ApiToken.findByPk(made.id))?.revokedAt).toBeNull();
  });
});

describe("revoking", () => {
  it("a manager lists and revokes any member's token (audited); another member cannot even see it", async () => {
    const made = await createTokenAs(a.users.economist, aSlug(), "economist", "economist's script");
    signInAs(a.users.steward);
    const refused = await call(tokenRoute.DELETE, { slug: aSlug(), method: "DELETE", params: { tokenId: made.id } });
    expect(refused.status).toBe(404);
    signInAs(a.users.manager);
    const listed = (await (await call(teamTokensRoute.GET, { slug: aSlug() })).json()) as { tokens: { id: string; owner: { id: number } }[] };
    expect(listed.tokens.find((t) => t.id === made.id)?.owner.id).toBe(a.users.economist.id);
    expect((await call(tokenRoute.DELETE, { slug: aSlug(), method: "DELETE", params: { tokenId: made.id } })).status).toBe(204);
    expect(await auditCount("api-token.revoked", made.id)).toBe(1);
    signInAs(null);
    expect((await call(runsRoute.GET, { slug: aSlug(), token: made.token })).status).toBe(401);
  });

  it("a manager of another workspace cannot revoke A's token", async () => {
    const made = await createTokenAs(a.users.economist, aSlug(), "economist");
    signInAs(b.users.bManager);
    expect((await call(tokenRoute.DELETE, { slug: b.workspace.slug, method: "DELETE", params: { tokenId: made.id } })).status).toBe(404);
    expect((await models().ApiToken.findByPk(made.id))?.revokedAt).toBeNull();
  });
});

describe("failed token authentication is rate-limited per client address", () => {
  it(`refuses an address after ${RATE_LIMITS["api-token-failure"].points} bad tokens, even with a good one, with Retry-After`, async () => {
    const good = await createTokenAs(a.users.economist, aSlug(), "economist");
    const address = freshAddress();
    for (let i = 0; i < RATE_LIMITS["api-token-failure"].points; i++) {
      expect((await call(runsRoute.GET, { slug: aSlug(), token: `tsr_bad${i}`, address })).status).toBe(401);
    }
    const limited = await call(runsRoute.GET, { slug: aSlug(), token: good.token, address });
    expect(limited.status).toBe(429);
    expect(Number(limited.headers.get("retry-after"))).toBeGreaterThan(0);
    expect(((await limited.json()) as { error: string }).error).toMatch(/invalid API token/);
    expect((await call(runsRoute.GET, { slug: aSlug(), token: good.token, address: freshAddress() })).status).toBe(200);
  });
});

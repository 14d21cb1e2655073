import { randomBytes } from "node:crypto";
import { NextRequest } from "next/server";
import { QueryTypes } from "sequelize";
import { verifySignIn } from "@/lib/auth/credentials";
import { db } from "@/lib/db";
import { signUnsubscribeToken } from "@/lib/digests/token";
import { makeUser, PASSWORD } from "@/tests/integration/auth/fixtures";
import { callInRequestScope, cookieHeader, setCookies } from "./fixtures-next";
import { extraMember, pendingInvitation, subscriptionFor, type World } from "./fixtures-world";
import type { Method } from "./route-matrix";

// Rows of the access matrix for the routes that belong to no workspace. Each
// has its own rule (a token is the credential, or next-auth's own protocol)
// and is checked case by case; none may ever answer 5xx to bad input.

type SessionLike = { id: number; email: string; name: string };
export type Handler = (request: Request, context: { params: Promise<Record<string, string | string[]>> }) => Promise<Response>;

export interface PublicCase {
  name: string;
  status: number;
  /** The case showing that a body this handler reads itself is checked against a schema. */
  invalidBody?: boolean;
  run: (t: { handler: Handler; world: World; signInAs: (user: SessionLike | null) => void }) => Promise<Response>;
  check?: (response: Response, world: World) => Promise<void>;
}

export interface PublicRow {
  kind: "public";
  route: string;
  method: Method;
  /** The access rule of this route, in words. */
  rule: string;
  /** Why the handler reads the request body itself instead of through memberRoute, and which schema applies. */
  readsBodyItself?: string;
  cases: PublicCase[];
}

const BASE = "http://tessera.test";

async function subscriptionActive(id: number): Promise<boolean | null> {
  const rows = await db().query<{ active: boolean }>("SELECT active FROM digest_subscriptions WHERE id = $1", { bind: [id], type: QueryTypes.SELECT });
  return rows[0]?.active ?? null;
}

async function attemptsFor(email: string): Promise<number> {
  const rows = await db().query<{ n: number }>("SELECT count(*)::int AS n FROM login_attempts WHERE email = $1", { bind: [email], type: QueryTypes.SELECT });
  return rows[0]?.n ?? 0;
}

async function accountExists(email: string): Promise<boolean> {
  const rows = await db().query("SELECT 1 FROM users WHERE email = $1", { bind: [email], type: QueryTypes.SELECT });
  return rows.length > 0;
}

async function sessionVersionOf(userId: number): Promise<number | null> {
  const rows = await db().query<{ v: number }>("SELECT session_version AS v FROM users WHERE id = $1", { bind: [userId], type: QueryTypes.SELECT });
  return rows[0]?.v ?? null;
}

const changePasswordCall = (handler: Handler, body: unknown) =>
  handler(
    new Request(`${BASE}/api/account/password`, {
      method: "POST",
      // A network of its own per call, so the wrong-password case never counts against a shared address.
      headers: { "content-type": "application/json", "x-forwarded-for": clientIp() },
      body: JSON.stringify(body),
    }),
    {
      params: Promise.resolve({}),
    },
  );

async function roleOf(world: World, email: string): Promise<string | null> {
  const rows = await db().query<{ role: string }>(
    "SELECT m.role FROM memberships m JOIN users u ON u.id = m.user_id WHERE m.workspace_id = $1 AND u.email = $2",
    { bind: [world.workspace.id, email], type: QueryTypes.SELECT },
  );
  return rows[0]?.role ?? null;
}

/** A fresh member with an active subscription, and a signed unsubscribe token for it. */
async function subscribedMember(world: World, options: { ttlSeconds?: number } = {}) {
  const member = await extraMember(world, "subscriber");
  const subscriptionId = await subscriptionFor(world, member.id);
  return { subscriptionId, token: signUnsubscribeToken(subscriptionId, { ttlSeconds: options.ttlSeconds }) };
}

function jsonPost(body: string): Request {
  return new Request(`${BASE}/api/invitations/accept`, { method: "POST", headers: { "content-type": "application/json" }, body });
}

const accept = (handler: Handler, body: unknown) => handler(jsonPost(JSON.stringify(body)), { params: Promise.resolve({}) });
const neverIssuedToken = () => randomBytes(32).toString("base64url");

// ——— next-auth

const AUTH_PAGE = "/api/auth/[...nextauth]/route";
const clientIp = () => `203.0.113.${1 + Math.floor(Math.random() * 250)}`;

function authRequest(action: string[], init: { method?: string; cookies?: Record<string, string>; form?: Record<string, string>; ip?: string } = {}): NextRequest {
  const headers: Record<string, string> = { "x-forwarded-for": init.ip ?? clientIp() };
  if (init.cookies) headers.cookie = cookieHeader(init.cookies);
  if (init.form) headers["content-type"] = "application/x-www-form-urlencoded";
  return new NextRequest(`${process.env.NEXTAUTH_URL ?? BASE}/api/auth/${action.join("/")}`, {
    method: init.method ?? "GET",
    headers,
    body: init.form ? new URLSearchParams(init.form).toString() : undefined,
  });
}

const callAuth = (handler: Handler, action: string[], init: Parameters<typeof authRequest>[1] = {}) =>
  callInRequestScope(handler, authRequest(action, init), AUTH_PAGE, { nextauth: action });

/** A CSRF token and its cookie, from next-auth's own csrf endpoint (the GET handler). */
async function csrf(): Promise<{ token: string; cookies: Record<string, string> }> {
  const { GET } = (await import("@/app/api/auth/[...nextauth]/route")) as unknown as { GET: Handler };
  const response = await callAuth(GET, ["csrf"]);
  const { csrfToken } = (await response.json()) as { csrfToken: string };
  return { token: csrfToken, cookies: setCookies(response).values };
}

async function signIn(handler: Handler, form: Record<string, string>, withCsrf = true): Promise<Response> {
  const c = await csrf();
  return callAuth(handler, ["callback", "credentials"], {
    method: "POST",
    cookies: withCsrf ? c.cookies : {},
    form: { ...form, ...(withCsrf ? { csrfToken: c.token } : {}), json: "true" },
  });
}

const SESSION_COOKIE = "next-auth.session-token";

function workspacePost(body: string): Request {
  return new Request(`${BASE}/api/workspaces`, { method: "POST", headers: { "content-type": "application/json" }, body });
}
const createWs = (handler: Handler, body: unknown) => handler(workspacePost(JSON.stringify(body)), { params: Promise.resolve({}) });
const freshSlug = () => `matrix-${randomBytes(6).toString("hex")}`;

async function workspaceBySlug(slug: string): Promise<{ id: number; role: string | null; audited: number } | null> {
  const rows = await db().query<{ id: number; role: string | null; audited: number }>(
    `SELECT w.id, m.role, (SELECT count(*)::int FROM audit_events a WHERE a.workspace_id = w.id AND a.action = 'workspace.created') AS audited
       FROM workspaces w LEFT JOIN memberships m ON m.workspace_id = w.id WHERE w.slug = $1`,
    { bind: [slug], type: QueryTypes.SELECT },
  );
  return rows[0] ?? null;
}

export const PUBLIC_ROWS: PublicRow[] = [
  {
    kind: "public",
    route: "app/api/auth/[...nextauth]/route.ts",
    method: "GET",
    rule: "next-auth's own endpoints (providers, csrf, session): public by design; a session is whatever the signed JWT cookie says",
    cases: [
      {
        name: "a signed-out visitor gets 200 and an empty session",
        status: 200,
        run: ({ handler }) => callAuth(handler, ["session"]),
        check: async (response) => expect(await response.json()).toEqual({}),
      },
      {
        name: "the providers list offers e-mail and password only",
        status: 200,
        run: ({ handler }) => callAuth(handler, ["providers"]),
        check: async (response) => expect(Object.keys((await response.json()) as object)).toEqual(["credentials"]),
      },
      {
        name: "the CSRF token comes with an HttpOnly, SameSite=Lax cookie",
        status: 200,
        run: ({ handler }) => callAuth(handler, ["csrf"]),
        check: async (response) => {
          const csrfLine = setCookies(response).lines.find((l) => l.startsWith("next-auth.csrf-token="));
          expect(csrfLine).toMatch(/HttpOnly/);
          expect(csrfLine).toMatch(/SameSite=Lax/);
        },
      },
      {
        name: "an unknown action gets a 4xx, never a 5xx",
        status: 400,
        run: ({ handler }) => callAuth(handler, ["no-such-action"]),
      },
    ],
  },
  {
    kind: "public",
    route: "app/api/auth/[...nextauth]/route.ts",
    method: "POST",
    rule: "sign-in with e-mail and password: needs next-auth's CSRF token; wrong or malformed credentials get no session; attempts are recorded and throttled (lib/auth/credentials)",
    readsBodyItself:
      "next-auth parses its own form-encoded body; Tessera's part, the credentials, is parsed with signInSchema (lib/auth/schemas.ts) in lib/auth/options.ts authorize()",
    cases: [
      {
        name: "the right password with the CSRF token gets a session cookie (HttpOnly) naming the user",
        status: 200,
        run: async ({ handler }) => {
          const user = await makeUser("matrix-signin");
          const response = await signIn(handler, { email: user.email, password: PASSWORD });
          const cookie = setCookies(response);
          expect(cookie.lines.find((l) => l.startsWith(`${SESSION_COOKIE}=`))).toMatch(/HttpOnly/);
          const { GET } = (await import("@/app/api/auth/[...nextauth]/route")) as unknown as { GET: Handler };
          const session = await callAuth(GET, ["session"], { cookies: { [SESSION_COOKIE]: cookie.values[SESSION_COOKIE] } });
          expect(((await session.json()) as { user?: { email?: string; id?: number } }).user).toMatchObject({ email: user.email, id: user.id });
          return response;
        },
      },
      {
        name: "a wrong password gets 401, no session and the CredentialsSignin error",
        status: 401,
        run: async ({ handler }) => {
          const user = await makeUser("matrix-wrong");
          const response = await signIn(handler, { email: user.email, password: "not the password at all" });
          expect(await attemptsFor(user.email)).toBe(1);
          return response;
        },
        check: async (response) => {
          expect(setCookies(response).values[SESSION_COOKIE]).toBeUndefined();
          expect(((await response.json()) as { url: string }).url).toContain("error=CredentialsSignin");
        },
      },
      {
        name: "a schema-invalid body (no password) gets 401, no session and the CredentialsSignin error, never a 5xx",
        status: 401,
        invalidBody: true,
        run: async ({ handler }) => {
          const user = await makeUser("matrix-empty");
          const response = await signIn(handler, { email: user.email, password: "" });
          // Refused by signInSchema before any password check: no attempt is recorded.
          expect(await attemptsFor(user.email)).toBe(0);
          return response;
        },
        check: async (response) => {
          expect(setCookies(response).values[SESSION_COOKIE]).toBeUndefined();
          expect(((await response.json()) as { url: string }).url).toContain("error=CredentialsSignin");
        },
      },
      {
        name: "the right password without the CSRF token gets no session (sent back to sign in)",
        status: 200,
        run: async ({ handler }) => {
          const user = await makeUser("matrix-nocsrf");
          return signIn(handler, { email: user.email, password: PASSWORD }, false);
        },
        check: async (response) => {
          expect(setCookies(response).values[SESSION_COOKIE]).toBeUndefined();
          expect(((await response.json()) as { url: string }).url).toContain("csrf=true");
        },
      },
    ],
  },
  {
    kind: "public",
    route: "app/api/invitations/accept/route.ts",
    method: "POST",
    rule: "the invitation token is the credential; a new address may accept signed out (creating the account), an existing account must be signed in as the invited address",
    readsBodyItself: "there is no workspace membership yet for memberRoute to check; the body is parsed with acceptInvitationSchema (lib/team/schemas.ts)",
    cases: [
      {
        name: "a token that was never issued gets 410, never a 5xx",
        status: 410,
        run: ({ handler }) => accept(handler, { token: neverIssuedToken(), name: "Nobody", password: "long enough password" }),
      },
      {
        name: "malformed JSON gets 400",
        status: 400,
        run: ({ handler }) => handler(jsonPost("{token:"), { params: Promise.resolve({}) }),
        check: async (response) => expect(await response.json()).toMatchObject({ error: "The request body is not valid JSON." }),
      },
      {
        name: "a body without a token gets 400 naming the field token",
        status: 400,
        invalidBody: true,
        run: ({ handler }) => accept(handler, { name: "No Token" }),
        check: async (response) => expect(await response.json()).toMatchObject({ field: "token" }),
      },
      {
        name: "a new address accepts signed out (by design): 200, an account and the invited role",
        status: 200,
        run: async ({ handler, world }) => {
          const invitation = await pendingInvitation(world);
          const response = await accept(handler, { token: invitation.token, name: "New Colleague", password: "a long new password" });
          expect(await roleOf(world, invitation.email)).toBe("economist");
          return response;
        },
        check: async (response) => expect(await response.json()).toMatchObject({ createdAccount: true }),
      },
      {
        name: "a token used once gets 410 the second time",
        status: 410,
        run: async ({ handler, world }) => {
          const invitation = await pendingInvitation(world);
          expect((await accept(handler, { token: invitation.token, name: "Once", password: "a long new password" })).status).toBe(200);
          return accept(handler, { token: invitation.token, name: "Twice", password: "a long new password" });
        },
      },
      {
        name: "an existing account signed out gets 401 and no membership",
        status: 401,
        run: async ({ handler, world }) => {
          const user = await makeUser("matrix-existing");
          const invitation = await pendingInvitation(world, user.email);
          const response = await accept(handler, { token: invitation.token });
          expect(await roleOf(world, user.email)).toBeNull();
          return response;
        },
      },
      {
        name: "an existing account's invitation, signed in as someone else, gets 403 and no membership",
        status: 403,
        run: async ({ handler, world, signInAs }) => {
          const user = await makeUser("matrix-invited");
          const invitation = await pendingInvitation(world, user.email);
          signInAs(world.outsider);
          const response = await accept(handler, { token: invitation.token });
          expect(await roleOf(world, user.email)).toBeNull();
          expect(await roleOf(world, world.outsider.email)).toBeNull();
          return response;
        },
      },
      {
        name: "an existing account signed in as the invited address gets 200 and the invited role",
        status: 200,
        run: async ({ handler, world, signInAs }) => {
          const user = await makeUser("matrix-joins");
          const invitation = await pendingInvitation(world, user.email);
          signInAs(user);
          const response = await accept(handler, { token: invitation.token });
          expect(await roleOf(world, user.email)).toBe("economist");
          return response;
        },
      },
      {
        name: "a new address's invitation, signed in as someone else (a manager of another workspace), gets 403, no account and no membership",
        status: 403,
        run: async ({ handler, world, signInAs }) => {
          const invitation = await pendingInvitation(world);
          signInAs(world.outsider);
          const response = await accept(handler, { token: invitation.token, name: "Not Me", password: "a long new password" });
          expect(await accountExists(invitation.email)).toBe(false);
          expect(await roleOf(world, world.outsider.email)).toBeNull();
          return response;
        },
      },
    ],
  },
  {
    kind: "public",
    route: "app/api/account/password/route.ts",
    method: "POST",
    rule: "the signed-in user's own password (no workspace): requireUser; the current password must be given; a change ends every session issued before (users.session_version)",
    readsBodyItself: "a user-level route has no workspace membership for memberRoute to check; the body is parsed with changePasswordSchema (lib/auth/schemas.ts)",
    cases: [
      {
        name: "a signed-out visitor gets 401 and nothing changes",
        status: 401,
        run: ({ handler }) => changePasswordCall(handler, { currentPassword: PASSWORD, newPassword: "a brand new password" }),
        check: async (response) => expect(await response.json()).toEqual({ error: "Sign in to continue." }),
      },
      {
        name: "malformed JSON gets 400",
        status: 400,
        run: async ({ handler, signInAs }) => {
          signInAs(await makeUser("matrix-pw-json"));
          return handler(new Request(`${BASE}/api/account/password`, { method: "POST", headers: { "content-type": "application/json" }, body: "{current" }), { params: Promise.resolve({}) });
        },
      },
      {
        name: "a new password that is too short gets 400 naming newPassword; the password and sessions stay",
        status: 400,
        invalidBody: true,
        run: async ({ handler, signInAs }) => {
          const user = await makeUser("matrix-pw-short");
          signInAs(user);
          const response = await changePasswordCall(handler, { currentPassword: PASSWORD, newPassword: "short" });
          expect(await sessionVersionOf(user.id)).toBe(0);
          return response;
        },
        check: async (response) => expect(await response.json()).toMatchObject({ field: "newPassword" }),
      },
      {
        name: "a wrong current password gets 400 naming currentPassword, counts as a failed attempt, and changes nothing",
        status: 400,
        run: async ({ handler, signInAs }) => {
          const user = await makeUser("matrix-pw-wrong");
          signInAs(user);
          const response = await changePasswordCall(handler, { currentPassword: "not the password at all", newPassword: "a brand new password" });
          expect(await sessionVersionOf(user.id)).toBe(0);
          expect(await attemptsFor(user.email)).toBe(1);
          expect((await verifySignIn(user.email, PASSWORD, clientIp())).ok).toBe(true);
          return response;
        },
        check: async (response) => expect(await response.json()).toMatchObject({ field: "currentPassword" }),
      },
      {
        name: "the right current password gets 200: the new password works, the old does not, and every earlier session has ended",
        status: 200,
        run: async ({ handler, signInAs }) => {
          const user = await makeUser("matrix-pw-ok");
          signInAs(user);
          const response = await changePasswordCall(handler, { currentPassword: PASSWORD, newPassword: "a brand new password" });
          expect(await sessionVersionOf(user.id)).toBe(1);
          expect((await verifySignIn(user.email, PASSWORD, clientIp())).ok).toBe(false);
          expect((await verifySignIn(user.email, "a brand new password", clientIp())).ok).toBe(true);
          return response;
        },
      },
    ],
  },
  {
    kind: "public",
    route: "app/api/digests/unsubscribe/route.ts",
    method: "GET",
    rule: "the signed token in the link is the credential (no session needed); GET only shows a confirmation and never changes anything, because mail scanners follow links",
    cases: [
      {
        name: "a valid token, signed out, gets 200 and the subscription stays active",
        status: 200,
        run: async ({ handler, world }) => {
          const s = await subscribedMember(world);
          const response = await handler(new Request(`${BASE}/api/digests/unsubscribe?token=${s.token}`), { params: Promise.resolve({}) });
          expect(await subscriptionActive(s.subscriptionId)).toBe(true);
          return response;
        },
      },
      {
        name: "a tampered token gets 400 and changes nothing",
        status: 400,
        run: async ({ handler, world }) => {
          const s = await subscribedMember(world);
          const response = await handler(new Request(`${BASE}/api/digests/unsubscribe?token=${s.token.slice(0, -2)}xx`), { params: Promise.resolve({}) });
          expect(await subscriptionActive(s.subscriptionId)).toBe(true);
          return response;
        },
      },
      {
        name: "no token at all gets 400",
        status: 400,
        run: ({ handler }) => handler(new Request(`${BASE}/api/digests/unsubscribe`), { params: Promise.resolve({}) }),
      },
    ],
  },
  {
    kind: "public",
    route: "app/api/digests/unsubscribe/route.ts",
    method: "POST",
    rule: "one-click unsubscribe (RFC 8058): the signed token is the credential, from the link or a form field; a bad, expired or forged token changes nothing",
    readsBodyItself:
      "RFC 8058 mail clients POST form-encoded `List-Unsubscribe=One-Click`, not JSON; the only field read is `token`, which verifyUnsubscribeToken (lib/digests/token.ts) checks for shape, HMAC signature and expiry",
    cases: [
      {
        name: "a valid token in the link (one-click form body), signed out, gets 200 and stops the subscription",
        status: 200,
        run: async ({ handler, world }) => {
          const s = await subscribedMember(world);
          const response = await handler(
            new Request(`${BASE}/api/digests/unsubscribe?token=${s.token}`, {
              method: "POST",
              headers: { "content-type": "application/x-www-form-urlencoded" },
              body: "List-Unsubscribe=One-Click",
            }),
            { params: Promise.resolve({}) },
          );
          expect(await subscriptionActive(s.subscriptionId)).toBe(false);
          return response;
        },
      },
      {
        name: "a valid token as a form field gets 200 and stops the subscription",
        status: 200,
        run: async ({ handler, world }) => {
          const s = await subscribedMember(world);
          const response = await handler(
            new Request(`${BASE}/api/digests/unsubscribe`, {
              method: "POST",
              headers: { "content-type": "application/x-www-form-urlencoded" },
              body: new URLSearchParams({ token: s.token }).toString(),
            }),
            { params: Promise.resolve({}) },
          );
          expect(await subscriptionActive(s.subscriptionId)).toBe(false);
          return response;
        },
      },
      {
        name: "a form body with a forged token gets 400 and changes nothing",
        status: 400,
        invalidBody: true,
        run: async ({ handler, world }) => {
          const s = await subscribedMember(world);
          const forged = signUnsubscribeToken(s.subscriptionId, { secret: "not the server's secret" });
          const response = await handler(
            new Request(`${BASE}/api/digests/unsubscribe`, {
              method: "POST",
              headers: { "content-type": "application/x-www-form-urlencoded" },
              body: new URLSearchParams({ token: forged }).toString(),
            }),
            { params: Promise.resolve({}) },
          );
          expect(await subscriptionActive(s.subscriptionId)).toBe(true);
          return response;
        },
      },
      {
        name: "an expired token gets 400 and changes nothing",
        status: 400,
        run: async ({ handler, world }) => {
          const s = await subscribedMember(world, { ttlSeconds: -60 });
          const response = await handler(new Request(`${BASE}/api/digests/unsubscribe?token=${s.token}`, { method: "POST" }), { params: Promise.resolve({}) });
          expect(await subscriptionActive(s.subscriptionId)).toBe(true);
          return response;
        },
      },
      {
        name: "a correctly signed token for a subscription that does not exist gets 404",
        status: 404,
        run: ({ handler }) =>
          handler(new Request(`${BASE}/api/digests/unsubscribe?token=${signUnsubscribeToken(2_000_000_000)}`, { method: "POST" }), { params: Promise.resolve({}) }),
      },
      {
        name: "a JSON body instead of a form gets 400 (no token), never a 5xx",
        status: 400,
        run: ({ handler }) =>
          handler(new Request(`${BASE}/api/digests/unsubscribe`, { method: "POST", headers: { "content-type": "application/json" }, body: '{"token":' }), {
            params: Promise.resolve({}),
          }),
      },
    ],
  },
  {
    kind: "public",
    route: "app/api/workspaces/route.ts",
    method: "POST",
    rule: "any signed-in user creates a workspace and becomes its first manager (docs/guarantees.md, section “No one reads another team’s data”); signed out 401",
    readsBodyItself: "there is no workspace yet for memberRoute to check membership of; the body is parsed with createWorkspaceSchema (lib/workspaces/schemas.ts)",
    cases: [
      {
        name: "a signed-out visitor gets 401 and no workspace",
        status: 401,
        run: async ({ handler }) => {
          const slug = freshSlug();
          const response = await createWs(handler, { name: "Nobody's", slug });
          expect(await workspaceBySlug(slug)).toBeNull();
          return response;
        },
      },
      {
        name: "malformed JSON gets 400",
        status: 400,
        run: ({ handler, world, signInAs }) => {
          signInAs(world.outsider);
          return handler(workspacePost("{name:"), { params: Promise.resolve({}) });
        },
        check: async (response) => expect(await response.json()).toMatchObject({ error: "The request body is not valid JSON.", field: null }),
      },
      {
        name: "an address with capitals and spaces gets 400 naming the field slug, and no workspace",
        status: 400,
        invalidBody: true,
        run: ({ handler, world, signInAs }) => {
          signInAs(world.outsider);
          return createWs(handler, { name: "Bad address", slug: "Not A Slug" });
        },
        check: async (response) => expect(await response.json()).toMatchObject({ field: "slug" }),
      },
      {
        name: "a reserved address gets 400 naming the field slug",
        status: 400,
        run: ({ handler, world, signInAs }) => {
          signInAs(world.outsider);
          return createWs(handler, { name: "Reserved", slug: "workspaces" });
        },
        check: async (response) => expect(await response.json()).toMatchObject({ field: "slug" }),
      },
      {
        name: "a name with a control character gets 400 naming the field name, and no workspace",
        status: 400,
        run: async ({ handler, world, signInAs }) => {
          signInAs(world.outsider);
          const slug = freshSlug();
          const response = await createWs(handler, { name: "Bell\u0007 office", slug });
          expect(await workspaceBySlug(slug)).toBeNull();
          return response;
        },
        check: async (response) => expect(await response.json()).toMatchObject({ field: "name" }),
      },
      {
        name: "a taken address gets 409 with a message; the existing workspace keeps its name and gains no member",
        status: 409,
        run: async ({ handler, world, signInAs }) => {
          signInAs(world.outsider);
          const response = await createWs(handler, { name: "Squatter", slug: world.workspace.slug });
          const rows = await db().query<{ name: string }>("SELECT name FROM workspaces WHERE slug = $1", { bind: [world.workspace.slug], type: QueryTypes.SELECT });
          expect(rows[0]?.name).toBe(world.workspace.name);
          expect(await roleOf(world, world.outsider.email)).toBeNull();
          return response;
        },
        check: async (response) => expect(((await response.json()) as { error: string }).error).toMatch(/already taken/),
      },
      {
        name: "a signed-in user gets 201 with the slug and name, and is its only member, a manager; the creation is audited",
        status: 201,
        run: async ({ handler, world, signInAs }) => {
          signInAs(world.outsider);
          const slug = freshSlug();
          const response = await createWs(handler, { name: "  New Regional Office  ", slug });
          expect(await response.clone().json()).toEqual({ slug, name: "New Regional Office" });
          expect(await workspaceBySlug(slug)).toMatchObject({ role: "manager", audited: 1 });
          const members = await db().query<{ user_id: number }>("SELECT m.user_id FROM memberships m JOIN workspaces w ON w.id = m.workspace_id WHERE w.slug = $1", {
            bind: [slug],
            type: QueryTypes.SELECT,
          });
          expect(members.map((m) => m.user_id)).toEqual([world.outsider.id]);
          return response;
        },
      },
    ],
  },
  {
    kind: "public",
    route: "app/api/openapi.json/route.ts",
    method: "GET",
    rule: "the OpenAPI document (lib/api-docs) is public and the same for everyone: no session needed, no user's data in it, and it may be cached",
    cases: [
      {
        name: "a signed-out visitor gets 200 with the OpenAPI 3.1 document, cacheable",
        status: 200,
        run: ({ handler, signInAs }) => {
          signInAs(null);
          return handler(new Request(`${BASE}/api/openapi.json`), { params: Promise.resolve({}) });
        },
        check: async (response) => {
          expect(response.headers.get("cache-control")).toMatch(/^public/);
          expect(await response.json()).toMatchObject({ openapi: "3.1.0" });
        },
      },
      {
        name: "a signed-in member gets the same document, with no workspace's data in it",
        status: 200,
        run: ({ handler, world, signInAs }) => {
          signInAs(world.users.manager);
          return handler(new Request(`${BASE}/api/openapi.json`), { params: Promise.resolve({}) });
        },
        check: async (response, world) => expect(await response.text()).not.toContain(world.workspace.slug),
      },
    ],
  },
];
